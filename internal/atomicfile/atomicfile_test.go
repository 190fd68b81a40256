package atomicfile

import (
	"errors"
	"io"
	"os"
	"path/filepath"
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
