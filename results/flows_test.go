package results_test

import (
	"testing"

	"hoplore/results"
	"hoplore/results/resultstest"
	"hoplore/sim"
)

// The flow columns are the FlowResult's means (sums over counts), pooled
// over the classes for the overall ones; null without flow traffic.
func TestFromRunFlows(t *testing.T) {
	net := resultstest.Net()
	cfg := resultstest.Config(net)
	r := resultstest.Run(net, 0, false)
	if got := results.FromRun(resultstest.Dims("q-routing", 0.5, 0), net, cfg, r, 1, "v").Run; got.FCTMeanS != nil || got.ReorderedFraction != nil || got.FlowsStarted != 0 {
		t.Fatalf("packet traffic: flow columns %v %v %d, want null and 0", got.FCTMeanS, got.ReorderedFraction, got.FlowsStarted)
	}
	f := &sim.FlowResult{Started: 7, Completed: 5, Failed: 1, Unfinished: 1, Delivered: 40, Reordered: 4}
	for k := range f.Classes {
		f.Classes[k].FCT, f.Classes[k].Slowdown = sim.NewHistogram(), sim.NewHistogram()
	}
	add := func(c sim.FlowClass, fct, sd float64) {
		k := &f.Classes[c]
		k.Completed++
		k.FCT.Add(fct)
		k.FCTSum += fct
		k.Slowdown.Add(sd)
		k.SlowdownSum += sd
	}
	add(sim.Mice, 0.001, 1)
	add(sim.Mice, 0.003, 2)
	add(sim.Mice, 0.002, 3)
	add(sim.Medium, 0.05, 1.5)
	add(sim.Elephant, 2, 1.2)
	r.Flows = f
	got := results.FromRun(resultstest.Dims("q-routing", 0.5, 0), net, cfg, r, 1, "v").Run
	for _, c := range []struct {
		name string
		p    *float64
		want float64
	}{
		{"fct_mean_s", got.FCTMeanS, (0.001 + 0.003 + 0.002 + 0.05 + 2) / 5},
		{"fct_mice_mean_s", got.FCTMiceMeanS, 0.002},
		{"fct_elephant_mean_s", got.FCTElephantMeanS, 2},
		{"slowdown_mean", got.SlowdownMean, (1 + 2 + 3 + 1.5 + 1.2) / 5},
		{"slowdown_mice_mean", got.SlowdownMiceMean, 2},
		{"slowdown_elephant_mean", got.SlowdownElephantMean, 1.2},
		{"reordered_fraction", got.ReorderedFraction, 0.1},
		{"fct_p99_s", got.FCTP99S, 2},
	} {
		if c.p == nil || !approx(*c.p, c.want, sim.HistRelErr) {
			t.Errorf("%s: got %v, want %g", c.name, c.p, c.want)
		}
	}
	if got.FlowsStarted != 7 || got.FlowsCompleted != 5 || got.FlowsFailed != 1 {
		t.Errorf("flows started/completed/failed %d/%d/%d, want 7/5/1", got.FlowsStarted, got.FlowsCompleted, got.FlowsFailed)
	}
}
