package sweep

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"text/tabwriter"

	"hoplore/results"
	"hoplore/stats"
)

// WriteSummary prints the per-cell table: for each cell its replicates and,
// for every column summary.parquet summarises with a mean (results.Summarized,
// results.MeanCI95), the mean ± 95% confidence half-width (Student t) in
// display units (DisplayUnit), rounded as stats.PlusMinus does. A
// half-width is left out when there is a single replicate, except for a
// column with a one-run interval (results.Column.OneRunCI: the mean
// delivery time's batch-means interval); a statistic with no value prints
// as stats.None.
func WriteSummary(w io.Writer, rows []results.SummaryRow) error {
	var cols []*results.Column
	for _, c := range results.Summarized() {
		if c.Summary == results.MeanCI95 && (!c.FlowOnly || anyMean(rows, c.Name)) {
			cols = append(cols, c)
		}
	}
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	head := []string{"topology", "agent", "load", "failure", "reps"}
	for _, c := range cols {
		_, unit := c.Display()
		head = append(head, strings.TrimSpace(c.Label+" "+unit))
	}
	fmt.Fprintln(tw, strings.Join(head, "\t"))
	line := make([]string, 0, len(head))
	for i := range rows {
		r := &rows[i]
		line = append(line[:0], r.Topology, r.Agent, strconv.FormatFloat(r.Load, 'g', -1, 64), r.Failure, strconv.Itoa(r.Replicates))
		for _, c := range cols {
			scale, _ := c.Display()
			mean, half := r.MeanCI95(c.Name)
			line = append(line, estimate(mean, half).Format(scale))
		}
		fmt.Fprintln(tw, strings.Join(line, "\t"))
	}
	return tw.Flush()
}

// estimate turns a summary's nullable mean and half-width into a
// stats.Estimate (N only tells a value from none).
func estimate(mean, half *float64) stats.Estimate {
	e := stats.Estimate{Mean: math.NaN(), CI95: math.NaN()}
	if mean != nil {
		e.N, e.Mean = 1, *mean
	}
	if half != nil {
		e.CI95 = *half
	}
	return e
}

// anyMean reports whether some row holds a mean of column name.
func anyMean(rows []results.SummaryRow, name string) bool {
	for i := range rows {
		if m, _ := rows[i].MeanCI95(name); m != nil {
			return true
		}
	}
	return false
}
