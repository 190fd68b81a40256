package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"hoplore/experiments"
	"hoplore/results"
)

// check compares the experiment's warm-up, as the file now sets it, with
// the transient detected in an earlier run's runs.parquet.
func TestCheckWarmupAgainstEarlierRuns(t *testing.T) {
	e, err := experiments.Resolve("single-queue")
	if err != nil {
		t.Fatal(err)
	}
	warm := e.Warmup.Seconds()
	f := func(v float64) *float64 { return &v }
	row := func(agent string, rep int, det *float64, how string) results.RunRow {
		r := results.RunRow{WarmupS: 1, WarmupDetectedS: det, WarmupDetection: how}
		r.Experiment, r.Topology, r.Agent, r.Load, r.Failure, r.Replicate = e.Name, "one-link", agent, 0.8, "none", rep
		r.RunID = agent + string(rune('0'+rep))
		return r
	}
	for _, tc := range []struct {
		name string
		rows []results.RunRow
		want []string
	}{
		{"covered", []results.RunRow{row("calm", 0, f(warm/2), results.WarmupDetected), row("calm", 1, f(0), results.WarmupDetected)},
			[]string{"warm-up", "covers the initial transient detected in every run"}},
		{"too short", []results.RunRow{row("calm", 0, f(warm/2), results.WarmupDetected), row("learner", 0, f(2*warm), results.WarmupDetected), row("learner", 1, nil, results.WarmupUnsettled)},
			[]string{"warm-up too short for 1 cell", "one-link / learner / load 0.8 / none: warm-up 200s is shorter than the initial transient detected (up to 400s); 1 of 2 runs never settled"}},
		{"too few bins", []results.RunRow{row("calm", 0, nil, results.WarmupTooFewBins)},
			[]string{"not checked", "fewer than 10 bins"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			dir := t.TempDir()
			if err := results.WriteTable(filepath.Join(dir, results.RunsFile), "runs", results.Meta{Experiment: e.Name}, tc.rows); err != nil {
				t.Fatal(err)
			}
			var b strings.Builder
			writeWarmupCheck(&b, e, dir)
			for _, w := range tc.want {
				if !strings.Contains(b.String(), w) {
					t.Errorf("output lacks %q:\n%s", w, b.String())
				}
			}
		})
	}
	// no earlier results: nothing said, nothing created
	none := filepath.Join(t.TempDir(), "none")
	var b strings.Builder
	writeWarmupCheck(&b, e, none)
	if b.Len() != 0 {
		t.Errorf("no results folder, yet:\n%s", b.String())
	}
	if _, err := os.Stat(none); err == nil {
		t.Error("check created the results folder")
	}
}
