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
// works on: 10 batches of one bin, the fewest for which MSER's first half
// offers a choice of five truncation points.
const WarmupMinBins = 10

// WarmupBatch returns the batch size DetectWarmup uses on n bins with a
// mean: MSER-5's 5 bins from 50 bins on, fewer below so that there are
// still 10 batches (MSER-m, White 1997, takes any m: larger batches only
// damp the noise the statistic sees), 0 below WarmupMinBins.
func WarmupBatch(n int) int {
	if n < WarmupMinBins {
		return 0
	}
	return min(stats.MSERBatch, n/10)
}

// warmupMargin is the least relative difference between the deleted and
// the kept part's mean delivery time that DetectWarmup reports as a
// transient: left in the measured window, a smaller one moves a run's mean
// by less than 10% of the share of the run it covers. Learners and flow
// traffic shift their level by a few per cent now and then, with quiet
// stretches between, which the statistical test alone takes for
// transients (on a six-site flow example, 4 of 54 runs read "not settled"
// for level shifts of 6–9%). A choice.
const warmupMargin = 0.10

// DetectWarmup returns where the initial transient of a run ends, in
// seconds from its start: MSER-5 (stats.MSER5) over the mean delivery time
// of the bins of its whole series, warm-up included; with fewer than 50
// such bins MSER-m with the batch of WarmupBatch (10 batches). Bins without a
// delivered packet are left out, and so is the last bin, whose packets had
// the least time to arrive before the run ended (its mean is biased low).
// The result is the start of the first bin kept after truncation, so its
// resolution is one batch (5 bins at most). A truncation whose deleted part
// does not differ from the kept part (stats.Truncation.Z, in standard
// errors from the kept batches' spread) beyond what white noise reaches
// once in 1,000 series (stats.MSERCritical), or by less than warmupMargin
// of the kept part's mean, is noise or too small to matter, not a
// transient: the result is then 0. how is
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
	m := WarmupBatch(len(x))
	if m == 0 {
		return math.NaN(), WarmupTooFewBins
	}
	tr := stats.MSER(x, m)
	switch {
	case !(math.Abs(tr.Z) > stats.MSERCritical(tr.K)): // nothing deleted, or noise
		return 0, WarmupDetected
	case !(math.Abs(tr.Deleted-tr.Kept) > warmupMargin*math.Abs(tr.Kept)): // too small to matter
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
