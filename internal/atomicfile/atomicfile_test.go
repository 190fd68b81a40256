package atomicfile

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func TestWrite(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "f.txt")
	if err := WriteBytes(path, []byte("one"), 0o644); err != nil {
		t.Fatal(err)
	}
	// a failing writer leaves the old file and no temporary behind
	boom := errors.New("boom")
	err := Write(path, 0o644, func(w io.Writer) error {
		w.Write([]byte("half"))
		return boom
	})
	if !errors.Is(err, boom) {
		t.Fatalf("error %v, want boom", err)
	}
	got, _ := os.ReadFile(path)
	entries, _ := os.ReadDir(dir)
	if string(got) != "one" || len(entries) != 1 {
		t.Errorf("after a failed write: content %q, %d entries; want \"one\" and 1", got, len(entries))
	}
	st, _ := os.Stat(path)
	if st.Mode().Perm() != 0o644 {
		t.Errorf("mode %v, want 0644", st.Mode().Perm())
	}
}

// Several files are written first and put in place together; until Commit
// none is visible, and a failed Commit leaves no temporary file.
func TestCommitSeveral(t *testing.T) {
	dir := t.TempDir()
	sub := filepath.Join(dir, "sub")
	if err := os.Mkdir(sub, 0o755); err != nil {
		t.Fatal(err)
	}
	paths := []string{filepath.Join(dir, "a"), filepath.Join(sub, "b"), filepath.Join(dir, "c")}
	var files []*File
	for i, p := range paths {
		f, err := Create(p, 0o640)
		if err != nil {
			t.Fatal(err)
		}
		fmt.Fprintf(f, "file %d", i)
		files = append(files, f)
	}
	if err := files[1].Close(); err != nil { // closing early is allowed
		t.Fatal(err)
	}
	for _, p := range paths {
		if _, err := os.Stat(p); !errors.Is(err, fs.ErrNotExist) {
			t.Errorf("%s visible before Commit", p)
		}
	}
	if err := Commit(files...); err != nil {
		t.Fatal(err)
	}
	for i, p := range paths {
		got, err := os.ReadFile(p)
		if err != nil || string(got) != fmt.Sprintf("file %d", i) {
			t.Errorf("%s: %q, %v", p, got, err)
		}
		if st, _ := os.Stat(p); st.Mode().Perm() != 0o640 {
			t.Errorf("%s: mode %v, want 0640", p, st.Mode().Perm())
		}
	}
	for _, f := range files {
		f.Abort() // after Commit: nothing happens
	}
	if _, err := os.Stat(paths[0]); err != nil {
		t.Errorf("Abort after Commit removed the file: %v", err)
	}
	leftovers(t, dir, 3) // a, c, sub
	leftovers(t, sub, 1)

	// a rename that fails (the target is a non-empty folder) aborts the
	// files not yet in place
	blocker := filepath.Join(dir, "blocked")
	if err := os.MkdirAll(filepath.Join(blocker, "x"), 0o755); err != nil {
		t.Fatal(err)
	}
	f1, _ := Create(filepath.Join(dir, "d"), 0o644)
	f2, _ := Create(blocker, 0o644)
	f3, _ := Create(filepath.Join(dir, "e"), 0o644)
	if err := Commit(f1, f2, f3); err == nil {
		t.Fatal("commit over a folder: no error")
	}
	if _, err := os.Stat(filepath.Join(dir, "d")); err != nil {
		t.Errorf("the file renamed before the failure is gone: %v", err)
	}
	if _, err := os.Stat(filepath.Join(dir, "e")); !errors.Is(err, fs.ErrNotExist) {
		t.Errorf("a file after the failure was put in place")
	}
	leftovers(t, dir, 5) // a, c, d, sub, blocked
}

func TestAbort(t *testing.T) {
	dir := t.TempDir()
	f, err := Create(filepath.Join(dir, "x"), 0o644)
	if err != nil {
		t.Fatal(err)
	}
	f.Write([]byte("data"))
	f.Abort()
	f.Abort()
	leftovers(t, dir, 0)
}

// leftovers checks that dir holds want entries and no temporary file.
func leftovers(t *testing.T, dir string, want int) {
	t.Helper()
	entries, _ := os.ReadDir(dir)
	for _, e := range entries {
		if strings.HasPrefix(e.Name(), ".") {
			t.Errorf("%s: temporary file %s left behind", dir, e.Name())
		}
	}
	if len(entries) != want {
		t.Errorf("%s: %d entries, want %d", dir, len(entries), want)
	}
}
