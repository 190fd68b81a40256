package report

import (
	"bytes"
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
// term, so differences have spread); of 100 flows each run fails a few,
// as many for every agent (the shares completed are equal).
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
				failed := float64(rep + 1)
				d.Runs = append(d.Runs, NewRun(Cell{Topology: topo, Agent: ag, Load: 0.5, Failure: "none"}, rep, map[string]float64{
					"delivery_mean_s": 0.01 * sd, "delivery_p95_s": 0.02 * sd, "loss_rate": 0,
					"flows_started": 100, "flows_completed": 100 - failed, "flows_failed": failed, "completed_share": (100 - failed) / 100, "slowdown_mean": sd, "slowdown_p99": 3 * sd,
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

// When no agent completes clearly fewer flows than another, FlowGlance
// ranks agents by mean slowdown per panel, compares the two lowest as
// Compare does, and adjusts each metric's p-values by Holm across the
// table's rows.
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
		if len(g.Excluded) > 0 {
			t.Errorf("%s: left out %+v, but no share completed differs clearly", g.Topology, g.Excluded)
		}
		if g.Diffs[1].MeanDiff >= 0 || g.BestSlowdown.Mean >= g.SecondSlowdown.Mean {
			t.Errorf("%s: slowdown difference %v, means %v and %v", g.Topology, g.Diffs[1].MeanDiff, g.BestSlowdown.Mean, g.SecondSlowdown.Mean)
		}
	}
	if FlowGlance(sleepData()) != nil {
		t.Error("runs without flows have a flows-at-a-glance table")
	}
}

// failingData is two agents' flow runs in two panels: "drops" completes
// about 80% of its flows, whose slowdown is low (1.5), and "keeps"
// completes all, a bit more slowed (2). In panel "many" (6 replicates)
// drops's shares vary little around 0.8; in panel "few" (3 replicates)
// they vary so much (0.55, 0.95, 0.9) that the replicates cannot tell
// 0.8 from 1.
func failingData() *Data {
	d := &Data{Dir: "failing", Experiment: "failing"}
	shares := map[string][]float64{"many": {0.78, 0.80, 0.82, 0.79, 0.81, 0.80}, "few": {0.55, 0.95, 0.90}}
	for _, topo := range []string{"few", "many"} {
		for rep, sh := range shares[topo] {
			for _, ag := range []string{"drops", "keeps"} {
				share, sd := sh, 1.5+0.02*float64(rep%3)
				if ag == "keeps" {
					share, sd = 1, 2+0.03*float64(rep%2)
				}
				completed := math.Round(1000 * share)
				d.Runs = append(d.Runs, NewRun(Cell{Topology: topo, Agent: ag, Load: 0.5, Failure: "none"}, rep, map[string]float64{
					"delivery_mean_s": 0.01, "delivery_p95_s": 0.02, "loss_rate": 1 - share,
					"flows_started": 1000, "flows_completed": completed, "flows_failed": 1000 - completed, "completed_share": completed / 1000,
					"slowdown_mean": sd, "fct_mean_s": 0.004 * sd, "fct_p99_s": 0.02 * sd,
				}))
			}
		}
	}
	return d
}

// An agent that completes 80% of its flows fast is not named least slowed
// ahead of one that completes all a bit slower: with replicates enough to
// show it completes fewer it is left out of the slowdown ranking; with too
// few, it may be named, and the verdict says it completes fewer flows.
func TestFlowGlanceCountsFailures(t *testing.T) {
	d := failingData()
	rows := FlowGlance(d)
	if len(rows) != 2 {
		t.Fatalf("%d rows, want 2", len(rows))
	}
	// the completion tests against the leader: drops − keeps per panel,
	// Holm across the two panels as Compare adjusts them
	want, err := Compare(d, "drops", "keeps", "completed_share")
	if err != nil {
		t.Fatal(err)
	}
	byTopo := map[string]Comparison{}
	for _, c := range want {
		byTopo[c.Topology] = c
	}
	r := &Report{Data: d, FlowGlance: rows}
	views, _ := r.flowGlanceView()
	for i, g := range rows {
		if g.Leader != "keeps" || g.LeaderShare.Mean != 1 {
			t.Errorf("%s: leader %s (%v), want keeps completing all", g.Topology, g.Leader, g.LeaderShare.Mean)
		}
		c := byTopo[g.Topology]
		v := views[i]
		switch g.Topology {
		case "many":
			// completes clearly fewer: p far below the level, left out
			if !clearlyLower(&c) {
				t.Fatalf("many: drops − keeps %+v: not clearly lower", c)
			}
			if g.Best != "keeps" || g.Second != "drops" {
				t.Errorf("many: best %s, runner-up %s; want keeps, drops", g.Best, g.Second)
			}
			if len(g.Excluded) != 1 || g.Excluded[0].AgentA != "drops" || !sameFloat(g.Excluded[0].PTHolm, c.PTHolm) {
				t.Errorf("many: left out %+v, want drops as Compare tests it (%+v)", g.Excluded, c)
			}
			if !strings.Contains(v.Excluded, "drops (80%)") {
				t.Errorf("many: left-out column %q does not name drops and its share", v.Excluded)
			}
			// least slowed − runner-up: +20 points completed, slowdown higher
			if sh := g.Diffs[0]; !(sh.MeanDiff > 0.19 && sh.MeanDiff < 0.21) || g.Diffs[1].MeanDiff <= 0 {
				t.Errorf("many: differences completed %v, slowdown %v", sh.MeanDiff, g.Diffs[1].MeanDiff)
			}
			if v.Caveat || strings.Contains(v.Verdict, "less slowed") {
				t.Errorf("many: verdict %q", v.Verdict)
			}
		case "few":
			// drops's lower share is not established: it ranks on
			// slowdown, and the row says what it fails
			if clearlyLower(&c) || !(c.PTHolm >= Alpha) {
				t.Fatalf("few: drops − keeps %+v: clearly lower with 3 scattered replicates", c)
			}
			if g.Best != "drops" || g.Second != "keeps" || len(g.Excluded) != 0 {
				t.Fatalf("few: best %s, runner-up %s, left out %+v; want drops, keeps, none", g.Best, g.Second, g.Excluded)
			}
			if !g.FewerFlows() || !sameFloat(g.BestVsLeader.PTHolm, c.PTHolm) {
				t.Errorf("few: FewerFlows %v, against the leader %+v, want %+v", g.FewerFlows(), g.BestVsLeader, c)
			}
			if !v.Caveat || v.Clear || !strings.Contains(v.Verdict, "but completes fewer flows than keeps (80% against 100%") {
				t.Errorf("few: verdict %q (caveat %v, clear %v) does not say drops completes 80%% of flows against 100%%", v.Verdict, v.Caveat, v.Clear)
			}
			if !strings.HasPrefix(v.BestShare, "80 ± ") || v.SecondShare != "100" {
				t.Errorf("few: completed shares shown as %q and %q, want 80 ± … and 100", v.BestShare, v.SecondShare)
			}
		}
	}
	// the charts of completion times and slowdowns ring the cells left out
	ringed := fewerCompleted(d, "completed_share", "slowdown_mean")
	if want := (Cell{"many", "drops", 0.5, "none"}); len(ringed) != 1 || !ringed[want] {
		t.Errorf("ringed cells %v, want only %v", ringed, want)
	}
	// the page's cell tables of completion times and slowdowns carry the
	// share completed, their charts say completed flows only
	rep, err := Build(d, Options{})
	if err != nil {
		t.Fatal(err)
	}
	var page bytes.Buffer
	if err := rep.HTML(&page); err != nil {
		t.Fatal(err)
	}
	for _, w := range []string{"<b>keeps</b>", "drops (80%)", "<b>drops</b>", "but completes fewer flows than keeps (80% against 100%"} {
		if !strings.Contains(page.String(), w) {
			t.Errorf("the page lacks %q", w)
		}
	}
	for _, c := range rep.charts {
		if c.ID == "slowdown-mean" && (!strings.Contains(c.Title, "completed flows only") || !strings.Contains(c.Caption, "A ring marks")) {
			t.Errorf("slowdown chart: title %q, caption %q", c.Title, c.Caption)
		}
	}
	found := false
	for _, tab := range rep.tables {
		if tab.ID != "table-slowdown-mean" {
			continue
		}
		found = true
		if tab.Share != "flows" {
			t.Errorf("slowdown table: share %q", tab.Share)
		}
		for _, row := range tab.Rows {
			if txt := row.Cells[0].Text; !strings.HasSuffix(txt, "(80% completed)") {
				t.Errorf("%s: drops's slowdown cell %q lacks its share completed", row.Topology, txt)
			}
			if txt := row.Cells[1].Text; strings.Contains(txt, "completed") {
				t.Errorf("%s: keeps's slowdown cell %q: a share of 100%% needs no mention", row.Topology, txt)
			}
		}
	}
	if !found {
		var ids []string
		for _, tab := range rep.tables {
			ids = append(ids, tab.ID)
		}
		t.Errorf("no slowdown table among %v", ids)
	}
}

// A share completed is never shown as 100% unless every flow completed.
func TestShareText(t *testing.T) {
	for _, c := range []struct {
		m    float64
		want string
	}{{1, "100"}, {0.839, "83.9"}, {0.9995, "99.95"}, {0.99996, "99.996"}, {0.5, "50"}} {
		if got := shareText(c.m); got != c.want {
			t.Errorf("shareText(%v) = %q, want %q", c.m, got, c.want)
		}
	}
}
