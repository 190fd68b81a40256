package sweep

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"text/tabwriter"

	"hoplore/results"
)

// WriteSummary prints the per-cell table: for each cell its replicates and
// the mean ± 95% confidence half-width (Student t, from summary.parquet) of
// the mean delivery time and the 95th percentile delivery time (ms), the
// loss rate (%) and the throughput (Mbit/s). A half-width is left out when
// there is a single replicate; a statistic with no value prints as "-".
func WriteSummary(w io.Writer, rows []results.SummaryRow) error {
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "topology\tagent\tload\tfailure\treps\tdelivery mean ms\tdelivery p95 ms\tloss %\tthroughput Mbit/s")
	for i := range rows {
		r := &rows[i]
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%d\t%s\t%s\t%s\t%s\n",
			r.Topology, r.Agent, strconv.FormatFloat(r.Load, 'g', -1, 64), r.Failure, r.Replicates,
			pm(r.DeliveryMeanSMean, r.DeliveryMeanSCI95, 1e3),
			pm(r.DeliveryP95SMean, r.DeliveryP95SCI95, 1e3),
			pm(r.LossRateMean, r.LossRateCI95, 100),
			pm(r.ThroughputBpsMean, r.ThroughputBpsCI95, 1e-6))
	}
	return tw.Flush()
}

// pm formats mean ± half-width, both scaled: the mean to three significant
// digits, the half-width to two.
func pm(mean, half *float64, scale float64) string {
	if mean == nil {
		return "-"
	}
	s, _ := sig3(*mean * scale)
	if half != nil {
		s += " ± " + sig2(*half*scale)
	}
	return s
}

// sig2 formats a half-width with two significant digits, so that a small
// interval beside a large mean does not print as ± 0.
func sig2(v float64) string {
	a := math.Abs(v)
	switch {
	case a == 0:
		return "0"
	case a >= 1e6 || a < 1e-3:
		return strconv.FormatFloat(v, 'e', 1, 64)
	case a >= 10:
		return strconv.FormatFloat(math.Round(v), 'f', 0, 64)
	}
	return strconv.FormatFloat(v, 'f', 1-int(math.Floor(math.Log10(a))), 64)
}

// sig3 formats v with three significant digits, without an exponent for
// everyday magnitudes, and returns the decimals it used (-1: exponent form).
func sig3(v float64) (string, int) {
	a := math.Abs(v)
	dec := 0
	switch {
	case a == 0:
		dec = 2
	case a >= 1e6 || a < 1e-3:
		return strconv.FormatFloat(v, 'e', 2, 64), -1
	case a >= 100:
		dec = 0
	default:
		dec = 2 - int(math.Floor(math.Log10(a)))
	}
	return strconv.FormatFloat(v, 'f', dec, 64), dec
}
