package report

import (
	"cmp"
	"fmt"
	"io"
	"math"
	"slices"
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
// seeds); replicates where either value is null are left out.
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
	CI95       float64 `parquet:"ci95"`      // half-width, Student t
	CI95Low    float64 `parquet:"ci95_low"`  // MeanDiff − CI95
	CI95High   float64 `parquet:"ci95_high"` // MeanDiff + CI95
	T          float64 `parquet:"t"`
	DF         float64 `parquet:"df"`
	PT         float64 `parquet:"p_t"`                  // paired t test, two-sided
	WPlus      float64 `parquet:"w_plus"`               // Wilcoxon signed-rank statistic
	NW         int64   `parquet:"n_wilcoxon"`           // non-zero differences
	PW         float64 `parquet:"p_wilcoxon"`           // two-sided
	WMethod    string  `parquet:"wilcoxon_method,dict"` // "exact", "normal" or "" (no non-zero difference)
	// SameSeeds reports whether every pair ran with the same seed, as the
	// experiment design promises (common random numbers); false flags a
	// folder whose runs were not paired by design.
	SameSeeds bool `parquet:"same_seeds"`
}

// Compare pairs agents a and b across replicates in every panel where both
// ran, and tests each of metrics, numeric runs.parquet columns
// (CompareMetrics when none is given). Rows come sorted by topology,
// failure, load, metric order. It is an input error if a metric is not a
// numeric runs.parquet column, if either label is not an agent of the
// experiment, or if the two never ran in the same panel.
func Compare(d *Data, a, b string, metrics ...string) ([]Comparison, error) {
	if len(metrics) == 0 {
		metrics = CompareMetrics
	}
	idx := make([]int, len(metrics))
	for i, m := range metrics {
		var err error
		if idx[i], err = metricIndex(m); err != nil {
			return nil, err
		}
	}
	agents := d.Agents()
	for _, l := range []string{a, b} {
		if !slices.Contains(agents, l) {
			return nil, inputErr("report: no agent %q in %s (agents: %s)", l, d.Dir, strings.Join(agents, ", "))
		}
	}
	if a == b {
		return nil, inputErr("report: --a and --b are both %q", a)
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
			t := PairedTTest(diff)
			w := WilcoxonSignedRank(diff)
			c := Comparison{
				Experiment: d.Experiment, Topology: p.Topology, Load: p.Load, Failure: p.Failure,
				AgentA: a, AgentB: b, Metric: m, N: int64(len(diff)),
				MeanA: stats.MeanCI95(xa).Mean, MeanB: stats.MeanCI95(xb).Mean,
				MeanDiff: t.MeanDiff, CI95: t.CI95, CI95Low: t.MeanDiff - t.CI95, CI95High: t.MeanDiff + t.CI95,
				T: t.T, DF: t.DF, PT: t.P, WPlus: w.WPlus, NW: int64(w.N), PW: w.P, SameSeeds: same,
			}
			switch {
			case w.N == 0:
			case w.Exact:
				c.WMethod = "exact"
			default:
				c.WMethod = "normal"
			}
			out = append(out, c)
		}
	}
	if len(out) == 0 {
		return nil, inputErr("report: agents %q and %q never ran the same replicate of the same cell", a, b)
	}
	return out, nil
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
	if err := results.WriteTable(path, CompareTable, meta, rows); err != nil {
		return fmt.Errorf("report: %w", err)
	}
	return nil
}

// atomicWrite writes a file through fill into a temporary file beside path
// and renames it into place; on any error nothing is left behind.

func atomicWrite(path string, fill func(io.Writer) error) error {
	if err := atomicfile.Write(path, 0o644, fill); err != nil {
		return fmt.Errorf("report: %w", err)
	}
	return nil
}

// PrintComparisons writes rows as an aligned text table. Times are shown
// in milliseconds, loss rates in percent.
func PrintComparisons(w io.Writer, rows []Comparison) error {
	if len(rows) == 0 {
		return nil
	}
	fmt.Fprintf(w, "paired comparison, differences A − B over replicates (A = %s, B = %s)\n", rows[0].AgentA, rows[0].AgentB)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "topology\tfailure\tload\tmetric\tn\tmean A\tmean B\tA − B\t95% CI\tp (t)\tp (Wilcoxon)\t")
	for _, r := range rows {
		scale, unit := 1e3, "ms"
		name := strings.TrimSuffix(r.Metric, "_s")
		if r.Metric == "loss_rate" {
			scale, unit = 100, "%"
		}
		name += " (" + unit + ")"
		pw := fmtP(r.PW)
		if r.WMethod == "normal" {
			pw += "~"
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%d\t%s\t%s\t%s\t%s\t%s\t%s\t\n",
			r.Topology, r.Failure, fmtNum(r.Load), name, r.N,
			fmtNum(r.MeanA*scale), fmtNum(r.MeanB*scale), fmtSigned(r.MeanDiff*scale),
			fmtInterval(r.CI95Low*scale, r.CI95High*scale), fmtP(r.PT), pw)
	}
	if err := tw.Flush(); err != nil {
		return err
	}
	if _, err := fmt.Fprintln(w, "p (Wilcoxon): exact signed-rank distribution; ~ marks the normal approximation"); err != nil {
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
