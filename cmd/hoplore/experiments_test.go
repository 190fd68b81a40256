package main

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"hoplore/experiments"
)

func TestExperimentsList(t *testing.T) {
	d, out, errb := testDeps()
	if code := run([]string{"experiments"}, d); code != 0 {
		t.Fatalf("exit %d: %s", code, errb.String())
	}
	lines := strings.Split(strings.TrimSpace(out.String()), "\n")
	names := experiments.Bundled()
	if len(lines) != len(names)+1 {
		t.Fatalf("got %d lines, want a header and %d experiments:\n%s", len(lines), len(names), out.String())
	}
	for i, n := range names {
		if f := strings.Fields(lines[i+1]); len(f) < 3 || f[0] != n {
			t.Errorf("line %q, want experiment %s with runs and a description", lines[i+1], n)
		}
	}
}

// TestExperimentsShow checks that show prints the bundled YAML and that
// --out writes files that parse to the same experiment (same hash).
func TestExperimentsShow(t *testing.T) {
	d, out, errb := testDeps()
	if code := run([]string{"experiments", "show", "demo"}, d); code != 0 {
		t.Fatalf("exit %d: %s", code, errb.String())
	}
	want, _ := experiments.BundledYAML("demo")
	if !bytes.Equal(out.Bytes(), want) {
		t.Errorf("show demo printed something else than the bundled YAML")
	}

	dir := t.TempDir()
	d, _, errb = testDeps()
	if code := run([]string{"experiments", "show", "load-sweep", "--out", dir}, d); code != 0 {
		t.Fatalf("exit %d: %s", code, errb.String())
	}
	e, err := experiments.Load(filepath.Join(dir, "load-sweep.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	b, err := experiments.Resolve("load-sweep")
	if err != nil {
		t.Fatal(err)
	}
	if e.Hash != b.Hash || len(e.Runs()) != len(b.Runs()) {
		t.Errorf("written copy has hash %s and %d runs, bundled %s and %d", e.Hash, len(e.Runs()), b.Hash, len(b.Runs()))
	}
	// A second time would overwrite: refused, nothing changed.
	before, _ := os.ReadFile(filepath.Join(dir, "mesh-10.yaml"))
	d, _, _ = testDeps()
	if code := run([]string{"experiments", "show", "load-sweep", "--out", dir}, d); code != 2 {
		t.Errorf("show --out into a folder holding the files: exit %d, want 2", code)
	}
	after, _ := os.ReadFile(filepath.Join(dir, "mesh-10.yaml"))
	if !bytes.Equal(before, after) {
		t.Errorf("mesh-10.yaml changed")
	}
	d, _, _ = testDeps()
	if code := run([]string{"experiments", "show", "nope"}, d); code != 2 {
		t.Errorf("show of an unknown name: exit %d, want 2", code)
	}
}
