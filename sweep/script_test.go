package sweep

import (
	"flag"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

var update = flag.Bool("update", false, "rewrite the golden files in testdata")

func TestScriptGolden(t *testing.T) {
	got := Script(ScriptOptions{
		Name: "load sweep", Experiment: "/home/ana/exp/load-sweep.yaml", Binary: "/opt/hoplore/bin/hoplore",
		Out: "/scratch/ana/load-sweep/", Path: "/scratch/ana/load-sweep/slurm/load-sweep.sbatch",
		Tasks: 16, Partition: "compute", Time: "2:00:00", CPUs: 8,
	})
	golden := filepath.Join("testdata", "script.golden")
	if *update {
		if err := os.WriteFile(golden, []byte(got), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	want, err := os.ReadFile(golden)
	if err != nil {
		t.Fatal(err)
	}
	if got != string(want) {
		t.Errorf("script differs from %s (rerun with -update after checking):\n%s", golden, got)
	}
	if bash, err := exec.LookPath("bash"); err == nil {
		p := filepath.Join(t.TempDir(), "s.sbatch")
		os.WriteFile(p, []byte(got), 0o755)
		if msg, err := exec.Command(bash, "-n", p).CombinedOutput(); err != nil {
			t.Errorf("bash -n: %v\n%s", err, msg)
		}
	}
}

// TestScriptMergeMode runs the script's merge branch with a stand-in for
// hoplore that prints its arguments.
func TestScriptMergeMode(t *testing.T) {
	bash, err := exec.LookPath("bash")
	if err != nil {
		t.Skip("no bash")
	}
	dir := t.TempDir()
	fake := filepath.Join(dir, "fake-hoplore")
	os.WriteFile(fake, []byte("#!/bin/sh\nfor a in \"$@\"; do echo \"[$a]\"; done\n"), 0o755)
	out := filepath.Join(dir, "res")
	path := filepath.Join(dir, "x.sbatch")
	s := Script(ScriptOptions{Name: "x", Experiment: "demo", Binary: fake, Out: out, Path: path, Tasks: 2, CPUs: 3})
	os.WriteFile(path, []byte(s), 0o755)
	got, err := exec.Command(bash, path, "merge").CombinedOutput()
	if err != nil {
		t.Fatalf("%v\n%s", err, got)
	}
	want := "[merge]\n[" + out + "]\n[" + out + "/shards/0]\n[" + out + "/shards/1]\n"
	if string(got) != want {
		t.Errorf("merge mode ran %q, want %q", got, want)
	}
	cmd := exec.Command(bash, path)
	cmd.Env = append(os.Environ(), "SLURM_ARRAY_TASK_ID=1")
	got, err = cmd.CombinedOutput()
	if err != nil {
		t.Fatalf("%v\n%s", err, got)
	}
	want = "[run]\n[demo]\n[--shard]\n[1/2]\n[--workers]\n[3]\n[--out]\n[" + out + "/shards/1]\n"
	if string(got) != want {
		t.Errorf("task mode ran %q, want %q", got, want)
	}
}

func TestMeter(t *testing.T) {
	t0 := time.Date(2026, 1, 1, 0, 0, 0, 0, time.UTC)
	now := t0
	m := &meter{now: func() time.Time { return now }}
	m.begin(4, 2, 100)
	if got := m.eta(); got != -1 {
		t.Errorf("ETA before any run = %v, want unknown", got)
	}
	now = t0.Add(10 * time.Second)
	m.done(25, 1000)
	// A quarter of the estimated cost in 10 s: 30 s to go.
	if got, want := m.eta(), 30*time.Second; got != want {
		t.Errorf("ETA = %v, want %v", got, want)
	}
	if got, want := m.rate(), 100.0; got != want {
		t.Errorf("rate = %g events/s, want %g", got, want)
	}
	for i := 0; i < 3; i++ {
		m.done(25, 1000)
	}
	if got := m.eta(); got != 0 {
		t.Errorf("ETA when done = %v, want 0", got)
	}
}

func TestFmtRate(t *testing.T) {
	for _, tt := range []struct {
		r    float64
		want string
	}{{0, "0"}, {950, "950"}, {12345, "12.3k"}, {4.56e6, "4.56M"}, {2e9, "2G"}} {
		if got := fmtRate(tt.r); got != tt.want {
			t.Errorf("fmtRate(%g) = %q, want %q", tt.r, got, tt.want)
		}
	}
}

func TestLineReporter(t *testing.T) {
	var b strings.Builder
	l := &lineReporter{w: &b, every: time.Hour, label: "hoplore: "}
	l.begin(2, 1, 10)
	l.done(5, 100)
	l.done(5, 100)
	l.end(true)
	lines := strings.Split(strings.TrimSpace(b.String()), "\n")
	if len(lines) != 2 || lines[0] != "hoplore: 2 runs to do, 1 already done" ||
		!strings.HasPrefix(lines[1], "hoplore: 2/2 runs, ") || !strings.HasSuffix(lines[1], "ETA 0s") {
		t.Errorf("status lines %q", lines)
	}
}

func TestBarReporter(t *testing.T) {
	var b strings.Builder
	r := &barReporter{w: &b, throttle: time.Nanosecond}
	r.begin(3, 0, 3)
	for i := 0; i < 3; i++ {
		r.done(1, 10)
	}
	r.end(true)
	if s := b.String(); !strings.Contains(s, "(2/3)") || !strings.Contains(s, "ev/s") {
		t.Errorf("bar output %q lacks the count or the event rate", s)
	}
}
