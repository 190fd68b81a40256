package results

import (
	"math"
	"math/rand/v2"
	"testing"

	"hoplore/sim"
)

// A run that settles at once and then loses a link at 120 s, its delivery
// time rising by half until the repair at 220 s: the warm-up check looks at
// the stretch before the failure only, which is settled.
func TestWarmupLooksBeforeFailures(t *testing.T) {
	r := rand.New(rand.NewPCG(4, 4))
	series := make([]sim.Bin, 300)
	for i := range series {
		b := &series[i]
		b.Start, b.End = sim.Time(i)*sim.Second, sim.Time(i+1)*sim.Second
		mean := 0.010 * (1 + 0.01*r.NormFloat64())
		if i >= 120 && i < 220 {
			mean *= 1.5
		}
		b.Delivered = 100
		b.DelaySum = 100 * mean
	}
	failures := []sim.FailureEvent{{At: 220 * sim.Second, Up: true, Node: -1}, {At: 120 * sim.Second, Node: -1}}
	kept := beforeFailures(series, failures)
	if len(kept) != 121 {
		t.Errorf("kept %d bins, want 121 (120 before the failure and the last, left out)", len(kept))
	}
	if at, how := DetectWarmup(kept); how != WarmupDetected || at != 0 || math.IsNaN(at) {
		t.Errorf("before the failure: got %v s (%s), want 0 s", at, how)
	}
	if got := beforeFailures(series, nil); len(got) != len(series) {
		t.Errorf("without failures: %d bins, want all %d", len(got), len(series))
	}
}
