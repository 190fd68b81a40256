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

// pm formats mean ± half-width, both scaled, to three significant digits of
// the mean.
func pm(mean, half *float64, scale float64) string {
	if mean == nil {
		return "-"
	}
	s, dec := sig3(*mean * scale)
	if half != nil {
		h := *half * scale
		if dec >= 0 {
			s += " ± " + strconv.FormatFloat(h, 'f', dec, 64)
		} else {
			s += " ± " + strconv.FormatFloat(h, 'e', 1, 64)
		}
	}
	return s
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
