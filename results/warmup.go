package results

import (
	"math"

	"hoplore/sim"
	"hoplore/stats"
)

// DetectWarmup returns where the initial transient of a run ends, in
// seconds from its start: MSER-5 (stats.MSER5) over the mean delivery time
// of the bins of its whole series, warm-up included. Bins without a
// delivered packet are left out, and so is the last bin, whose packets had
// the least time to arrive before the run ended (its mean is biased low).
// The result is the start of the first bin kept after truncation, so its
// resolution is 5 bins at worst. ok is false when fewer than 15 bins have a
// mean, or when MSER-5 puts the end in the second half of the series: the
// run never settled long enough to tell.
func DetectWarmup(series []sim.Bin) (at float64, ok bool) {
	if len(series) < 2 {
		return math.NaN(), false
	}
	var x []float64
	var idx []int
	for i := range series[:len(series)-1] {
		if m := series[i].DeliveryMean(); !math.IsNaN(m) {
			x = append(x, m)
			idx = append(idx, i)
		}
	}
	tr := stats.MSER5(x)
	if !tr.OK {
		return math.NaN(), false
	}
	return series[idx[tr.At]].Start.Seconds(), true
}
