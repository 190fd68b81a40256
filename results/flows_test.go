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
	if got := results.FromRun(resultstest.Dims("q-routing", 0.5, 0), net, cfg, r, 1, "v").Run; got.FCTMeanS != nil || got.ReorderedFraction != nil || got.CompletedShare != nil || got.FlowsStarted != 0 {
		t.Fatalf("packet traffic: flow columns %v %v %v %d, want null and 0", got.FCTMeanS, got.ReorderedFraction, got.CompletedShare, got.FlowsStarted)
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
	// of the 7 started: 4 mice (one failed), 1 medium, 2 elephants (one
	// unfinished)
	f.Classes[sim.Mice].Started, f.Classes[sim.Medium].Started, f.Classes[sim.Elephant].Started = 4, 1, 2
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
		{"completed_share", got.CompletedShare, 5.0 / 7},
		{"completed_mice_share", got.CompletedMiceShare, 3.0 / 4},
		{"completed_elephant_share", got.CompletedElephantShare, 1.0 / 2},
	} {
		if c.p == nil || !approx(*c.p, c.want, sim.HistRelErr) {
			t.Errorf("%s: got %v, want %g", c.name, c.p, c.want)
		}
	}
	if got.FlowsStarted != 7 || got.FlowsCompleted != 5 || got.FlowsFailed != 1 {
		t.Errorf("flows started/completed/failed %d/%d/%d, want 7/5/1", got.FlowsStarted, got.FlowsCompleted, got.FlowsFailed)
	}
}

// Each sampled flow becomes one flows.parquet row: fct_s = end − start and
// slowdown = fct / ideal for a completed flow, null otherwise; an
// unreachable destination has no ideal time and so no slowdown.
func TestFromRunFlowRows(t *testing.T) {
	net := resultstest.Net()
	cfg := resultstest.Config(net)
	r := resultstest.Run(net, 0, false)
	r.Flows = &sim.FlowResult{Sample: []sim.FlowRecord{
		{ID: 4, Src: 0, Dst: 1, Size: 3000, Class: sim.Mice, Start: 2 * sim.Second, End: 2*sim.Second + 30*sim.Millisecond,
			Ideal: 10 * sim.Millisecond, Packets: 2, Delivered: 2, Reordered: 1, Outcome: sim.FlowCompleted},
		{ID: 9, Src: 1, Dst: 0, Size: 2e7, Class: sim.Elephant, Start: 3 * sim.Second, End: -1,
			Ideal: -1, Packets: 5, Delivered: 3, Outcome: sim.FlowFailed},
	}}
	d := resultstest.Dims("q-routing", 0.5, 0)
	got := results.FromRun(d, net, cfg, r, 1, "v").Flows
	want := []results.FlowRow{
		{Dims: d, FlowID: 4, Source: net.Name(0), Destination: net.Name(1), SizeBytes: 3000, Class: "mice", StartS: 2,
			EndS: f64p(2.03), FCTS: f64p(0.03), IdealFCTS: f64p(0.01), Slowdown: f64p(3), Packets: 2, DeliveredPackets: 2,
			ReorderedPackets: 1, Outcome: "completed"},
		{Dims: d, FlowID: 9, Source: net.Name(1), Destination: net.Name(0), SizeBytes: 2e7, Class: "elephant", StartS: 3,
			Packets: 5, DeliveredPackets: 3, Outcome: "failed"},
	}
	if len(got) != len(want) {
		t.Fatalf("%d rows, want %d", len(got), len(want))
	}
	for i := range want {
		g, w := got[i], want[i]
		for _, p := range []struct {
			name string
			g, w *float64
		}{{"end_s", g.EndS, w.EndS}, {"fct_s", g.FCTS, w.FCTS}, {"ideal_fct_s", g.IdealFCTS, w.IdealFCTS}, {"slowdown", g.Slowdown, w.Slowdown}} {
			if (p.g == nil) != (p.w == nil) || p.g != nil && !approx(*p.g, *p.w, 1e-12) {
				t.Errorf("row %d %s: got %v, want %v", i, p.name, p.g, p.w)
			}
		}
		g.EndS, g.FCTS, g.IdealFCTS, g.Slowdown = nil, nil, nil, nil
		w.EndS, w.FCTS, w.IdealFCTS, w.Slowdown = nil, nil, nil, nil
		if g != w {
			t.Errorf("row %d: got %+v, want %+v", i, g, w)
		}
	}
}

func f64p(v float64) *float64 { return &v }
