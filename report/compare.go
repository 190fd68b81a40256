package report

import (
	"cmp"
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"
	"text/tabwriter"

	"hoplore/internal/atomicfile"
	"hoplore/results"
	"hoplore/stats"
)

// CompareMetrics are the runs.parquet columns Compare tests when given
// none, in order: the charted columns of the results schema
// (results.Charted).
var CompareMetrics = chartedNames()

// FlowCompareMetrics are the runs.parquet columns of flow traffic that
// Compare tests after CompareMetrics when given none and some run of the
// folder had flows (flows_started > 0): the share of flows completed
// (which the completion times and slowdowns describe), completion time
// (mean, p99, mice, elephants), slowdown likewise, the reordered fraction
// and the failed flows (a count: paired runs share their seeds, so they
// start the same flows).
var FlowCompareMetrics = []string{"completed_share", "fct_mean_s", "fct_p99_s", "fct_mice_mean_s", "fct_elephant_mean_s",
	"slowdown_mean", "slowdown_p99", "slowdown_mice_mean", "slowdown_elephant_mean", "reordered_fraction", "flows_failed"}

// HasFlows reports whether some run of d had flow traffic (flows_started
// above 0).
func (d *Data) HasFlows() bool {
	k := results.Runs.Index("flows_started")
	for i := range d.Runs {
		if d.Runs[i].at(k) > 0 {
			return true
		}
	}
	return false
}

// DefaultMetrics returns what Compare tests when given no metric:
// CompareMetrics, then FlowCompareMetrics when d has flows (HasFlows).
func DefaultMetrics(d *Data) []string {
	if d.HasFlows() {
		return append(slices.Clone(CompareMetrics), FlowCompareMetrics...)
	}
	return CompareMetrics
}

func chartedNames() []string {
	var out []string
	for _, c := range results.Charted() {
		out = append(out, c.Name)
	}
	return out
}

// Comparison is one paired comparison of agents A and B in one panel
// (topology, load, failure) on one metric. Differences are A − B over the
// replicates both agents ran with the same replicate index (and so the same
// seeds); replicates where either value is null are left out. A statistic
// that does not exist is NaN here and null in compare.parquet.
//
// No interval and no p-value come from fewer than MinPairs pairs, nor from
// differences with no spread (all equal, zero or not: a t statistic of ±∞
// and a certain Wilcoxon p only restate that every replicate agreed); Note
// then says why. The adjusted p-values are Holm's (1979) step-down
// adjustment across the cells of one comparison, per metric (stats.Holm);
// the verdict uses the adjusted p of the t test.
type Comparison struct {
	Experiment string  `parquet:"experiment,dict"`
	Topology   string  `parquet:"topology,dict"`
	Load       float64 `parquet:"load"`
	Failure    string  `parquet:"failure,dict"`
	AgentA     string  `parquet:"agent_a,dict"`
	AgentB     string  `parquet:"agent_b,dict"`
	Metric     string  `parquet:"metric,dict"`
	N          int64   `parquet:"n"`
	MeanA      float64 `parquet:"mean_a"`
	MeanB      float64 `parquet:"mean_b"`
	MeanDiff   float64 `parquet:"mean_diff"`
	// RelDiff is the effect size: MeanDiff / MeanB, the mean difference
	// relative to B (−0.1: A is 10% below B); NaN when MeanB is 0.
	RelDiff  float64 `parquet:"rel_diff"`
	CI95     float64 `parquet:"ci95"`      // half-width, Student t
	CI95Low  float64 `parquet:"ci95_low"`  // MeanDiff − CI95
	CI95High float64 `parquet:"ci95_high"` // MeanDiff + CI95
	T        float64 `parquet:"t"`
	DF       float64 `parquet:"df"`
	PT       float64 `parquet:"p_t"`      // paired t test, two-sided
	PTHolm   float64 `parquet:"p_t_holm"` // PT adjusted (Holm) across the comparison's cells
	WPlus    float64 `parquet:"w_plus"`   // Wilcoxon signed-rank statistic
	NW       int64   `parquet:"n_wilcoxon"`
	PW       float64 `parquet:"p_wilcoxon"`           // two-sided
	PWHolm   float64 `parquet:"p_wilcoxon_holm"`      // PW adjusted (Holm) across the comparison's cells
	WMethod  string  `parquet:"wilcoxon_method,dict"` // "exact", "normal" or "" (no test)
	// Note says why there is no test: NoteFewPairs, NoteIdentical or
	// NoteConstant; "" when there is one.
	Note string `parquet:"note,dict"`
	// Verdict is VerdictLower or VerdictHigher (A's mean below or above
	// B's, adjusted p of the t test below Alpha), VerdictUnclear, or
	// VerdictUntested (see Note).
	Verdict string `parquet:"verdict,dict"`
	// SameSeeds reports whether every pair ran with the same seed, as the
	// experiment design promises (common random numbers); false flags a
	// folder whose runs were not paired by design.
	SameSeeds bool `parquet:"same_seeds"`
}

// MinPairs is the fewest pairs a comparison tests: with two, the t
// interval's factor t(0.975, 1) = 12.7 and the Wilcoxon test's smallest
// possible two-sided p = 0.5 make any statement empty or misleading.
const MinPairs = 3

// Alpha is the family-wise significance level of the verdicts.
const Alpha = 0.05

// Why a comparison was not tested (Comparison.Note), and its verdicts.
const (
	NoteFewPairs  = "fewer than 3 pairs"
	NoteIdentical = "identical in every replicate"
	NoteConstant  = "the same difference in every replicate"

	VerdictLower    = "A lower"
	VerdictHigher   = "A higher"
	VerdictUnclear  = "no clear difference"
	VerdictUntested = "untested"
)

// Compare pairs agents a and b across replicates in every panel where both
// ran, and tests each of metrics, numeric runs.parquet columns
// (DefaultMetrics when none is given). Rows come sorted by topology,
// failure, load, metric order. It is an input error if a metric is not a
// numeric runs.parquet column, if either label is not an agent of the
// experiment or both are the same (the message lists the agents there
// are), or if the two never ran in the same panel.
func Compare(d *Data, a, b string, metrics ...string) ([]Comparison, error) {
	if len(metrics) == 0 {
		metrics = DefaultMetrics(d)
	}
	idx := make([]int, len(metrics))
	for i, m := range metrics {
		var err error
		if idx[i], err = metricIndex(m); err != nil {
			return nil, err
		}
	}
	agents := d.Agents()
	var missing []string
	for _, l := range []string{a, b} {
		if !slices.Contains(agents, l) && !slices.Contains(missing, strconv.Quote(l)) {
			missing = append(missing, strconv.Quote(l))
		}
	}
	if len(missing) > 0 {
		return nil, inputErr("report: no agent %s in %s; its agents are %s", strings.Join(missing, " or "), d.Dir, quoteAll(agents))
	}
	if a == b {
		return nil, inputErr("report: --a and --b are both %q: compare two different agents of %s (%s)", a, d.Dir, quoteAll(agents))
	}
	type key struct {
		p   Panel
		rep int
	}
	runsA, runsB := map[key]Run{}, map[key]Run{}
	panels := map[Panel]bool{}
	for _, r := range d.Runs {
		k := key{Panel{r.Topology, r.Load, r.Failure}, r.Replicate}
		switch r.Agent {
		case a:
			runsA[k] = r
			panels[k.p] = true
		case b:
			runsB[k] = r
		}
	}
	var ps []Panel
	for p := range panels {
		ps = append(ps, p)
	}
	slices.SortFunc(ps, comparePanel)
	var out []Comparison
	for _, p := range ps {
		var reps []int
		for k := range runsA {
			if k.p == p {
				if _, ok := runsB[k]; ok {
					reps = append(reps, k.rep)
				}
			}
		}
		if len(reps) == 0 {
			continue
		}
		slices.Sort(reps)
		for mi, m := range metrics {
			var xa, xb, diff []float64
			same := true
			for _, rep := range reps {
				ra, rb := runsA[key{p, rep}], runsB[key{p, rep}]
				same = same && ra.Seed == rb.Seed
				va, vb := ra.at(idx[mi]), rb.at(idx[mi])
				if math.IsNaN(va) || math.IsNaN(vb) {
					continue
				}
				xa, xb, diff = append(xa, va), append(xb, vb), append(diff, va-vb)
			}
			c := Comparison{
				Experiment: d.Experiment, Topology: p.Topology, Load: p.Load, Failure: p.Failure,
				AgentA: a, AgentB: b, Metric: m, N: int64(len(diff)),
				MeanA: stats.MeanCI95(xa).Mean, MeanB: stats.MeanCI95(xb).Mean,
				SameSeeds: same,
			}
			pairedTests(&c, diff)
			out = append(out, c)
		}
	}
	if len(out) == 0 {
		return nil, inputErr("report: agents %q and %q never ran the same replicate of the same cell", a, b)
	}
	for _, m := range metrics {
		adjustHolm(out, func(c *Comparison) bool { return c.Metric == m })
	}
	for i := range out {
		out[i].Verdict = verdict(&out[i])
	}
	return out, nil
}

// pairedTests fills c's mean difference, effect size and, when diff allows
// it, the interval and both tests; else c.Note says why not.
func pairedTests(c *Comparison, diff []float64) {
	nan := math.NaN()
	c.MeanDiff, c.RelDiff = nan, nan
	c.CI95, c.CI95Low, c.CI95High, c.T, c.DF, c.PT, c.PTHolm = nan, nan, nan, nan, nan, nan, nan
	c.WPlus, c.PW, c.PWHolm = nan, nan, nan
	if len(diff) == 0 {
		c.Note = NoteFewPairs
		return
	}
	c.MeanDiff = stats.MeanCI95(diff).Mean
	if c.MeanB != 0 {
		c.RelDiff = c.MeanDiff / c.MeanB
	}
	constant := true
	for _, v := range diff {
		constant = constant && v == diff[0]
	}
	switch {
	case len(diff) < MinPairs:
		c.Note = NoteFewPairs
		return
	case constant && diff[0] == 0:
		c.Note = NoteIdentical
		return
	case constant:
		c.Note = NoteConstant
		return
	}
	t := PairedTTest(diff)
	w := WilcoxonSignedRank(diff)
	c.CI95, c.CI95Low, c.CI95High = t.CI95, t.MeanDiff-t.CI95, t.MeanDiff+t.CI95
	c.T, c.DF, c.PT = t.T, t.DF, t.P
	c.WPlus, c.NW, c.PW = w.WPlus, int64(w.N), w.P
	switch {
	case w.N == 0:
	case w.Exact:
		c.WMethod = "exact"
	default:
		c.WMethod = "normal"
	}
}

// adjustHolm sets PTHolm and PWHolm of the rows in family (those for which
// in is true) to Holm's adjustment of their PT and PW (stats.Holm: rows
// without a p-value do not count).
func adjustHolm(rows []Comparison, in func(*Comparison) bool) {
	var at []int
	var pt, pw []float64
	for i := range rows {
		if in(&rows[i]) {
			at = append(at, i)
			pt = append(pt, rows[i].PT)
			pw = append(pw, rows[i].PW)
		}
	}
	ht, hw := stats.Holm(pt), stats.Holm(pw)
	for j, i := range at {
		rows[i].PTHolm, rows[i].PWHolm = ht[j], hw[j]
	}
}

// verdict returns c's verdict from its Holm-adjusted t-test p-value.
func verdict(c *Comparison) string {
	switch {
	case c.Note != "" || math.IsNaN(c.PTHolm):
		return VerdictUntested
	case c.PTHolm >= Alpha:
		return VerdictUnclear
	case c.MeanDiff < 0:
		return VerdictLower
	}
	return VerdictHigher
}

func quoteAll(ss []string) string {
	q := make([]string, len(ss))
	for i, s := range ss {
		q[i] = strconv.Quote(s)
	}
	return strings.Join(q, ", ")
}

func comparePanel(x, y Panel) int {
	return cmp.Or(cmp.Compare(x.Topology, y.Topology), compareFailure(x.Failure, y.Failure), cmp.Compare(x.Load, y.Load))
}

// CompareTable is the name compare.parquet is stored under
// (results.KeyTable).
const CompareTable = "compare"

// WriteComparisons writes rows to path as Parquet, atomically, with the
// key-value metadata of every result table (results.WriteTable): meta
// names the experiment and the tool version writing the file.
func WriteComparisons(path string, rows []Comparison, meta results.Meta) error {
	out := make([]comparisonRow, len(rows))
	for i := range rows {
		out[i] = rows[i].row()
	}
	if err := results.WriteTable(path, CompareTable, meta, out); err != nil {
		return fmt.Errorf("report: %w", err)
	}
	return nil
}

// comparisonRow is a Comparison as compare.parquet stores it: every
// statistic that does not exist is null, never NaN.
type comparisonRow struct {
	Experiment string   `parquet:"experiment,dict"`
	Topology   string   `parquet:"topology,dict"`
	Load       float64  `parquet:"load"`
	Failure    string   `parquet:"failure,dict"`
	AgentA     string   `parquet:"agent_a,dict"`
	AgentB     string   `parquet:"agent_b,dict"`
	Metric     string   `parquet:"metric,dict"`
	N          int64    `parquet:"n"`
	MeanA      *float64 `parquet:"mean_a,optional"`
	MeanB      *float64 `parquet:"mean_b,optional"`
	MeanDiff   *float64 `parquet:"mean_diff,optional"`
	RelDiff    *float64 `parquet:"rel_diff,optional"`
	CI95       *float64 `parquet:"ci95,optional"`
	CI95Low    *float64 `parquet:"ci95_low,optional"`
	CI95High   *float64 `parquet:"ci95_high,optional"`
	T          *float64 `parquet:"t,optional"`
	DF         *float64 `parquet:"df,optional"`
	PT         *float64 `parquet:"p_t,optional"`
	PTHolm     *float64 `parquet:"p_t_holm,optional"`
	WPlus      *float64 `parquet:"w_plus,optional"`
	NW         int64    `parquet:"n_wilcoxon"`
	PW         *float64 `parquet:"p_wilcoxon,optional"`
	PWHolm     *float64 `parquet:"p_wilcoxon_holm,optional"`
	WMethod    string   `parquet:"wilcoxon_method,dict"`
	Note       string   `parquet:"note,dict"`
	Verdict    string   `parquet:"verdict,dict"`
	SameSeeds  bool     `parquet:"same_seeds"`
}

func (c *Comparison) row() comparisonRow {
	return comparisonRow{
		Experiment: c.Experiment, Topology: c.Topology, Load: c.Load, Failure: c.Failure,
		AgentA: c.AgentA, AgentB: c.AgentB, Metric: c.Metric, N: c.N,
		MeanA: orNull(c.MeanA), MeanB: orNull(c.MeanB), MeanDiff: orNull(c.MeanDiff), RelDiff: orNull(c.RelDiff),
		CI95: orNull(c.CI95), CI95Low: orNull(c.CI95Low), CI95High: orNull(c.CI95High),
		T: orNull(c.T), DF: orNull(c.DF), PT: orNull(c.PT), PTHolm: orNull(c.PTHolm),
		WPlus: orNull(c.WPlus), NW: c.NW, PW: orNull(c.PW), PWHolm: orNull(c.PWHolm),
		WMethod: c.WMethod, Note: c.Note, Verdict: c.Verdict, SameSeeds: c.SameSeeds,
	}
}

// orNull returns nil for NaN or an infinity, else a pointer to v.
func orNull(v float64) *float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return &v
}

// atomicWrite writes a file through fill into a temporary file beside path
// and renames it into place; on any error nothing is left behind.

func atomicWrite(path string, fill func(io.Writer) error) error {
	if err := atomicfile.Write(path, 0o644, fill); err != nil {
		return fmt.Errorf("report: %w", err)
	}
	return nil
}

// PrintComparisons writes rows as an aligned text table, each metric in
// its display unit (results.Column.Display): the mean difference, its size
// relative to B, the 95% interval, and each test's raw and Holm-adjusted
// p-value, then the verdict, or why a cell was not tested.
func PrintComparisons(w io.Writer, rows []Comparison) error {
	if len(rows) == 0 {
		return nil
	}
	fmt.Fprintf(w, "paired comparison, differences A − B over replicates (A = %s, B = %s)\n", rows[0].AgentA, rows[0].AgentB)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "topology\tfailure\tload\tmetric\tn\tmean A\tmean B\tA − B\t(A − B)/B\t95% CI\tp (t)\tHolm\tp (Wilcoxon)\tHolm\tverdict\t")
	for _, r := range rows {
		scale, unit, name := 1.0, "", r.Metric
		if c, ok := results.Runs.Column(r.Metric); ok {
			scale, unit = c.Display()
			name = c.Label
		}
		if unit != "" {
			name += " (" + unit + ")"
		}
		pw := fmtP(r.PW)
		if r.WMethod == "normal" {
			pw += "~"
		}
		v := r.Verdict
		if r.Note != "" {
			v += ": " + r.Note
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%d\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t\n",
			r.Topology, r.Failure, fmtNum(r.Load), name, r.N,
			fmtNum(r.MeanA*scale), fmtNum(r.MeanB*scale), fmtSigned(r.MeanDiff*scale), fmtPercent(r.RelDiff),
			fmtInterval(r.CI95Low*scale, r.CI95High*scale), fmtP(r.PT), fmtP(r.PTHolm), pw, fmtP(r.PWHolm), v)
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	if _, err := fmt.Fprintf(w, "Holm: p adjusted by Holm's step-down method (1979) across the cells tested on the same metric; verdicts use it at %g.\n"+
		"No interval or p-value from fewer than %d pairs or from differences without spread. p (Wilcoxon): exact signed-rank distribution; ~ marks the normal approximation.\n", Alpha, MinPairs); err != nil {
		return err
	}
	differ := 0
	for _, r := range rows {
		if !r.SameSeeds {
			differ++
		}
	}
	if differ > 0 {
		_, err := fmt.Fprintf(w, "warning: in %d of %d rows the paired runs had different seeds: differences mix the agents' effect with the randomness\n", differ, len(rows))
		return err
	}
	return nil
}

func fmtPercent(x float64) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return "–"
	}
	s := stats.Sig(100*x, 3) + "%"
	if x > 0 {
		s = "+" + s
	}
	return s
}

func fmtNum(x float64) string {
	if math.IsNaN(x) {
		return "–"
	}
	return stats.Sig(x, 4)
}

func fmtSigned(x float64) string {
	if math.IsNaN(x) {
		return "–"
	}
	if x > 0 || (x == 0 && !math.Signbit(x)) {
		return "+" + stats.Sig(x, 4)
	}
	return stats.Sig(x, 4)
}

func fmtInterval(lo, hi float64) string {
	if math.IsNaN(lo) || math.IsNaN(hi) {
		return "–"
	}
	return "[" + stats.Sig(lo, 4) + ", " + stats.Sig(hi, 4) + "]"
}

func fmtP(p float64) string {
	switch {
	case math.IsNaN(p):
		return "–"
	case p < 1e-4:
		return "<0.0001"
	}
	return fmt.Sprintf("%.4f", p)
}
