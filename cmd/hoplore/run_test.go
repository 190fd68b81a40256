package main

import (
	"bytes"
	"context"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"hoplore/results"
	"hoplore/sweep"
)

// sweepDeps returns deps writing into buffers.
func sweepDeps() (*deps, *bytes.Buffer, *bytes.Buffer) {
	var out, errb bytes.Buffer
	return &deps{stdout: &out, stderr: &errb, version: "test", ctx: context.Background()}, &out, &errb
}

// hop runs the command line and checks its exit status.
func hop(t *testing.T, want int, args ...string) (stdout, stderr string) {
	t.Helper()
	d, out, errb := sweepDeps()
	if code := run(args, d); code != want {
		t.Fatalf("hoplore %s: exit status %d, want %d\nstdout: %s\nstderr: %s", strings.Join(args, " "), code, want, out, errb)
	}
	return out.String(), errb.String()
}

func TestRunShardMergeCommands(t *testing.T) {
	tiny, err := filepath.Abs("../../testdata/tiny.yaml")
	if err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{"SLURM_ARRAY_TASK_ID", "SLURM_ARRAY_TASK_COUNT", "SLURM_ARRAY_TASK_MIN", "SLURM_ARRAY_TASK_MAX", "SLURM_ARRAY_TASK_STEP"} {
		t.Setenv(k, "")
	}
	base := t.TempDir()
	whole := filepath.Join(base, "whole")

	out, errb := hop(t, 0, "run", tiny, "--out", whole, "--workers", "2")
	for _, want := range []string{"tiny: 32 runs, 32 run now", "delivery mean ms", "ring", "q-routing"} {
		if !strings.Contains(out, want) {
			t.Errorf("run: stdout lacks %q:\n%s", want, out)
		}
	}
	if !strings.Contains(errb, "32 runs to do") {
		t.Errorf("run: stderr (not a terminal) lacks the status line:\n%s", errb)
	}
	out, _ = hop(t, 0, "run", tiny, "--out", whole)
	if !strings.Contains(out, "0 run now, 32 kept from before") {
		t.Errorf("rerun: stdout %q, want every run kept", out)
	}
	_, errb = hop(t, 2, "run", "single-queue", "--out", whole)
	if !strings.Contains(errb, "another experiment") {
		t.Errorf("run into another experiment's folder: stderr %q", errb)
	}

	// Two shards, one from the Slurm array environment, merged.
	s0, s1 := filepath.Join(base, "s0"), filepath.Join(base, "s1")
	out, errb = hop(t, 0, "run", tiny, "--shard", "0/2", "--out", s0, "--quiet")
	if out != "" || errb != "" {
		t.Errorf("--quiet printed %q, %q", out, errb)
	}
	t.Setenv("SLURM_ARRAY_TASK_ID", "1")
	t.Setenv("SLURM_ARRAY_TASK_COUNT", "2")
	out, _ = hop(t, 0, "run", tiny, "--out", s1)
	if !strings.Contains(out, "shard 1/2 of tiny") || !strings.Contains(out, "hoplore merge") {
		t.Errorf("shard from the environment: stdout %q", out)
	}
	t.Setenv("SLURM_ARRAY_TASK_ID", "2")
	if _, errb = hop(t, 2, "run", tiny, "--out", filepath.Join(base, "s2")); !strings.Contains(errb, "SLURM_ARRAY_TASK_ID=2 is not below SLURM_ARRAY_TASK_COUNT=2") {
		t.Errorf("task id beyond the count: stderr %q", errb)
	}
	t.Setenv("SLURM_ARRAY_TASK_ID", "")

	merged := filepath.Join(base, "merged")
	out, _ = hop(t, 0, "merge", merged, s1, s0)
	if !strings.Contains(out, "merged 2 folders") || !strings.Contains(out, "32 runs, 16 cells") {
		t.Errorf("merge: stdout %q", out)
	}
	if err := sweep.CompareDirs(whole, merged); err != nil {
		t.Errorf("merged shards against the whole sweep: %v", err)
	}

	// A merge that lacks a shard says how many runs are missing.
	if _, errb = hop(t, 0, "merge", filepath.Join(base, "half"), s0); !strings.Contains(errb, "16 of the experiment's 32 runs: 16 missing") {
		t.Errorf("merge of one shard of two: stderr %q, want the missing runs counted", errb)
	}

	// A shard with an empty share (more shards than runs) merges as nothing.
	empty := filepath.Join(base, "empty")
	hop(t, 0, "run", tiny, "--shard", "39/40", "--out", empty, "--quiet")
	out, _ = hop(t, 0, "merge", filepath.Join(base, "merged2"), s0, empty, s1)
	if !strings.Contains(out, "32 runs, 16 cells") {
		t.Errorf("merge with an empty shard: stdout %q", out)
	}
	hop(t, 2, "merge", filepath.Join(base, "merged3"), empty, empty)

	other := filepath.Join(base, "other")
	if err := results.MarkDir(other, results.Meta{Version: "test", Experiment: "other", ExperimentHash: "0123"}); err != nil {
		t.Fatal(err)
	}
	mixed := filepath.Join(base, "mixed")
	if _, errb = hop(t, 2, "merge", mixed, s0, other); !strings.Contains(errb, "another experiment") {
		t.Errorf("merge of mixed experiments: stderr %q", errb)
	}
	if _, err := os.Stat(mixed); err == nil {
		t.Error("a refused merge wrote its output folder")
	}
	hop(t, 2, "merge", mixed, s0, filepath.Join(base, "absent"))

	for _, args := range [][]string{
		{"run", tiny, "--shard", "2/2", "--out", filepath.Join(base, "x")},
		{"run", tiny, "--shard", "half", "--out", filepath.Join(base, "x")},
		{"run", tiny, "--workers", "-1", "--out", filepath.Join(base, "x")},
		{"run", "no-such-experiment", "--out", filepath.Join(base, "x")},
	} {
		hop(t, 2, args...)
	}
	if _, err := os.Stat(filepath.Join(base, "x")); err == nil {
		t.Error("bad input wrote a results folder")
	}
}

func TestSlurmCommand(t *testing.T) {
	tiny, err := filepath.Abs("../../testdata/tiny.yaml")
	if err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(t.TempDir(), "cluster")
	stdout, _ := hop(t, 0, "slurm", tiny, "--tasks", "3", "--cpus-per-task", "2", "--partition", "short", "--time", "5:00", "--out", out, "--hoplore", "/opt/hoplore/bin/hoplore")
	path := filepath.Join(out, "slurm", "tiny.sbatch")
	if !strings.Contains(stdout, "wrote "+path) || !strings.Contains(stdout, "32 runs in 3 tasks of 10-11 runs") {
		t.Errorf("stdout %q", stdout)
	}
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	script := string(b)
	for _, want := range []string{
		"#SBATCH --array=0-2", "#SBATCH --cpus-per-task=2", "#SBATCH --partition=short", "#SBATCH --time=5:00",
		"#SBATCH --output=" + out + "/slurm/logs/%A_%a.out", "--workers 2", "--dependency=afterok:",
		"HOPLORE=/opt/hoplore/bin/hoplore", "EXPERIMENT=" + tiny, "--shard \"$SLURM_ARRAY_TASK_ID/$TASKS\"",
	} {
		if !strings.Contains(script, want) {
			t.Errorf("script lacks %q:\n%s", want, script)
		}
	}
	if st, err := os.Stat(sweep.LogDir(out)); err != nil || !st.IsDir() {
		t.Errorf("log folder not created: %v", err)
	}
	if bash, err := exec.LookPath("bash"); err == nil {
		if msg, err := exec.Command(bash, "-n", path).CombinedOutput(); err != nil {
			t.Errorf("bash -n: %v\n%s", err, msg)
		}
	}
	hop(t, 2, "slurm", tiny, "--tasks", "33", "--out", out)
	hop(t, 2, "slurm", tiny, "--out", out)
	hop(t, 2, "slurm", tiny, "--tasks", "2", "--cpus-per-task", "0", "--out", out)
}
