package report

import (
	"errors"
	"math"
	"slices"
	"strings"
	"testing"

	"hoplore/internal/inputerr"
	"hoplore/stats"
)

// flowData is three agents' runs with flow traffic in two panels, four
// replicates each: slowdowns in the order fast < mid < slow in panel
// "a" and mid < fast < slow in panel "b" (a fixed pattern plus a replicate
// term, so differences have spread).
func flowData() *Data {
	d := &Data{Dir: "flows", Experiment: "flows"}
	base := map[string]map[string]float64{
		"a": {"fast": 1.5, "mid": 2.0, "slow": 4.0},
		"b": {"fast": 2.5, "mid": 2.2, "slow": 5.0},
	}
	for _, topo := range []string{"a", "b"} {
		for _, ag := range []string{"slow", "fast", "mid"} {
			for rep := range 4 {
				sd := base[topo][ag] + 0.1*float64(rep*rep%3) + 0.05*float64(len(ag)*rep%4)
				d.Runs = append(d.Runs, NewRun(Cell{Topology: topo, Agent: ag, Load: 0.5, Failure: "none"}, rep, map[string]float64{
					"delivery_mean_s": 0.01 * sd, "delivery_p95_s": 0.02 * sd, "loss_rate": 0,
					"flows_started": 100, "flows_failed": float64(rep + len(ag)), "slowdown_mean": sd, "slowdown_p99": 3 * sd,
					"fct_mean_s": 0.004 * sd, "fct_p99_s": 0.02 * sd, "fct_mice_mean_s": 0.001 * sd, "fct_elephant_mean_s": 0.5 * sd,
					"slowdown_mice_mean": sd, "slowdown_elephant_mean": sd / 2, "reordered_fraction": 0,
				}))
			}
		}
	}
	return d
}

// Compare tests the flow columns by default when the runs had flows, and
// only then; an unknown metric's error lists them.
func TestCompareFlowMetrics(t *testing.T) {
	d := flowData()
	rows, err := Compare(d, "fast", "slow")
	if err != nil {
		t.Fatal(err)
	}
	var got []string
	for _, r := range rows {
		if r.Topology == "a" {
			got = append(got, r.Metric)
		}
	}
	if want := append(slices.Clone(CompareMetrics), FlowCompareMetrics...); !slices.Equal(got, want) {
		t.Errorf("metrics %v, want %v", got, want)
	}
	for _, r := range rows {
		if r.N != 4 {
			t.Errorf("%s %s: %d pairs, want 4", r.Topology, r.Metric, r.N)
		}
	}
	// reordered_fraction is 0 everywhere: identical, no p-value
	for _, r := range rows {
		if r.Metric == "reordered_fraction" && (r.Note != NoteIdentical || !math.IsNaN(r.PT)) {
			t.Errorf("reordered_fraction: note %q, p %v; want %q and no p", r.Note, r.PT, NoteIdentical)
		}
	}
	// without flows (flows_started 0 in every run) only CompareMetrics
	rows, err = Compare(sleepData(), "drug-2", "drug-1")
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != len(CompareMetrics) {
		t.Errorf("no flows: %d rows, want %d", len(rows), len(CompareMetrics))
	}
	_, err = Compare(d, "fast", "slow", "fct_mean")
	if err == nil || !errors.Is(err, inputerr.ErrBadInput) {
		t.Fatalf("unknown metric: got %v, want an input error", err)
	}
	for _, m := range FlowCompareMetrics {
		if !strings.Contains(err.Error(), m) {
			t.Errorf("the unknown metric's error does not list %s: %v", m, err)
		}
	}
}

// FlowGlance ranks agents by mean slowdown per panel, compares the two
// lowest as Compare does, and adjusts each metric's p-values by Holm
// across the table's rows.
func TestFlowGlance(t *testing.T) {
	d := flowData()
	rows := FlowGlance(d)
	if len(rows) != 2 {
		t.Fatalf("%d rows, want 2", len(rows))
	}
	want := map[string][2]string{"a": {"fast", "mid"}, "b": {"mid", "fast"}}
	for mi, m := range FlowGlanceMetrics {
		var pt []float64
		for _, g := range rows {
			pt = append(pt, g.Diffs[mi].PT)
		}
		holm := stats.Holm(pt)
		for i, g := range rows {
			if w := want[g.Topology]; g.Best != w[0] || g.Second != w[1] {
				t.Fatalf("%s: best %s, runner-up %s; want %v", g.Topology, g.Best, g.Second, w)
			}
			cs, err := Compare(d, g.Best, g.Second, m)
			if err != nil {
				t.Fatal(err)
			}
			for _, c := range cs {
				if c.Topology != g.Topology {
					continue
				}
				c.PTHolm, c.PWHolm, c.Verdict = g.Diffs[mi].PTHolm, g.Diffs[mi].PWHolm, g.Diffs[mi].Verdict
				if !sameComparison(c, g.Diffs[mi]) {
					t.Errorf("%s %s: glance %+v, Compare %+v", g.Topology, m, g.Diffs[mi], c)
				}
			}
			if !sameFloat(g.Diffs[mi].PTHolm, holm[i]) {
				t.Errorf("%s %s: adjusted p %v, want Holm over the table %v", g.Topology, m, g.Diffs[mi].PTHolm, holm[i])
			}
		}
	}
	for _, g := range rows {
		if g.Diffs[0].MeanDiff >= 0 || g.BestSlowdown.Mean >= g.SecondSlowdown.Mean {
			t.Errorf("%s: slowdown difference %v, means %v and %v", g.Topology, g.Diffs[0].MeanDiff, g.BestSlowdown.Mean, g.SecondSlowdown.Mean)
		}
	}
	if FlowGlance(sleepData()) != nil {
		t.Error("runs without flows have a flows-at-a-glance table")
	}
}
