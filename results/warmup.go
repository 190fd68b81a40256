package results

import (
	"fmt"
	"math"

	"hoplore/sim"
	"hoplore/stats"
)

// What DetectWarmup found, as stored in runs.parquet's warmup_detection.
const (
	WarmupDetected   = "detected"     // warmup_detected_s holds the end of the transient (0: none beyond noise)
	WarmupUnsettled  = "not settled"  // a significant transient with no end in the first half of the run
	WarmupTooFewBins = "too few bins" // fewer than WarmupMinBins bins with a mean: not tried
)

// WarmupMinBins is the fewest bins with a mean delivery time DetectWarmup
// works on: 10 batches of MSER-5, the fewest for which its first half
// offers a choice of five truncation points.
const WarmupMinBins = 10 * stats.MSERBatch

// warmupZ is the standardised difference between the deleted and the kept
// part above which DetectWarmup takes MSER-5's truncation for a transient
// (z = 3.29, two-sided 0.1%). On white noise MSER-5 still deletes some
// batches by chance; measured over 4,000 series each, the deleted part
// passes this threshold in none of 40, 50 or 60 values, 2 of 100 and 10 of
// 500 (stats.Truncation.Z).
const warmupZ = 3.29

// DetectWarmup returns where the initial transient of a run ends, in
// seconds from its start: MSER-5 (stats.MSER5) over the mean delivery time
// of the bins of its whole series, warm-up included. Bins without a
// delivered packet are left out, and so is the last bin, whose packets had
// the least time to arrive before the run ended (its mean is biased low).
// The result is the start of the first bin kept after truncation, so its
// resolution is 5 bins at worst. A truncation whose deleted part does not
// differ from the kept part by more than 3.29 standard errors (stats.
// Truncation.Z) is noise, not a transient: the result is then 0. how is
// WarmupDetected, or says why there is no result (at is then NaN):
// WarmupTooFewBins when fewer than WarmupMinBins bins have a mean,
// WarmupUnsettled when MSER-5 puts a significant end in the second half of
// the series (the run never settled long enough to tell).
func DetectWarmup(series []sim.Bin) (at float64, how string) {
	if len(series) < 2 {
		return math.NaN(), WarmupTooFewBins
	}
	var x []float64
	var idx []int
	for i := range series[:len(series)-1] {
		if m := series[i].DeliveryMean(); !math.IsNaN(m) {
			x = append(x, m)
			idx = append(idx, i)
		}
	}
	if len(x) < WarmupMinBins {
		return math.NaN(), WarmupTooFewBins
	}
	tr := stats.MSER5(x)
	switch {
	case !(math.Abs(tr.Z) > warmupZ): // nothing deleted, or noise
		return 0, WarmupDetected
	case !tr.OK:
		return math.NaN(), WarmupUnsettled
	}
	return series[idx[tr.At]].Start.Seconds(), WarmupDetected
}

// ShortWarmup is a cell whose warm-up is shorter than the initial transient
// detected in its runs, or some of whose runs never settled.
type ShortWarmup struct {
	Cell      CellDims
	WarmupS   float64 // the cell's warm-up
	DetectedS float64 // the longest transient detected among its runs; NaN if none was
	Runs      int     // runs of the cell
	Unsettled int     // runs whose transient was not seen to end (WarmupUnsettled)
}

// String says what is wrong, in one line.
func (s ShortWarmup) String() string {
	c := s.Cell
	msg := fmt.Sprintf("%s / %s / load %g / %s: warm-up %gs", c.Topology, c.Agent, c.Load, c.Failure, s.WarmupS)
	if !math.IsNaN(s.DetectedS) && s.DetectedS > s.WarmupS {
		msg += fmt.Sprintf(" is shorter than the initial transient detected (up to %gs)", s.DetectedS)
	}
	if s.Unsettled > 0 {
		msg += fmt.Sprintf("; %d of %d runs never settled (no end of the transient in their first half)", s.Unsettled, s.Runs)
	}
	return msg
}

// ShortWarmups returns the cells of rows whose warm-up is shorter than the
// longest transient detected in their runs (warmup_detected_s), or with a
// run whose transient was not seen to end (WarmupUnsettled), in the order
// the cells first appear. Runs too short to tell count for neither.
func ShortWarmups(rows []RunRow) []ShortWarmup {
	var out []ShortWarmup
	at := map[CellDims]int{}
	for i := range rows {
		r := &rows[i]
		c := r.Cell()
		k, ok := at[c]
		if !ok {
			k = len(out)
			at[c] = k
			out = append(out, ShortWarmup{Cell: c, WarmupS: r.WarmupS, DetectedS: math.NaN()})
		}
		s := &out[k]
		s.Runs++
		s.WarmupS = max(s.WarmupS, r.WarmupS)
		if r.WarmupDetection == WarmupUnsettled {
			s.Unsettled++
		}
		if r.WarmupDetectedS == nil {
			continue
		}
		if math.IsNaN(s.DetectedS) || *r.WarmupDetectedS > s.DetectedS {
			s.DetectedS = *r.WarmupDetectedS
		}
	}
	keep := out[:0]
	for _, s := range out {
		if s.Unsettled > 0 || s.DetectedS > s.WarmupS {
			keep = append(keep, s)
		}
	}
	return keep
}
