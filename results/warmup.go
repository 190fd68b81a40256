package results

import (
	"fmt"
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

// ShortWarmup is a cell whose warm-up is shorter than the initial transient
// detected in its runs, or some of whose runs never settled.
type ShortWarmup struct {
	Cell      CellDims
	WarmupS   float64 // the cell's warm-up
	DetectedS float64 // the longest transient detected among its runs; NaN if none was
	Runs      int     // runs of the cell
	Unsettled int     // runs whose transient was not seen to end
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
// run whose transient was not seen to end, in the order the cells first
// appear.
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
		if r.WarmupDetectedS == nil {
			s.Unsettled++
		} else if math.IsNaN(s.DetectedS) || *r.WarmupDetectedS > s.DetectedS {
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
