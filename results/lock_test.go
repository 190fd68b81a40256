package results

import (
	"encoding/json"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"hoplore/internal/atomicfile"
)

// Two writers of one folder exclude each other, within one process as
// between processes (flock(2) locks belong to open file descriptions), and
// the lock is free again once released.
func TestLockDirExcludes(t *testing.T) {
	dir := t.TempDir()
	a, err := LockDir(dir, "hoplore run a.yaml")
	if err != nil {
		t.Fatal(err)
	}
	_, err = LockDir(dir, "hoplore run b.yaml")
	var le *LockedError
	if !errors.As(err, &le) {
		t.Fatalf("second lock: got %v, want a *LockedError", err)
	}
	if le.Holder.PID != os.Getpid() || le.Holder.Command != "hoplore run a.yaml" {
		t.Errorf("holder %+v, want PID %d and the first command", le.Holder, os.Getpid())
	}
	for _, s := range []string{"PID", "hoplore run a.yaml", dir} {
		if !strings.Contains(err.Error(), s) {
			t.Errorf("message %q lacks %q", err, s)
		}
	}
	a.Unlock()
	a.Unlock() // harmless
	b, err := LockDir(dir, "hoplore run b.yaml")
	if err != nil {
		t.Fatalf("after unlock: %v", err)
	}
	b.Unlock()
	if _, err := LockDir(filepath.Join(dir, "absent"), "x"); err == nil {
		t.Error("locked a folder that does not exist")
	}
}

// A lock file left by a killed holder names it but does not hold the lock:
// the kernel lock is gone with the process.
func TestLockDirStaleFile(t *testing.T) {
	dir := t.TempDir()
	stale, _ := json.Marshal(Holder{PID: 999999, Host: "elsewhere", Command: "hoplore run old.yaml"})
	if err := os.WriteFile(filepath.Join(dir, LockFile), stale, 0o644); err != nil {
		t.Fatal(err)
	}
	l, err := LockDir(dir, "hoplore run new.yaml")
	if err != nil {
		t.Fatalf("stale lock file trusted: %v", err)
	}
	defer l.Unlock()
	b, _ := os.ReadFile(filepath.Join(dir, LockFile))
	if !strings.Contains(string(b), "new.yaml") {
		t.Errorf("lock file not rewritten by the new holder: %s", b)
	}
}

// Taking the lock removes temporary files a killed writer left behind, and
// nothing else.
func TestLockDirRemovesTemps(t *testing.T) {
	dir := t.TempDir()
	parts := filepath.Join(dir, PartsDir)
	if err := os.MkdirAll(parts, 0o755); err != nil {
		t.Fatal(err)
	}
	files := map[string]bool{ // path -> kept
		filepath.Join(dir, ".runs.parquet.tmp-123"):   false,
		filepath.Join(parts, ".r1.part.tmp-456"):      false,
		filepath.Join(dir, "runs.parquet"):            true,
		filepath.Join(parts, "r1.part"):               true,
		filepath.Join(dir, ".hidden-note"):            true,
		filepath.Join(dir, "notes.tmp-not-ours.yaml"): true,
	}
	for p := range files {
		if err := os.WriteFile(p, []byte("x"), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	l, err := LockDir(dir, "test")
	if err != nil {
		t.Fatal(err)
	}
	defer l.Unlock()
	for p, kept := range files {
		_, err := os.Stat(p)
		if (err == nil) != kept {
			t.Errorf("%s: exists %v, want %v", p, err == nil, kept)
		}
	}
}

func finalizeRuns(t *testing.T, dir string, meta Meta, ids ...string) {
	t.Helper()
	for _, id := range ids {
		tb := &RunTables{Run: RunRow{Dims: Dims{RunID: id, Experiment: meta.Experiment}}}
		if err := WritePart(dir, tb); err != nil {
			t.Fatal(err)
		}
	}
	if err := Finalize(dir, nil, meta); err != nil {
		t.Fatal(err)
	}
}

// The five tables are replaced as a set: a writer stopped between two
// renames (as by a kill) leaves a folder that CheckTables refuses, and
// rewriting the tables makes it whole again.
func TestTablesReplacedAsASet(t *testing.T) {
	dir := t.TempDir()
	meta := Meta{Version: "t", Experiment: "e", ExperimentHash: "h1", Runs: 3}
	if err := MarkDir(dir, meta); err != nil {
		t.Fatal(err)
	}
	finalizeRuns(t, dir, meta, "r1", "r2")
	m, err := CheckTables(dir)
	if err != nil {
		t.Fatal(err)
	}
	if m.Runs != 2 || m.ExpectedRuns != 3 || m.Missing() != 1 || len(m.Tables) != 5 {
		t.Errorf("manifest %+v: want 2 runs of 3 expected, 5 tables", m)
	}

	// Interrupt the next Finalize after two of its five renames.
	testHookTables = func(files []*atomicfile.File) bool {
		if err := atomicfile.Commit(files[:2]...); err != nil {
			t.Fatal(err)
		}
		for _, f := range files[2:] {
			f.Abort()
		}
		return true
	}
	err = func() error {
		defer func() { testHookTables = nil }()
		if err := WritePart(dir, &RunTables{Run: RunRow{Dims: Dims{RunID: "r3", Experiment: "e"}}}); err != nil {
			t.Fatal(err)
		}
		return Finalize(dir, nil, meta)
	}()
	if err == nil {
		t.Fatal("the interrupted Finalize reported success")
	}
	if _, err := CheckTables(dir); !errors.Is(err, ErrTables) {
		t.Fatalf("half-replaced tables accepted: %v", err)
	}
	if err := Finalize(dir, nil, meta); err != nil {
		t.Fatal(err)
	}
	if m, err := CheckTables(dir); err != nil || m.Runs != 3 || m.Missing() != 0 {
		t.Fatalf("after rewriting: %+v, %v", m, err)
	}

	// A table changed behind the manifest's back is refused.
	p := filepath.Join(dir, SeriesFile)
	b, _ := os.ReadFile(p)
	if err := os.WriteFile(p, append(b, 0), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := CheckTables(dir); !errors.Is(err, ErrTables) || !strings.Contains(err.Error(), SeriesFile) {
		t.Errorf("foreign series.parquet: got %v", err)
	}
}

// Tables of one experiment under another's marker are refused.
func TestCheckTablesOtherExperiment(t *testing.T) {
	dir := t.TempDir()
	meta := Meta{Version: "t", Experiment: "e", ExperimentHash: "h1"}
	if err := MarkDir(dir, meta); err != nil {
		t.Fatal(err)
	}
	finalizeRuns(t, dir, meta, "r1")
	other, _ := json.Marshal(Meta{Version: "t", Experiment: "f", ExperimentHash: "h2"})
	if err := os.WriteFile(filepath.Join(dir, MarkFile), other, 0o644); err != nil {
		t.Fatal(err)
	}
	_, err := CheckTables(dir)
	if !errors.Is(err, ErrTables) || !strings.Contains(err.Error(), "h2") {
		t.Errorf("got %v, want a refusal naming both hashes", err)
	}
	if _, err := CheckTables(t.TempDir()); !errors.Is(err, ErrTables) {
		t.Errorf("empty folder: got %v", err)
	}
}
