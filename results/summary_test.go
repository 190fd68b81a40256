package results_test

import (
	"fmt"
	"math"
	"testing"

	"hoplore/results"
)

func TestSummarize(t *testing.T) {
	cell := func(agent string, load float64, rep int, mean *float64, tput float64) results.RunRow {
		return results.RunRow{
			Dims:          results.Dims{Experiment: "e", Topology: "ring", Agent: agent, Load: load, Failure: "none", Replicate: rep, RunID: fmt.Sprint(agent, load, rep)},
			DeliveryMeanS: mean, ThroughputBps: tput,
		}
	}
	v := func(x float64) *float64 { return &x }
	runs := []results.RunRow{
		cell("b", 1, 0, v(2), 10),
		cell("a", 1, 0, v(1), 1),
		cell("b", 1, 1, nil, 20), // no delivery: skipped in delivery_mean_s
		cell("a", 1, 1, v(3), 3),
		cell("a", 2, 0, nil, 5),
		cell("b", 1, 2, v(4), 30),
		cell("c", 1, 0, v(7), 1),
	}
	// One replicate with its own steady-state interval: the summary takes
	// it for delivery_mean_s (the column with a one-run interval) only.
	runs[len(runs)-1].DeliveryMeanSCI95 = v(0.25)
	got := results.Summarize(runs)
	if len(got) != 4 {
		t.Fatalf("got %d cells, want 4", len(got))
	}
	if dm, dh := got[3].MeanCI95("delivery_mean_s"); *dm != 7 || dh == nil || *dh != 0.25 {
		t.Errorf("one replicate with a run interval: got %v ± %v, want 7 ± 0.25", dm, dh)
	}
	if _, th := got[3].MeanCI95("throughput_bps"); th != nil {
		t.Errorf("one replicate, throughput: half-width %v, want null", *th)
	}
	// first-appearance order: (b,1), (a,1), (a,2)
	if got[0].Agent != "b" || got[1].Agent != "a" || got[1].Load != 1 || got[2].Load != 2 {
		t.Errorf("cell order: %+v", got)
	}
	b := got[0]
	// delivery: values 2, 4 → mean 3, s = √2, t(0.975,1) = 12.706 → 12.706.
	// throughput: 10, 20, 30 → mean 20, s = 10, t(0.975, 2) = 4.3027 →
	// 4.3027·10/√3 = 24.841 (Fisher & Yates, Statistical Tables, 1938,
	// table III).
	dm, dh := b.MeanCI95("delivery_mean_s")
	tm, th := b.MeanCI95("throughput_bps")
	if b.Replicates != 3 || *dm != 3 || math.Abs(*dh-12.706) > 5e-4 || *tm != 20 || math.Abs(*th-24.841) > 5e-3 {
		t.Errorf("cell b: got %+v", b)
	}
	lm, lh := b.MeanCI95("loss_rate")
	if pm, _ := b.MeanCI95("delivery_p95_s"); lm != nil || lh != nil || pm != nil {
		t.Errorf("cell b: all-null columns should stay null: %+v", b)
	}
	c := got[2]
	dm, _ = c.MeanCI95("delivery_mean_s")
	tm, th = c.MeanCI95("throughput_bps")
	if c.Replicates != 1 || dm != nil || *tm != 5 || th != nil {
		t.Errorf("cell (a,2): got %+v", c)
	}
	if len(b.Values) != len(results.Summaries.Columns)-1 {
		t.Errorf("cell b: %d values, want one per summary column (%d)", len(b.Values), len(results.Summaries.Columns)-1)
	}
}

func ExampleSummarize() {
	v := func(x float64) *float64 { return &x }
	var runs []results.RunRow
	for rep, d := range []float64{0.020, 0.024, 0.022} {
		runs = append(runs, results.RunRow{
			Dims:          results.Dims{Experiment: "demo", Topology: "ring", Agent: "shortest-path", Load: 0.5, Failure: "none", Replicate: rep},
			DeliveryMeanS: v(d),
			LossRate:      v(0),
			ThroughputBps: 1e6,
		})
	}
	for _, s := range results.Summarize(runs) {
		mean, half := s.MeanCI95("delivery_mean_s")
		fmt.Printf("%s %s load %.1f: %d replicates, delivery %.4f ± %.4f s\n",
			s.Topology, s.Agent, s.Load, s.Replicates, *mean, *half)
	}
	// Output:
	// ring shortest-path load 0.5: 3 replicates, delivery 0.0220 ± 0.0050 s
}
