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
	at, how := results.DetectWarmup(series)
	if how != results.WarmupDetected || at < 30 || at > 45 {
		t.Errorf("got %v s (%s), want about 36 s", at, how)
	}
	// Still climbing at the end: not found.
	for i := range series {
		series[i].Delivered = 100
		series[i].DelaySum = 100 * (0.010 + 0.0001*float64(i) + 0.0001*r.NormFloat64())
	}
	if at, how := results.DetectWarmup(series); how != results.WarmupUnsettled {
		t.Errorf("trend: got %v s (%s), want %s", at, how, results.WarmupUnsettled)
	}
	if at, how := results.DetectWarmup(series[:results.WarmupMinBins]); how != results.WarmupTooFewBins {
		t.Errorf("%d bins (one fewer used): got %v s (%s), want %s", results.WarmupMinBins, at, how, results.WarmupTooFewBins)
	}
	// Stationary noise: no transient beyond noise, at 0.
	for i := range series {
		series[i].DelaySum = 100 * (0.010 + 0.001*r.NormFloat64())
	}
	if at, how := results.DetectWarmup(series); how != results.WarmupDetected || at != 0 {
		t.Errorf("noise: got %v s (%s), want 0 s", at, how)
	}
}

func TestShortWarmups(t *testing.T) {
	f := func(v float64) *float64 { return &v }
	row := func(agent string, rep int, warm float64, det *float64) results.RunRow {
		r := results.RunRow{WarmupS: warm, WarmupDetectedS: det, WarmupDetection: results.WarmupDetected}
		if det == nil {
			r.WarmupDetection = results.WarmupUnsettled
		}
		r.Topology, r.Agent, r.Load, r.Failure, r.Replicate = "ring", agent, 0.5, "none", rep
		return r
	}
	rows := []results.RunRow{
		row("calm", 0, 100, f(20)), row("calm", 1, 100, f(40)),
		row("learner", 0, 100, f(60)), row("learner", 1, 100, f(140)),
		row("restless", 0, 100, f(10)), row("restless", 1, 100, nil),
		{WarmupS: 100, WarmupDetection: results.WarmupTooFewBins}, // too short to tell: no warning
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
