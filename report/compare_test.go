package report

import (
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/parquet-go/parquet-go"

	"hoplore/internal/inputerr"
	"hoplore/results"
	"hoplore/stats"
)

// Drug 1 and drug 2 hours of additional sleep for ten patients, Student
// (1908) after Cushny & Peebles; their differences are sleepDiffs.
var (
	sleepDrug1 = []float64{0.7, -1.6, -0.2, -1.2, -0.1, 3.4, 3.7, 0.8, 0.0, 2.0}
	sleepDrug2 = []float64{1.9, 0.8, 1.1, 0.1, -0.1, 4.4, 5.5, 1.6, 4.6, 3.4}
)

// sleepData holds the sleep table as two agents' runs, replicate i being
// patient i, in a scrambled row order.
func sleepData() *Data {
	d := &Data{Dir: "sleep", Experiment: "sleep"}
	for k := range 10 {
		i := (k * 7) % 10 // scramble: pairing must go by replicate, not row
		for _, ag := range []struct {
			name string
			v    float64
		}{{"drug-2", sleepDrug2[i]}, {"drug-1", sleepDrug1[i]}} {
			d.Runs = append(d.Runs, NewRun(Cell{Topology: "ward", Agent: ag.name, Load: 1, Failure: "none"}, i,
				map[string]float64{"delivery_mean_s": ag.v, "delivery_p95_s": ag.v, "loss_rate": ag.v}))
		}
	}
	return d
}

func TestCompareStudentSleep(t *testing.T) {
	rows, err := Compare(sleepData(), "drug-2", "drug-1")
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != len(CompareMetrics) {
		t.Fatalf("got %d rows, want %d", len(rows), len(CompareMetrics))
	}
	for _, r := range rows {
		// Student (1908): mean difference 1.58; t = 4.06 on 9 degrees of
		// freedom, p = 0.0028 (see TestPairedTStudentSleep); Wilcoxon exact
		// p = 2/512 (computed by hand, see TestWilcoxonHandWorked).
		if r.N != 10 || math.Round(r.MeanDiff*100)/100 != 1.58 || math.Round(r.T*100)/100 != 4.06 ||
			r.DF != 9 || math.Round(r.PT*1e4)/1e4 != 0.0028 || r.PW != 2.0/512 || r.NW != 9 || r.WMethod != "exact" {
			t.Errorf("%s: got %+v", r.Metric, r)
		}
		if math.Round(r.MeanA*100)/100 != 2.33 || math.Round(r.MeanB*100)/100 != 0.75 {
			t.Errorf("%s: means %v, %v; want 2.33, 0.75 (Student 1908)", r.Metric, r.MeanA, r.MeanB)
		}
		if !close(r.CI95Low, r.MeanDiff-r.CI95) || !close(r.CI95High, r.MeanDiff+r.CI95) {
			t.Errorf("%s: interval [%v, %v] not mean ± %v", r.Metric, r.CI95Low, r.CI95High, r.CI95)
		}
	}
	// reversed roles: the difference and t change sign, p does not
	rev, err := Compare(sleepData(), "drug-1", "drug-2")
	if err != nil {
		t.Fatal(err)
	}
	if !close(rev[0].MeanDiff, -rows[0].MeanDiff) || !close(rev[0].T, -rows[0].T) || !close(rev[0].PT, rows[0].PT) || !close(rev[0].PW, rows[0].PW) {
		t.Errorf("reversed: got %+v", rev[0])
	}
}

func TestComparePairsByReplicate(t *testing.T) {
	d := sleepData()
	// drop drug-1's replicate 4 (the zero difference) and null drug-2's
	// delivery_p95 in replicate 0: those pairs must be left out
	var runs []Run
	for _, r := range d.Runs {
		if r.Agent == "drug-1" && r.Replicate == 4 {
			continue
		}
		if r.Agent == "drug-2" && r.Replicate == 0 {
			r.Values = slices.Clone(r.Values)
			r.Values[results.Runs.Index("delivery_p95_s")] = math.NaN()
		}
		runs = append(runs, r)
	}
	d.Runs = runs
	rows, err := Compare(d, "drug-2", "drug-1")
	if err != nil {
		t.Fatal(err)
	}
	want := map[string][]float64{
		"delivery_mean_s": {1.2, 2.4, 1.3, 1.3, 1.0, 1.8, 0.8, 4.6, 1.4},
		"delivery_p95_s":  {2.4, 1.3, 1.3, 1.0, 1.8, 0.8, 4.6, 1.4},
	}
	for _, r := range rows[:2] {
		p := PairedTTest(want[r.Metric])
		if int(r.N) != len(want[r.Metric]) || !close(r.MeanDiff, p.MeanDiff) || !close(r.PT, p.P) {
			t.Errorf("%s: got n=%d diff=%v p=%v, want n=%d diff=%v p=%v", r.Metric, r.N, r.MeanDiff, r.PT, len(want[r.Metric]), p.MeanDiff, p.P)
		}
	}
}

func TestCompareErrors(t *testing.T) {
	d := sleepData()
	for _, tc := range []struct{ a, b, want string }{
		{"drug-3", "drug-1", `no agent "drug-3" in sleep; its agents are "drug-1", "drug-2"`},
		{"drug-3", "drug-4", `no agent "drug-3" or "drug-4"`},
		{"drug-1", "drug-1", `both "drug-1": compare two different agents of sleep ("drug-1", "drug-2")`},
	} {
		_, err := Compare(d, tc.a, tc.b)
		if err == nil || !strings.Contains(err.Error(), tc.want) || !errors.Is(err, inputerr.ErrBadInput) {
			t.Errorf("Compare(%q, %q): got %v, want an input error naming %q", tc.a, tc.b, err, tc.want)
		}
	}
	// agents that never share a cell
	d.Runs = append(d.Runs, Run{Cell: Cell{Topology: "clinic", Agent: "drug-3", Load: 1, Failure: "none"}})
	if _, err := Compare(d, "drug-3", "drug-1"); err == nil {
		t.Error("agents without a common cell: no error")
	}
}

func TestWriteComparisonsRoundTrip(t *testing.T) {
	rows, err := Compare(sleepData(), "drug-2", "drug-1")
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	path := filepath.Join(dir, "compare.parquet")
	meta := results.Meta{Version: "v-test", Experiment: "sleep", ExperimentHash: "abc123"}
	if err := WriteComparisons(path, rows, meta); err != nil {
		t.Fatal(err)
	}
	// the same key-value metadata as every result table
	if got, err := results.ReadMeta(path); err != nil || got != meta {
		t.Errorf("metadata: got %+v (%v), want %+v", got, err, meta)
	}
	// read back through the column reader (not the typed writer's struct)
	tb, err := readTable(path, []string{"experiment", "topology", "load", "failure", "agent_a", "agent_b", "metric", "n",
		"mean_a", "mean_b", "mean_diff", "rel_diff", "ci95", "ci95_low", "ci95_high", "t", "df", "p_t", "p_t_holm", "w_plus", "n_wilcoxon",
		"p_wilcoxon", "p_wilcoxon_holm", "wilcoxon_method", "note", "verdict"}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if tb.rows != len(rows) {
		t.Fatalf("got %d rows, want %d", tb.rows, len(rows))
	}
	for i, r := range rows {
		if tb.s("metric", i) != r.Metric || tb.f("p_t", i) != r.PT || tb.f("mean_diff", i) != r.MeanDiff ||
			tb.s("agent_a", i) != "drug-2" || tb.s("wilcoxon_method", i) != "exact" || tb.f("n", i) != 10 {
			t.Errorf("row %d differs from what was written", i)
		}
	}
	// the file is complete Parquet that parquet-go opens, and nothing else
	// is left in the folder
	f, _ := os.Open(path)
	st, _ := f.Stat()
	if _, err := parquet.OpenFile(f, st.Size()); err != nil {
		t.Error(err)
	}
	f.Close()
	entries, _ := os.ReadDir(dir)
	if len(entries) != 1 {
		t.Errorf("folder holds %d entries, want 1", len(entries))
	}
	// a failing write leaves the previous file untouched
	if err := WriteComparisons(filepath.Join(dir, "missing", "compare.parquet"), rows, meta); err == nil {
		t.Error("write into a missing folder: no error")
	}
}

// compare.parquet never holds NaN: a statistic that does not exist (here:
// no test from two pairs) is null.
func TestWriteComparisonsNull(t *testing.T) {
	d := sleepData()
	var runs []Run
	for _, r := range d.Runs {
		if r.Replicate < 2 {
			runs = append(runs, r)
		}
	}
	d.Runs = runs
	rows, err := Compare(d, "drug-2", "drug-1")
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(t.TempDir(), "compare.parquet")
	if err := WriteComparisons(path, rows, results.Meta{Experiment: "sleep"}); err != nil {
		t.Fatal(err)
	}
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	st, _ := f.Stat()
	pf, err := parquet.OpenFile(f, st.Size())
	if err != nil {
		t.Fatal(err)
	}
	cols := pf.Schema().Columns()
	name := func(v parquet.Value) string { return strings.Join(cols[v.Column()], ".") }
	buf := make([]parquet.Row, pf.NumRows())
	rr := pf.RowGroups()[0].Rows()
	n, _ := rr.ReadRows(buf)
	rr.Close()
	if n != len(rows) {
		t.Fatalf("read %d rows, want %d", n, len(rows))
	}
	for i, row := range buf[:n] {
		get := map[string]parquet.Value{}
		for _, v := range row {
			get[name(v)] = v
			if v.Kind() == parquet.Double && (math.IsNaN(v.Double()) || math.IsInf(v.Double(), 0)) {
				t.Errorf("row %d: %s = %v, want null", i, name(v), v.Double())
			}
		}
		if !get["p_t"].IsNull() || !get["ci95"].IsNull() || !get["p_t_holm"].IsNull() ||
			string(get["note"].ByteArray()) != NoteFewPairs || string(get["verdict"].ByteArray()) != VerdictUntested {
			t.Errorf("row %d: p_t %v, ci95 %v, p_t_holm %v, note %v, verdict %v; want nulls, %q, %q", i, get["p_t"], get["ci95"], get["p_t_holm"], get["note"], get["verdict"], NoteFewPairs, VerdictUntested)
		}
		if get["mean_diff"].IsNull() {
			t.Errorf("row %d: mean_diff null, want the mean of the two differences", i)
		}
	}
}

// No interval or p-value from fewer than 3 pairs or from differences
// without spread; the note says why.
func TestCompareUntested(t *testing.T) {
	mk := func(a, b []float64) *Data {
		d := &Data{Dir: "x", Experiment: "x"}
		for i := range a {
			d.Runs = append(d.Runs,
				NewRun(Cell{Topology: "ring", Agent: "a", Load: 1, Failure: "none"}, i, map[string]float64{"delivery_mean_s": a[i]}),
				NewRun(Cell{Topology: "ring", Agent: "b", Load: 1, Failure: "none"}, i, map[string]float64{"delivery_mean_s": b[i]}))
		}
		return d
	}
	for _, tc := range []struct {
		name     string
		a, b     []float64
		note     string
		meanDiff float64
	}{
		{"two pairs", []float64{1, 2}, []float64{3, 5}, NoteFewPairs, -2.5},
		{"identical", []float64{1, 2, 3}, []float64{1, 2, 3}, NoteIdentical, 0},
		{"constant difference", []float64{1, 2, 3}, []float64{2, 3, 4}, NoteConstant, -1},
	} {
		t.Run(tc.name, func(t *testing.T) {
			rows, err := Compare(mk(tc.a, tc.b), "a", "b", "delivery_mean_s")
			if err != nil {
				t.Fatal(err)
			}
			c := rows[0]
			if c.Note != tc.note || c.Verdict != VerdictUntested || c.MeanDiff != tc.meanDiff ||
				!math.IsNaN(c.PT) || !math.IsNaN(c.CI95) || !math.IsNaN(c.PW) || !math.IsNaN(c.PTHolm) {
				t.Errorf("got %+v, want note %q, mean difference %v and no test", c, tc.note, tc.meanDiff)
			}
		})
	}
}

// Holm's adjustment runs across the cells of one comparison, per metric:
// three cells of the sleep data at different loads, the third with a
// smaller effect, give p-values whose adjustment is stats.Holm's.
func TestCompareHolmAcrossCells(t *testing.T) {
	d := &Data{Dir: "sleep", Experiment: "sleep"}
	for li, shift := range []float64{0, 0, 1.2} {
		for i := range sleepDrug1 {
			load := float64(li + 1)
			d.Runs = append(d.Runs,
				NewRun(Cell{Topology: "ward", Agent: "drug-2", Load: load, Failure: "none"}, i, map[string]float64{"delivery_mean_s": sleepDrug2[i] - shift, "loss_rate": sleepDrug2[i]}),
				NewRun(Cell{Topology: "ward", Agent: "drug-1", Load: load, Failure: "none"}, i, map[string]float64{"delivery_mean_s": sleepDrug1[i], "loss_rate": sleepDrug1[i]}))
		}
	}
	rows, err := Compare(d, "drug-2", "drug-1", "delivery_mean_s", "loss_rate")
	if err != nil {
		t.Fatal(err)
	}
	for _, m := range []string{"delivery_mean_s", "loss_rate"} {
		var pt, pw, gt, gw []float64
		for _, r := range rows {
			if r.Metric == m {
				pt, pw, gt, gw = append(pt, r.PT), append(pw, r.PW), append(gt, r.PTHolm), append(gw, r.PWHolm)
			}
		}
		wt, ww := stats.Holm(pt), stats.Holm(pw)
		for i := range gt {
			if gt[i] != wt[i] || gw[i] != ww[i] || gt[i] < pt[i] {
				t.Errorf("%s cell %d: adjusted %v, %v; want %v, %v (raw %v, %v)", m, i, gt[i], gw[i], wt[i], ww[i], pt[i], pw[i])
			}
		}
	}
	// Student's sleep data: raw p = 0.0028 in cells 1 and 2, adjusted 3·0.0028;
	// verdicts follow the adjusted value
	if r := rows[0]; math.Abs(r.PTHolm-3*r.PT) > 1e-12 || r.Verdict != VerdictHigher || math.Abs(r.RelDiff-1.58/0.75) > 1e-12 {
		t.Errorf("cell 1: got p %v, adjusted %v, verdict %q, relative %v; want adjusted 3p, %q, 1.58/0.75", r.PT, r.PTHolm, r.Verdict, r.RelDiff, VerdictHigher)
	}
}

func TestCompareFlagsUnpairedSeeds(t *testing.T) {
	d := sleepData()
	for i := range d.Runs {
		if d.Runs[i].Agent == "drug-1" && d.Runs[i].Replicate == 3 {
			d.Runs[i].Seed = 99
		}
	}
	rows, err := Compare(d, "drug-2", "drug-1")
	if err != nil {
		t.Fatal(err)
	}
	var b strings.Builder
	if err := PrintComparisons(&b, rows); err != nil {
		t.Fatal(err)
	}
	if rows[0].SameSeeds || !strings.Contains(b.String(), "warning: in 3 of 3 rows the paired runs had different seeds") {
		t.Errorf("different seeds not flagged: SameSeeds=%v, output:\n%s", rows[0].SameSeeds, b.String())
	}
	rows, _ = Compare(sleepData(), "drug-2", "drug-1")
	if !rows[0].SameSeeds {
		t.Error("equal seeds flagged as different")
	}
}

// sameComparison compares field by field, NaN equal to NaN.
func sameComparison(a, b Comparison) bool {
	fa, fb := []float64{a.MeanA, a.MeanB, a.MeanDiff, a.RelDiff, a.CI95, a.CI95Low, a.CI95High, a.T, a.DF, a.PT, a.PTHolm, a.WPlus, a.PW, a.PWHolm},
		[]float64{b.MeanA, b.MeanB, b.MeanDiff, b.RelDiff, b.CI95, b.CI95Low, b.CI95High, b.T, b.DF, b.PT, b.PTHolm, b.WPlus, b.PW, b.PWHolm}
	for i := range fa {
		if !(fa[i] == fb[i] || math.IsNaN(fa[i]) && math.IsNaN(fb[i])) {
			return false
		}
	}
	a.MeanA, a.MeanB, a.MeanDiff, a.RelDiff, a.CI95, a.CI95Low, a.CI95High, a.T, a.DF, a.PT, a.PTHolm, a.WPlus, a.PW, a.PWHolm = 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0
	b.MeanA, b.MeanB, b.MeanDiff, b.RelDiff, b.CI95, b.CI95Low, b.CI95High, b.T, b.DF, b.PT, b.PTHolm, b.WPlus, b.PW, b.PWHolm = 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0
	return a == b
}

func TestGlance(t *testing.T) {
	d, _ := loadSynthetic(t, demoSpec)
	rows := Glance(d)
	if want := len(demoSpec.topologies) * len(demoSpec.failures) * len(demoSpec.loads); len(rows) != want {
		t.Fatalf("got %d rows, want %d", len(rows), want)
	}
	table, err := CellTable(d, "delivery_mean_s")
	if err != nil {
		t.Fatal(err)
	}
	agents := d.Agents()
	var pt []float64
	for _, g := range rows {
		pt = append(pt, g.Diff.PT)
	}
	holm := stats.Holm(pt) // one family: the table's tests
	for i, g := range rows {
		// best and runner-up are the two lowest means of the cell table
		var means []float64
		for _, e := range table[i].Est {
			means = append(means, e.Mean)
		}
		sorted := append([]float64(nil), means...)
		slices.Sort(sorted)
		if g.BestMean.Mean != sorted[0] || g.SecondMean.Mean != sorted[1] || g.Best == g.Second ||
			means[slices.Index(agents, g.Best)] != sorted[0] {
			t.Errorf("%+v: best %s (%v), second %s (%v); cell means %v", g.Panel, g.Best, g.BestMean.Mean, g.Second, g.SecondMean.Mean, means)
		}
		// the difference is Compare's, for that panel
		all, err := Compare(d, g.Best, g.Second)
		if err != nil {
			t.Fatal(err)
		}
		found := false
		for _, c := range all {
			if c.Metric == "delivery_mean_s" && c.Topology == g.Topology && c.Load == g.Load && c.Failure == g.Failure {
				found = true
				// the same test; the adjustment is across the table's rows
				c.PTHolm, c.PWHolm, c.Verdict = g.Diff.PTHolm, g.Diff.PWHolm, g.Diff.Verdict
				if !sameComparison(c, g.Diff) {
					t.Errorf("%+v: glance diff %+v, Compare %+v", g.Panel, g.Diff, c)
				}
				if !sameFloat(g.Diff.PTHolm, holm[i]) {
					t.Errorf("%+v: adjusted p %v, want Holm over the table %v", g.Panel, g.Diff.PTHolm, holm[i])
				}
			}
		}
		if !found || g.Diff.MeanDiff > 0 {
			t.Errorf("%+v: comparison found=%v, mean difference %v (best minus runner-up must be ≤ 0)", g.Panel, found, g.Diff.MeanDiff)
		}
	}
}

// An unknown metric is an input error that lists the metrics there are;
// any numeric runs.parquet column can be compared.
func TestCompareMetricNames(t *testing.T) {
	d := sleepData()
	for _, name := range []string{"delivery_mean", "version"} {
		_, err := Compare(d, "drug-2", "drug-1", name)
		if err == nil || !errors.Is(err, inputerr.ErrBadInput) || !strings.Contains(err.Error(), "known: ") || !strings.Contains(err.Error(), "delivery_mean_s") {
			t.Errorf("metric %q: got %v, want an input error listing the known metrics", name, err)
		}
		if _, err := LoadCurves(d, name); err == nil || !errors.Is(err, inputerr.ErrBadInput) {
			t.Errorf("LoadCurves(%q): got %v, want an input error", name, err)
		}
		if _, err := CellTable(d, name); err == nil || !errors.Is(err, inputerr.ErrBadInput) {
			t.Errorf("CellTable(%q): got %v, want an input error", name, err)
		}
	}
	// a column the runs do not hold compares nothing: n = 0, no p-value
	rows, err := Compare(d, "drug-2", "drug-1", "hops_mean", "delivery_mean_s")
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != 2 || rows[0].Metric != "hops_mean" || rows[0].N != 0 || !math.IsNaN(rows[0].PT) || rows[1].N != 10 {
		t.Errorf("got %+v", rows)
	}
}

// TestGlanceOptimum: the glance rows carry the intact model optimum of
// their topology and load as the runs hold it, and are measured against
// the per-state reference from optimum.parquet: without failures the
// intact optimum; with c–d cut for 150 s of the 600 s window, the optimum
// of each state weighted by its time and routable share (worked out here
// from the synthetic values), and the cut's unroutable share as the
// optimum's own loss. Beyond a state's load limit nothing is claimed, and
// the reason is given; the loss chart's reference line stops at the limit.
func TestGlanceOptimum(t *testing.T) {
	d, _ := loadSynthetic(t, demoSpec)
	rows := Glance(d)
	if len(rows) != 16 {
		t.Fatalf("%d glance rows, want 16", len(rows))
	}
	for _, g := range rows {
		ti := slices.Index(demoSpec.topologies, g.Topology)
		optUtil := synOptUtil(g.Load, ti)
		if !close(g.Optimum.LoadLimit, g.Load/optUtil) {
			t.Errorf("%+v: load limit %v, want %v", g.Panel, g.Optimum.LoadLimit, g.Load/optUtil)
		}
		var want, wantLoss float64
		wantWhy := ""
		switch {
		case optUtil >= 1:
			want, wantLoss, wantWhy = math.NaN(), math.NaN(), "over the load limit"
		case g.Failure == "none":
			want = *synOptDelay(optUtil)
		case synCutFactor*optUtil >= 1:
			want, wantLoss, wantWhy = math.NaN(), math.NaN(), "over the load limit with c–d down"
		default:
			// 450 s intact, 150 s cut of which 96% routable
			w := 150 * (1 - synCutUnroutable)
			want = (450**synOptDelay(optUtil) + w**synOptDelay(synCutFactor * optUtil)) / (450 + w)
			wantLoss = 150 * synCutUnroutable / 600
		}
		same := func(a, b float64) bool { return close(a, b) || math.IsNaN(a) && math.IsNaN(b) }
		if !same(g.Ref.DelayMean, want) || !same(g.Ref.Loss, wantLoss) || !strings.HasPrefix(g.Ref.Why, wantWhy) || (wantWhy == "") != (g.Ref.Why == "") {
			t.Errorf("%+v: reference %+v, want delay %v, loss %v, why %q", g.Panel, g.Ref, want, wantLoss, wantWhy)
		}
		if !same(g.DelayRatio(g.SecondMean.Mean), g.SecondMean.Mean/want) || !same(g.ExtraLoss(g.BestLoss.Mean), g.BestLoss.Mean-wantLoss) {
			t.Errorf("%+v: ratio %v, extra loss %v", g.Panel, g.DelayRatio(g.SecondMean.Mean), g.ExtraLoss(g.BestLoss.Mean))
		}
		wantOver := "intact"
		if g.Failure == "cut" {
			wantOver = "intact 75%, c–d down 25%"
		}
		if got := g.Ref.String(); got != wantOver {
			t.Errorf("%+v: optimum over %q, want %q", g.Panel, got, wantOver)
		}
	}
	// the charts draw the same reference per panel: delivery time and loss
	// where the table gives them, the limit of the worst state
	mean, loss := optimumRefs(d, "delivery_mean_s"), optimumRefs(d, "loss_rate")
	for _, g := range rows {
		k := refKey{g.Topology, g.Failure}
		wantLimit := g.Optimum.LoadLimit
		if g.Failure == "cut" {
			wantLimit /= synCutFactor
		}
		if !close(mean[k].limit, wantLimit) || !close(loss[k].limit, wantLimit) {
			t.Errorf("%+v: chart limits %v, %v; want %v", k, mean[k].limit, loss[k].limit, wantLimit)
		}
		for _, c := range []struct {
			ref  optimumRef
			want float64
		}{{mean[k], g.Ref.DelayMean}, {loss[k], g.Ref.Loss}} {
			i := slices.IndexFunc(c.ref.line, func(p Point) bool { return p.X == g.Load })
			if math.IsNaN(c.want) != (i < 0) || i >= 0 && !close(c.ref.line[i].Est.Mean, c.want) {
				t.Errorf("%+v at load %v: chart reference %+v, want %v", k, g.Load, c.ref.line, c.want)
			}
		}
	}
	if refs := optimumRefs(d, "throughput_bps"); refs != nil {
		t.Errorf("throughput chart got optimum references %v", refs)
	}
}

// The report reads result tables only by the names the results schema
// declares; any other name is a programming mistake.
func TestReadResultNamesFromSchema(t *testing.T) {
	defer func() {
		if r := recover(); r == nil || !strings.Contains(fmt.Sprint(r), `no column "delivery_avg_s"`) {
			t.Errorf("got panic %v, want one naming the undeclared column", r)
		}
	}()
	readResult(t.TempDir(), results.Series, []string{"topology", "delivery_avg_s"}, nil)
}

// TestBelowOptimum: the delivery chart's caption explains the model
// optimum only when some agent's mean lies below it at the same topology
// and load.
func TestBelowOptimum(t *testing.T) {
	refs := map[refKey]optimumRef{{"a", "none"}: {line: []Point{{X: 0.5, Est: estimateOf(0.010)}, {X: 1, Est: estimateOf(0.040)}}, limit: 1.2}}
	panel := func(topo string, pts ...Point) []LoadPanel {
		return []LoadPanel{{Topology: topo, Failure: "none", Curves: []Curve{{Agent: "x", Points: pts}}}}
	}
	for _, tc := range []struct {
		name   string
		panels []LoadPanel
		want   bool
	}{
		{"above everywhere", panel("a", Point{X: 0.5, Est: estimateOf(0.011)}, Point{X: 1, Est: estimateOf(0.041)}), false},
		{"equal", panel("a", Point{X: 1, Est: estimateOf(0.040)}), false},
		{"below near the limit", panel("a", Point{X: 0.5, Est: estimateOf(0.011)}, Point{X: 1, Est: estimateOf(0.030)}), true},
		{"below at a load without optimum", panel("a", Point{X: 1.5, Est: estimateOf(0.001)}), false},
		{"other topology", panel("b", Point{X: 1, Est: estimateOf(0.001)}), false},
	} {
		if got := belowOptimum(tc.panels, refs); got != tc.want {
			t.Errorf("%s: got %v, want %v", tc.name, got, tc.want)
		}
	}
	if belowOptimum(panel("a", Point{X: 1, Est: estimateOf(0.001)}), nil) {
		t.Error("no references: got true")
	}
}

// TestReference works the per-state reference out by hand: states clipped
// to the measured window [warm-up, duration), weighted by time and routable
// share for the delivery time, and by the demand sent for the loss (a down
// node's own demand is neither sent nor lost).
func TestReference(t *testing.T) {
	p := Panel{Topology: "t", Load: 0.5, Failure: "cut"}
	runs := []Run{NewRun(Cell{"t", "a", 0.5, "cut"}, 0, map[string]float64{"warmup_s": 100, "duration_s": 600})}
	st := func(start, end float64, down string, unroutable, unsent, delay, limit float64) OptimumState {
		return OptimumState{Topology: "t", Load: 0.5, Failure: "cut", Start: start, End: end, Down: down,
			Unroutable: unroutable, Unsent: unsent, DelayMean: delay, LoadLimit: limit, States: results.StatesAll}
	}
	nan := math.NaN()
	for _, c := range []struct {
		name        string
		p           Panel
		states      []OptimumState
		intact      Optimum
		delay, loss float64
		why, over   string
	}{
		{"clipped to the window", p, []OptimumState{st(0, 300, "", 0, 0, 0.010, 2), st(300, 450, "a-b", 0.1, 0.05, 0.020, 1), st(450, 600, "", 0, 0, 0.010, 2)}, Optimum{},
			// (350·10 + 150·0.9·20) / (350 + 150·0.9) ms; 150·0.05 / (350 + 150·0.95)
			6.2 / 485, 7.5 / 492.5, "", "intact 70%, a-b down 30%"},
		{"a state within the warm-up is left out", p, []OptimumState{st(0, 50, "x", 0, 0, nan, 0.4), st(50, 600, "", 0, 0, 0.010, 2)}, Optimum{},
			0.010, 0, "", "intact"},
		{"over the limit in a state", p, []OptimumState{st(0, 300, "", 0, 0, 0.010, 2), st(300, 600, "a-b", 0, 0, nan, 0.45)}, Optimum{},
			nan, nan, "over the load limit with a-b down (0.45)", "intact 40%, a-b down 60%"},
		{"a state with nothing routable", p, []OptimumState{st(0, 300, "", 0, 0, 0.010, 2), st(300, 600, "node g", 1, 0.5, nan, nan)}, Optimum{},
			// only the intact state delivers; 300·0.5 / (200 + 300·0.5)
			0.010, 150.0 / 350, "", "intact 40%, node g down 60%"},
		{"random failures", p, []OptimumState{{Topology: "t", Load: 0.5, Failure: "cut", End: 600, DelayMean: 0.01, LoadLimit: 2, States: results.StatesIntact}}, Optimum{},
			nan, nan, "random failures: states not solved", ""},
		{"failures without optimum.parquet", p, nil, Optimum{DelayMean: 0.01, LoadLimit: 2},
			nan, nan, "no per-state optimum: no optimum.parquet", ""},
		{"README example", p, []OptimumState{st(0, 300, "", 0, 0, 0.010, 2), st(300, 500, "c-d", 0.1, 0, 0.020, 1), st(500, 800, "", 0, 0, 0.010, 2)}, Optimum{},
			0.0123076923076923, 0.025, "", "intact 75%, c-d down 25%"},
		{"no failures, from the runs' columns", Panel{"t", 0.5, "none"}, nil, Optimum{DelayMean: 0.01, LoadLimit: 2},
			0.01, 0, "", "intact"},
	} {
		ref := reference(c.p, runs, c.states, c.intact)
		if c.name == "README example" {
			ref = reference(c.p, []Run{NewRun(Cell{"t", "a", 0.5, "cut"}, 0, map[string]float64{"warmup_s": 0, "duration_s": 800})}, c.states, c.intact)
		}
		same := func(a, b float64) bool { return close(a, b) || math.IsNaN(a) && math.IsNaN(b) }
		if !same(ref.DelayMean, c.delay) || !same(ref.Loss, c.loss) || ref.Why != c.why || (c.over != "" && ref.String() != c.over) {
			t.Errorf("%s: got %+v (%q), want delay %v, loss %v, why %q, over %q", c.name, ref, ref.String(), c.delay, c.loss, c.why, c.over)
		}
	}
}
