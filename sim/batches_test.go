package sim_test

import (
	"testing"

	"hoplore/sim"
)

// Batches keeps equal consecutive batches: for the values 1..n, batch i of
// size m holds i·m+1 .. (i+1)·m, whose mean is i·m + (m+1)/2.
func TestBatches(t *testing.T) {
	for _, n := range []int{0, 7, 59, 60, 61, 119, 120, 1000, 123457} {
		var b sim.Batches
		for v := 1; v <= n; v++ {
			b.Add(float64(v))
		}
		means, m := b.Means()
		if n >= sim.BatchSlots && (len(means) < sim.BatchSlots/2 || len(means) >= sim.BatchSlots) {
			t.Errorf("n=%d: %d batches, want between %d and %d", n, len(means), sim.BatchSlots/2, sim.BatchSlots-1)
		}
		if n < sim.BatchSlots && (len(means) != n || m != 1) {
			t.Errorf("n=%d: %d batches of %d, want %d of 1", n, len(means), m, n)
		}
		if int64(len(means))*m > int64(n) || int64(len(means)+1)*m <= int64(n)-m {
			t.Errorf("n=%d: %d batches of %d do not cover all but the partial last batch", n, len(means), m)
		}
		for i, got := range means {
			if want := float64(int64(i)*m) + float64(m+1)/2; got != want {
				t.Errorf("n=%d: batch %d mean %g, want %g", n, i, got, want)
				break
			}
		}
	}
	var b sim.Batches
	if a := testing.AllocsPerRun(1000, func() { b.Add(1) }); a != 0 {
		t.Errorf("Add allocates %v times", a)
	}
}
