package report

import (
	"math"
	"testing"

	"hoplore/results"
)

func TestLearningCurves(t *testing.T) {
	d := &Data{Dir: "x", Experiment: "x"}
	c := func(agent string) Cell { return Cell{Topology: "ring", Agent: agent, Load: 0.5, Failure: "none"} }
	// agent a: two replicates, bins of 2 s; delivery (10 + rep + 8/(1+k)) ms,
	// loss k%·rep; agent b one replicate
	for rep := 0; rep < 2; rep++ {
		for k := 0; k < 10; k++ {
			d.Series = append(d.Series, Bin{Cell: c("a"), Replicate: rep, Start: float64(2 * k), End: float64(2*k + 2),
				Generated: 100, Delivered: 100 - int64(k*rep), Dropped: int64(k * rep),
				DeliveryMean: (10 + float64(rep) + 8/float64(1+k)) / 1e3})
		}
	}
	for k := 0; k < 10; k++ {
		d.Series = append(d.Series, Bin{Cell: c("b"), Start: float64(2 * k), End: float64(2*k + 2), Generated: 100, Delivered: 100, DeliveryMean: 0.012})
	}
	run := func(agent string, rep int, detected float64, how string) Run {
		r := NewRun(c(agent), rep, map[string]float64{"delivery_mean_s": 0.01, "delivery_p95_s": 0.02, "loss_rate": 0, "warmup_s": 4, "warmup_detected_s": detected})
		r.WarmupDetection = how
		return r
	}
	d.Runs = []Run{
		run("a", 0, 6, results.WarmupDetected), run("a", 1, 2, results.WarmupDetected),
		run("b", 0, math.NaN(), results.WarmupUnsettled),
	}
	lps, more := LearningCurves(d, 5)
	if len(lps) != 1 || more != 0 {
		t.Fatalf("got %d panels (%d more), want 1", len(lps), more)
	}
	lp := lps[0]
	if lp.Bin != 2 || lp.Warmup != 4 || len(lp.Delivery) != 2 || len(lp.Loss) != 2 {
		t.Fatalf("panel: bin %v, warm-up %v, %d delivery and %d loss curves", lp.Bin, lp.Warmup, len(lp.Delivery), len(lp.Loss))
	}
	a := lp.Delivery[0]
	if a.Agent != "a" || len(a.Points) != 10 {
		t.Fatalf("agent a: %+v", a)
	}
	for k, p := range a.Points {
		want := (10.5 + 8/float64(1+k)) / 1e3 // mean of the two replicates
		if p.X != float64(2*k+1) || math.Abs(p.Est.Mean-want) > 1e-15 || p.Est.N != 2 {
			t.Errorf("bin %d: got x %v, %v over %d, want x %d, %v over 2", k, p.X, p.Est.Mean, p.Est.N, 2*k+1, want)
		}
		if l := lp.Loss[0].Points[k].Est.Mean; math.Abs(l-float64(k)/200) > 1e-15 {
			t.Errorf("bin %d: loss %v, want %v", k, l, float64(k)/200)
		}
	}
	ta, tb := lp.Transient[0], lp.Transient[1]
	if ta.Longest != 6 || ta.Runs != 2 || ta.Unsettled != 0 || !ta.Short(lp.Warmup) ||
		!math.IsNaN(tb.Longest) || tb.Unsettled != 1 || !tb.Short(lp.Warmup) {
		t.Errorf("transients: %+v, %+v", ta, tb)
	}
	want := "ring, load 0.5, failures none: warm-up 4 s is too short (a: transient detected up to 6 s; b: 1 of 1 runs never settled)."
	if got := lp.transientNote(); got != want {
		t.Errorf("note: got %q, want %q", got, want)
	}
	if lps, more := LearningCurves(d, 0); len(lps) != 0 || more != 1 {
		t.Errorf("max 0: got %d panels, %d more", len(lps), more)
	}
}

// A cell of one replicate takes the run's own batch-means interval for the
// mean delivery time (results.Column.OneRunCI), and none for other columns.
func TestOneRunInterval(t *testing.T) {
	d := &Data{Dir: "x", Experiment: "x"}
	d.Runs = []Run{NewRun(Cell{Topology: "ring", Agent: "a", Load: 0.5, Failure: "none"}, 0,
		map[string]float64{"delivery_mean_s": 0.02, "delivery_mean_s_ci95": 0.001, "delivery_p95_s": 0.05, "loss_rate": 0.01})}
	rows, err := CellTable(d, "delivery_mean_s")
	if err != nil {
		t.Fatal(err)
	}
	if e := rows[0].Est[0]; e.Mean != 0.02 || e.CI95 != 0.001 {
		t.Errorf("delivery mean: got %v ± %v, want 0.02 ± 0.001", e.Mean, e.CI95)
	}
	lps, err := LoadCurves(d, "delivery_mean_s")
	if err != nil || lps[0].Curves[0].Points[0].Est.CI95 != 0.001 {
		t.Errorf("load curve: got %+v (%v), want the run's half-width 0.001", lps, err)
	}
	rows, _ = CellTable(d, "delivery_p95_s")
	if e := rows[0].Est[0]; !math.IsNaN(e.CI95) {
		t.Errorf("p95 of one run: half-width %v, want none", e.CI95)
	}
}
