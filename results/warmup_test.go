package results_test

import (
	"math"
	"math/rand/v2"
	"testing"

	"hoplore/results"
	"hoplore/sim"
)

func TestDetectWarmup(t *testing.T) {
	// 200 bins of 1 s: mean delivery 10 ms + 40 ms·exp(−t/8 s) with 1 ms
	// noise; bins 30 and 31 empty. The batch bias falls below the noise of
	// a batch mean, 1 ms/√5, at t = 8·ln(40/0.447) = 36 s; MSER-5 finds
	// that end within a batch or so (see stats.MSER).
	r := rand.New(rand.NewPCG(1, 1))
	series := make([]sim.Bin, 200)
	for i := range series {
		b := &series[i]
		b.Start, b.End = sim.Time(i)*sim.Second, sim.Time(i+1)*sim.Second
		if i == 30 || i == 31 {
			continue
		}
		b.Delivered = 100
		b.DelaySum = 100 * (0.010 + 0.040*math.Exp(-float64(i)/8) + 0.001*r.NormFloat64())
	}
	at, ok := results.DetectWarmup(series)
	if !ok || at < 30 || at > 45 {
		t.Errorf("got %v s (ok %v), want about 36 s", at, ok)
	}
	// Still climbing at the end: not found.
	for i := range series {
		series[i].Delivered = 100
		series[i].DelaySum = 100 * (0.010 + 0.0001*float64(i) + 0.0001*r.NormFloat64())
	}
	if at, ok := results.DetectWarmup(series); ok {
		t.Errorf("trend: got %v s, want not found", at)
	}
	if _, ok := results.DetectWarmup(series[:10]); ok {
		t.Errorf("10 bins: found a transient end")
	}
}

func TestShortWarmups(t *testing.T) {
	f := func(v float64) *float64 { return &v }
	row := func(agent string, rep int, warm float64, det *float64) results.RunRow {
		r := results.RunRow{WarmupS: warm, WarmupDetectedS: det}
		r.Topology, r.Agent, r.Load, r.Failure, r.Replicate = "ring", agent, 0.5, "none", rep
		return r
	}
	rows := []results.RunRow{
		row("calm", 0, 100, f(20)), row("calm", 1, 100, f(40)),
		row("learner", 0, 100, f(60)), row("learner", 1, 100, f(140)),
		row("restless", 0, 100, f(10)), row("restless", 1, 100, nil),
	}
	got := results.ShortWarmups(rows)
	if len(got) != 2 || got[0].Cell.Agent != "learner" || got[0].DetectedS != 140 || got[0].Unsettled != 0 ||
		got[1].Cell.Agent != "restless" || got[1].Unsettled != 1 || got[1].Runs != 2 {
		t.Fatalf("got %+v", got)
	}
	for i, want := range []string{
		"ring / learner / load 0.5 / none: warm-up 100s is shorter than the initial transient detected (up to 140s)",
		"ring / restless / load 0.5 / none: warm-up 100s; 1 of 2 runs never settled (no end of the transient in their first half)",
	} {
		if s := got[i].String(); s != want {
			t.Errorf("got %q, want %q", s, want)
		}
	}
}
