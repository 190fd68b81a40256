package results

import (
	"math"

	"gonum.org/v1/gonum/stat"
	"gonum.org/v1/gonum/stat/distuv"
)

// Summarize groups runs by cell (experiment, topology, agent, load, failure),
// in order of first appearance, and for delivery_mean_s, delivery_p95_s,
// loss_rate and throughput_bps gives the mean over the cell's runs and the
// half-width of its 95% confidence interval,
//
//	t(0.975, n−1) · s / √n,
//
// with s the sample standard deviation and t the Student t quantile
// (the usual replication interval: Law, Simulation Modeling and Analysis,
// 5th ed. 2015, §9.4.1). Null values are skipped, so n counts the runs
// holding the value; the mean is null when n = 0 and the half-width is
// null when n < 2 (one replicate says nothing about the spread; a null
// keeps a plot from drawing a spuriously certain band).
func Summarize(runs []RunRow) []SummaryRow {
	index := make(map[CellDims]int)
	var cells [][]*RunRow
	var keys []CellDims
	for i := range runs {
		c := runs[i].Cell()
		j, ok := index[c]
		if !ok {
			j = len(cells)
			index[c] = j
			cells = append(cells, nil)
			keys = append(keys, c)
		}
		cells[j] = append(cells[j], &runs[i])
	}
	out := make([]SummaryRow, len(cells))
	var buf []float64
	for j, rs := range cells {
		s := &out[j]
		s.CellDims = keys[j]
		s.Replicates = len(rs)
		agg := func(get func(*RunRow) *float64) (mean, ci *float64) {
			buf = buf[:0]
			for _, r := range rs {
				if v := get(r); v != nil {
					buf = append(buf, *v)
				}
			}
			return MeanCI95(buf)
		}
		s.DeliveryMeanSMean, s.DeliveryMeanSCI95 = agg(func(r *RunRow) *float64 { return r.DeliveryMeanS })
		s.DeliveryP95SMean, s.DeliveryP95SCI95 = agg(func(r *RunRow) *float64 { return r.DeliveryP95S })
		s.LossRateMean, s.LossRateCI95 = agg(func(r *RunRow) *float64 { return r.LossRate })
		s.ThroughputBpsMean, s.ThroughputBpsCI95 = agg(func(r *RunRow) *float64 { return &r.ThroughputBps })
	}
	return out
}

// MeanCI95 returns the mean of x and the half-width of its 95% Student t
// confidence interval; mean is nil for no values, the half-width nil for
// fewer than two. A non-finite result is nil.
func MeanCI95(x []float64) (mean, half *float64) {
	n := len(x)
	if n == 0 {
		return nil, nil
	}
	m, sd := stat.MeanStdDev(x, nil)
	if n == 1 {
		m = x[0]
		return finite(m), nil
	}
	t := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(n - 1)}.Quantile(0.975)
	return finite(m), finite(t * sd / math.Sqrt(float64(n)))
}
