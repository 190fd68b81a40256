package main

import (
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"sync"
	"testing"

	"hoplore/results"
)

// TestMain lets a test start this test binary as the hoplore command:
// with HOPLORE_AS_COMMAND=1 it runs the command line and exits.
func TestMain(m *testing.M) {
	if os.Getenv("HOPLORE_AS_COMMAND") == "1" {
		os.Exit(run(os.Args[1:], defaultDeps()))
	}
	os.Exit(m.Run())
}

// tinyExperiment writes a small one-link experiment whose seed makes it
// distinct (another experiment hash).
func tinyExperiment(t *testing.T, dir string, seed int) string {
	t.Helper()
	p := filepath.Join(dir, fmt.Sprintf("tiny-%d.yaml", seed))
	y := fmt.Sprintf(`name: tiny-%d
duration: 20s
warmup: 2s
bin: 2s
replicates: 2
seed: %d
topologies:
  - inline:
      name: one-link
      nodes: [src, dst]
      links:
        - {a: src, b: dst, bandwidth: 1Mbps, delay: 1ms, buffer: 50}
traffic:
  matrix: pairs
  pairs:
    - {from: src, to: dst, rate: 50/s}
  packet_size: {dist: fixed, bytes: 1000}
agents: [shortest-path]
failures: [none]
`, seed, seed)
	if err := os.WriteFile(p, []byte(y), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// Two hoplore processes writing different experiments into one folder at
// the same moment never leave a corrupted folder: at most one of them
// writes (the other is refused with exit status 2, naming the holder, or
// because the folder already holds the other experiment), and the folder's
// marker, manifest and tables always agree.
func TestConcurrentWritersOneFolder(t *testing.T) {
	pairs := 20
	if testing.Short() {
		pairs = 5
	}
	self, err := os.Executable()
	if err != nil {
		t.Fatal(err)
	}
	tmp := t.TempDir()
	a, b := tinyExperiment(t, tmp, 1), tinyExperiment(t, tmp, 2)
	for i := range pairs {
		out := filepath.Join(tmp, fmt.Sprintf("out-%d", i))
		var wg sync.WaitGroup
		codes := make([]int, 2)
		for j, exp := range []string{a, b} {
			wg.Add(1)
			go func() {
				defer wg.Done()
				cmd := exec.Command(self, "run", exp, "--out", out, "--quiet", "--workers", "1")
				cmd.Env = append(os.Environ(), "HOPLORE_AS_COMMAND=1")
				err := cmd.Run()
				if ee, ok := err.(*exec.ExitError); ok {
					codes[j] = ee.ExitCode()
				} else if err != nil {
					t.Error(err)
				}
			}()
		}
		wg.Wait()
		ok := 0
		for _, c := range codes {
			switch c {
			case 0:
				ok++
			case 2:
			default:
				t.Errorf("pair %d: exit status %v", i, codes)
			}
		}
		if ok != 1 {
			t.Errorf("pair %d: exit statuses %v: want exactly one writer to succeed", i, codes)
		}
		mark, err := results.ReadMark(out)
		if err != nil {
			t.Fatalf("pair %d: %v", i, err)
		}
		m, err := results.CheckTables(out)
		if err != nil {
			t.Fatalf("pair %d: corrupted folder: %v", i, err)
		}
		runs, err := results.ReadRuns(filepath.Join(out, results.RunsFile))
		if err != nil {
			t.Fatal(err)
		}
		if m.Runs != 2 || len(runs) != 2 {
			t.Errorf("pair %d: %d runs in the manifest, %d in runs.parquet; want 2", i, m.Runs, len(runs))
		}
		for _, r := range runs {
			if r.Experiment != mark.Experiment {
				t.Errorf("pair %d: runs.parquet holds %q, the marker names %q", i, r.Experiment, mark.Experiment)
			}
		}
	}
}

// A damaged part (cut short, as by a failing disk) and a foreign one (a run
// of another experiment copied in) are moved aside, named, and their runs
// done again; the folder ends complete.
func TestDamagedPartsRedone(t *testing.T) {
	tmp := t.TempDir()
	exp := tinyExperiment(t, tmp, 3)
	out := filepath.Join(tmp, "out")
	d, _, errb := testDeps()
	if code := run([]string{"run", exp, "--out", out, "--quiet"}, d); code != 0 {
		t.Fatalf("exit %d: %s", code, errb.String())
	}
	ids, err := results.ListParts(out)
	if err != nil || len(ids) != 2 {
		t.Fatalf("parts %v, %v", ids, err)
	}
	partsDir := filepath.Join(out, results.PartsDir)
	ents, _ := os.ReadDir(partsDir)
	damaged := filepath.Join(partsDir, ents[0].Name())
	b, _ := os.ReadFile(damaged)
	if err := os.WriteFile(damaged, b[:len(b)/2], 0o644); err != nil {
		t.Fatal(err)
	}
	// a foreign part: a run of another experiment under a new name
	other := filepath.Join(tmp, "other")
	d, _, errb = testDeps()
	if code := run([]string{"run", tinyExperiment(t, tmp, 4), "--out", other, "--quiet"}, d); code != 0 {
		t.Fatal(errb.String())
	}
	oents, _ := os.ReadDir(filepath.Join(other, results.PartsDir))
	ob, _ := os.ReadFile(filepath.Join(other, results.PartsDir, oents[0].Name()))
	if err := os.WriteFile(filepath.Join(partsDir, "stray.part"), ob, 0o644); err != nil {
		t.Fatal(err)
	}

	d, _, errb = testDeps()
	if code := run([]string{"run", exp, "--out", out, "--quiet"}, d); code != 0 {
		t.Fatalf("rerun: exit %d: %s", code, errb.String())
	}
	for _, name := range []string{ents[0].Name(), "stray.part"} {
		if !strings.Contains(errb.String(), name) {
			t.Errorf("stderr does not name %s: %q", name, errb.String())
		}
		if _, err := os.Stat(filepath.Join(out, results.RejectedDir, name)); err != nil {
			t.Errorf("%s not moved aside: %v", name, err)
		}
	}
	if m, err := results.CheckTables(out); err != nil || m.Runs != 2 {
		t.Errorf("after the rerun: %+v, %v", m, err)
	}
}
