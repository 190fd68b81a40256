package report

import (
	"cmp"
	"math"
	"slices"

	"hoplore/results"
	"hoplore/stats"
)

// FlowGlanceMetrics are the flow columns the flows-at-a-glance table
// compares, in its column order: mean slowdown (which ranks the agents),
// mean and 99th-percentile completion time, failed flows.
var FlowGlanceMetrics = []string{"slowdown_mean", "fct_mean_s", "fct_p99_s", "flows_failed"}

// FlowGlanceRow answers, for one panel (topology, load, failure schedule)
// whose runs had flow traffic, which agent's flows were slowed least (the
// lowest mean slowdown across replicates) and whether the runner-up's were
// clearly slowed more: paired comparisons of the two across replicates on
// FlowGlanceMetrics.
type FlowGlanceRow struct {
	Panel
	Best, Second                 string
	BestSlowdown, SecondSlowdown stats.Estimate // slowdown_mean
	// Diffs holds Best − Second on FlowGlanceMetrics, in order; the
	// p-values are adjusted (Holm 1979) across the table's rows, metric by
	// metric.
	Diffs []Comparison
}

// FlowGlance returns a FlowGlanceRow for every panel in which at least two
// agents have a mean slowdown, in panel order; none when d has no flows
// (HasFlows). Agents are ranked by mean slowdown (ties: sorted label
// order).
func FlowGlance(d *Data) []FlowGlanceRow {
	if !d.HasFlows() {
		return nil
	}
	agents := d.Agents()
	byPanel := map[Panel][]Run{}
	for _, r := range d.Runs {
		p := Panel{r.Topology, r.Load, r.Failure}
		byPanel[p] = append(byPanel[p], r)
	}
	var out []FlowGlanceRow
	for _, row := range cellTable(d, results.Runs.Index("slowdown_mean")) {
		var ranked []int
		for j, e := range row.Est {
			if !math.IsNaN(e.Mean) {
				ranked = append(ranked, j)
			}
		}
		if len(ranked) < 2 {
			continue
		}
		slices.SortStableFunc(ranked, func(a, b int) int { return cmp.Compare(row.Est[a].Mean, row.Est[b].Mean) })
		b, s := ranked[0], ranked[1]
		sub := &Data{Dir: d.Dir, Experiment: d.Experiment, Runs: byPanel[row.Panel]}
		cs, err := Compare(sub, agents[b], agents[s], FlowGlanceMetrics...)
		if err != nil {
			continue // the two never shared a replicate index
		}
		out = append(out, FlowGlanceRow{Panel: row.Panel, Best: agents[b], Second: agents[s],
			BestSlowdown: row.Est[b], SecondSlowdown: row.Est[s], Diffs: cs})
	}
	// one family per metric: the table's tests of it (Holm 1979)
	for mi := range FlowGlanceMetrics {
		diffs := make([]Comparison, len(out))
		for i := range out {
			diffs[i] = out[i].Diffs[mi]
		}
		adjustHolm(diffs, func(*Comparison) bool { return true })
		for i := range out {
			out[i].Diffs[mi] = diffs[i]
			out[i].Diffs[mi].Verdict = verdict(&out[i].Diffs[mi])
		}
	}
	return out
}
