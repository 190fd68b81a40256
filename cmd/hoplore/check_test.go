package main

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"hoplore/experiments"
)

func testDeps() (*deps, *bytes.Buffer, *bytes.Buffer) {
	var out, errb bytes.Buffer
	return &deps{stdout: &out, stderr: &errb, version: "test", ctx: context.Background()}, &out, &errb
}

func listDir(t *testing.T, dir string) []string {
	t.Helper()
	var names []string
	err := filepath.WalkDir(dir, func(p string, _ os.DirEntry, err error) error {
		names = append(names, p)
		return err
	})
	if err != nil {
		t.Fatal(err)
	}
	return names
}

// TestCheckBadInput checks that check refuses every malformed experiment
// with exit status 2, a FILE:LINE:COL message and nothing written.
func TestCheckBadInput(t *testing.T) {
	bad, err := filepath.Abs("../../experiments/testdata")
	if err != nil {
		t.Fatal(err)
	}
	files, err := filepath.Glob(filepath.Join(bad, "bad", "*.yaml"))
	if err != nil || len(files) < 12 {
		t.Fatalf("found %d malformed files (%v), want at least 12", len(files), err)
	}
	before := listDir(t, bad)
	work := t.TempDir()
	t.Chdir(work)
	posMsg := regexp.MustCompile(`^hoplore: (\S+):(\d+):(\d+): \S`)
	for _, f := range files {
		t.Run(filepath.Base(f), func(t *testing.T) {
			d, out, errb := testDeps()
			if code := run([]string{"check", f}, d); code != 2 {
				t.Errorf("exit status %d, want 2; stderr %q", code, errb.String())
			}
			if out.Len() != 0 {
				t.Errorf("stdout %q, want nothing", out.String())
			}
			m := posMsg.FindStringSubmatch(errb.String())
			if m == nil {
				t.Fatalf("stderr %q is not FILE:LINE:COL: message", errb.String())
			}
			if !strings.HasPrefix(m[1], bad) {
				t.Errorf("message names %s, want a file under %s", m[1], bad)
			}
		})
	}
	if got := listDir(t, work); len(got) != 1 {
		t.Errorf("check wrote %v into the working directory", got[1:])
	}
	if after := listDir(t, bad); strings.Join(after, "\n") != strings.Join(before, "\n") {
		t.Errorf("check changed the testdata folder")
	}
}

// TestCheckGrid checks the grid sizes check prints for the examples and a
// bundled experiment.
func TestCheckGrid(t *testing.T) {
	tests := []struct {
		arg  string
		want []string
	}{
		{"../../examples/load-sweep.yaml", []string{"2 topologies × 4 loads × 1 failure schedule × 8 agents = 64 cells", "64 cells × 3 replicates = 192 runs", "mesh-10: 10 nodes, 14 links, diameter 5"}},
		{"../../examples/single-queue.yaml", []string{"absolute rates", "1 cell × 4 replicates = 4 runs"}},
		{"link-failure", []string{"12 cells × 3 replicates = 36 runs", "bundled/link-failure.yaml"}},
		// mean flow size by hand: 0.9·15 kB + 0.09·150 kB + 0.01·2 MB = 47 kB
		{"../../examples/flows-and-objectives.yaml", []string{"18 cells × 3 replicates = 54 runs",
			"flows       all of each cell's load (no packets), mean size 47 kB; mice up to 100 kB, elephants from 1 MB; 7 of 9 agents pin flows"}},
	}
	for _, tt := range tests {
		d, out, errb := testDeps()
		if code := run([]string{"check", tt.arg, "--workers", "2"}, d); code != 0 {
			t.Fatalf("check %s: exit %d: %s", tt.arg, code, errb.String())
		}
		for _, w := range tt.want {
			if !strings.Contains(out.String(), w) {
				t.Errorf("check %s: output lacks %q:\n%s", tt.arg, w, out.String())
			}
		}
		e, err := experiments.Resolve(tt.arg)
		if err != nil {
			t.Fatal(err)
		}
		if !strings.Contains(out.String(), e.Hash) {
			t.Errorf("check %s: output lacks the hash %s", tt.arg, e.Hash)
		}
	}
	d, _, _ := testDeps()
	if code := run([]string{"check", "no-such-experiment"}, d); code != 2 {
		t.Errorf("check of an unknown name: exit %d, want 2", code)
	}
	d, _, _ = testDeps()
	if code := run([]string{"check", "missing.yaml"}, d); code != 2 {
		t.Errorf("check of a missing file: exit %d, want 2", code)
	}
}
