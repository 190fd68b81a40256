package report

import (
	"errors"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"testing"

	"github.com/parquet-go/parquet-go"
	"gonum.org/v1/gonum/stat/distuv"

	"hoplore/stats"
)

// readTyped reads a whole table through parquet-go's typed reader, a path
// independent of the column-by-name row reader the package uses.
func readTyped[T any](t *testing.T, path string) []T {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	r := parquet.NewGenericReader[T](f)
	defer r.Close()
	out := make([]T, r.NumRows())
	n := 0
	for n < len(out) {
		k, err := r.Read(out[n:])
		n += k
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			t.Fatal(err)
		}
	}
	if n != len(out) {
		t.Fatalf("%s: read %d of %d rows", path, n, len(out))
	}
	return out
}

// refEstimate computes mean and 95% half-width from the definitions:
// mean = Σx/n, s² = Σ(x − mean)²/(n − 1), half = t(0.975, n−1)·s/√n, with
// the t quantile from gonum's Student t distribution.
func refEstimate(xs []float64) (mean, half float64, n int) {
	var v []float64
	for _, x := range xs {
		if !math.IsNaN(x) {
			v = append(v, x)
		}
	}
	n = len(v)
	if n == 0 {
		return math.NaN(), math.NaN(), 0
	}
	for _, x := range v {
		mean += x
	}
	mean /= float64(n)
	if n < 2 {
		return mean, math.NaN(), n
	}
	var ss float64
	for _, x := range v {
		ss += (x - mean) * (x - mean)
	}
	s := math.Sqrt(ss / float64(n-1))
	q := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(n - 1)}.Quantile(0.975)
	return mean, q * s / math.Sqrt(float64(n)), n
}

func close(a, b float64) bool {
	if math.IsNaN(a) || math.IsNaN(b) {
		return math.IsNaN(a) && math.IsNaN(b)
	}
	return math.Abs(a-b) <= 1e-9*math.Max(1, math.Abs(b))
}

func checkEstimate(t *testing.T, what string, got stats.Estimate, xs []float64) {
	t.Helper()
	m, h, n := refEstimate(xs)
	if got.N != n || !close(got.Mean, m) || !close(got.CI95, h) {
		t.Errorf("%s: got n=%d mean=%v ci=%v, want n=%d mean=%v ci=%v", what, got.N, got.Mean, got.CI95, n, m, h)
	}
}

func nanIfNil(p *float64) float64 {
	if p == nil {
		return math.NaN()
	}
	return *p
}

func loadSynthetic(t *testing.T, s synSpec) (*Data, string) {
	t.Helper()
	dir := t.TempDir()
	writeSynthetic(t, dir, s)
	d, err := Load(dir)
	if err != nil {
		t.Fatal(err)
	}
	return d, dir
}

func TestLoadCurvesMatchIndependentAggregation(t *testing.T) {
	d, dir := loadSynthetic(t, demoSpec)
	runs := readTyped[synRun](t, filepath.Join(dir, "runs.parquet"))
	if len(d.Runs) != len(runs) {
		t.Fatalf("runs: got %d, want %d", len(d.Runs), len(runs))
	}
	get := map[string]func(synRun) float64{
		"delivery_mean_s": func(r synRun) float64 { return nanIfNil(r.DeliveryMean) },
		"delivery_p95_s":  func(r synRun) float64 { return nanIfNil(r.DeliveryP95) },
		"loss_rate":       func(r synRun) float64 { return r.LossRate },
	}
	for _, m := range CompareMetrics {
		panels, err := LoadCurves(d, m)
		if err != nil {
			t.Fatal(err)
		}
		if want := len(demoSpec.topologies) * len(demoSpec.failures); len(panels) != want {
			t.Fatalf("%s: got %d panels, want %d", m, len(panels), want)
		}
		points := 0
		for _, p := range panels {
			for _, c := range p.Curves {
				for _, pt := range c.Points {
					var xs []float64
					for _, r := range runs {
						if r.Topology == p.Topology && r.Failure == p.Failure && r.Agent == c.Agent && r.Load == pt.X {
							xs = append(xs, get[m](r))
						}
					}
					checkEstimate(t, m+" "+p.Topology+" "+p.Failure+" "+c.Agent, pt.Est, xs)
					points++
				}
			}
		}
		if want := len(demoSpec.topologies) * len(demoSpec.failures) * len(demoSpec.agents) * len(demoSpec.loads); points != want {
			t.Errorf("%s: got %d points, want %d", m, points, want)
		}
	}
}

func TestCellTableMatchesIndependentAggregation(t *testing.T) {
	d, dir := loadSynthetic(t, demoSpec)
	runs := readTyped[synRun](t, filepath.Join(dir, "runs.parquet"))
	rows, err := CellTable(d, "delivery_mean_s")
	if err != nil {
		t.Fatal(err)
	}
	agents := d.Agents()
	if want := len(demoSpec.topologies) * len(demoSpec.failures) * len(demoSpec.loads); len(rows) != want {
		t.Fatalf("got %d rows, want %d", len(rows), want)
	}
	for _, row := range rows {
		best, bestMean := -1, math.Inf(1)
		for i, ag := range agents {
			var xs []float64
			for _, r := range runs {
				if r.Topology == row.Topology && r.Failure == row.Failure && r.Load == row.Load && r.Agent == ag {
					xs = append(xs, nanIfNil(r.DeliveryMean))
				}
			}
			checkEstimate(t, "table "+ag, row.Est[i], xs)
			if m, _, _ := refEstimate(xs); m < bestMean {
				best, bestMean = i, m
			}
		}
		for i := range agents {
			if row.Best[i] != (i == best) {
				t.Errorf("%+v: best flags %v, want agent %d", row.Panel, row.Best, best)
			}
		}
	}
}

func TestEventCurvesMatchIndependentAggregation(t *testing.T) {
	d, dir := loadSynthetic(t, demoSpec)
	bins := readTyped[synBin](t, filepath.Join(dir, "series.parquet"))
	recs := readTyped[synRecovery](t, filepath.Join(dir, "recoveries.parquet"))
	const load, pre, post = 0.6, 10, 30
	eps := EventCurves(d, EventOptions{Load: load, PreBins: pre, PostBins: post, MaxEvents: 4})
	if want := 2 * len(demoSpec.topologies); len(eps) != want {
		t.Fatalf("got %d event panels, want %d", len(eps), want)
	}
	w := demoSpec.bin
	for _, ep := range eps {
		if ep.Bin != w {
			t.Errorf("bin width: got %v, want %v", ep.Bin, w)
		}
		for ci, c := range ep.Delivery {
			if len(c.Points) != pre+post {
				t.Errorf("%v %s: got %d bins, want %d", ep.Event, c.Agent, len(c.Points), pre+post)
			}
			for pi, pt := range c.Points {
				var delay, loss []float64
				for _, b := range bins {
					mid := (b.TStart+b.TEnd)/2 - ep.At
					if b.Topology == ep.Topology && b.Failure == ep.Failure && b.Agent == c.Agent && b.Load == load &&
						mid > pt.X-w/2 && mid < pt.X+w/2 {
						delay = append(delay, nanIfNil(b.DeliveryMean))
						loss = append(loss, float64(b.Dropped)/float64(b.Generated))
					}
				}
				checkEstimate(t, "event delay", pt.Est, delay)
				checkEstimate(t, "event loss", ep.Loss[ci].Points[pi].Est, loss)
			}
		}
		for _, ar := range ep.Recovery {
			var rec, lost []float64
			never := 0
			for _, r := range recs {
				if r.Topology == ep.Topology && r.Failure == ep.Failure && r.Agent == ar.Agent && r.Load == load && r.At == ep.At && r.Action == ep.Action {
					lost = append(lost, float64(r.Lost))
					if r.Recovery == nil {
						never++
					} else {
						rec = append(rec, *r.Recovery)
					}
				}
			}
			checkEstimate(t, "recovery "+ar.Agent, ar.Recovery, rec)
			checkEstimate(t, "lost "+ar.Agent, ar.Lost, lost)
			if ar.NotRecovered != never || ar.Runs != len(lost) {
				t.Errorf("%s: got %d of %d never recovered, want %d of %d", ar.Agent, ar.NotRecovered, ar.Runs, never, len(lost))
			}
		}
		// the up event lies 150 s = 30 bins after the down event: inside the
		// down event's window; the down event lies outside the up event's
		// 10 bins before it
		want := map[string]int{"down": 1, "up": 0}[ep.Action]
		if len(ep.Others) != want {
			t.Errorf("%v: got %d other events, want %d", ep.Event, len(ep.Others), want)
		}
	}
}

func TestLinkHeatsMatchIndependentAggregation(t *testing.T) {
	d, dir := loadSynthetic(t, demoSpec)
	links := readTyped[synLink](t, filepath.Join(dir, "links.parquet"))
	bins := readTyped[synBin](t, filepath.Join(dir, "series.parquet"))
	// busiest panel: highest mean utilisation over its channels
	type pk struct {
		topo, fail string
		load       float64
	}
	sum, n := map[pk]float64{}, map[pk]int{}
	for _, l := range links {
		k := pk{l.Topology, l.Failure, l.Load}
		sum[k] += l.Util
		n[k]++
	}
	var best pk
	bestMean := math.Inf(-1)
	for k := range sum {
		if m := sum[k] / float64(n[k]); m > bestMean {
			best, bestMean = k, m
		}
	}
	p, ok := BusiestPanel(d)
	if !ok || p != (Panel{best.topo, best.load, best.fail}) {
		t.Fatalf("busiest: got %+v, want %+v", p, best)
	}
	h := ChannelHeat(d, p, 0)
	if len(h.Cols) != demoSpec.channels || len(h.Rows) != len(demoSpec.agents) {
		t.Fatalf("heat: got %d×%d, want %d×%d", len(h.Rows), len(h.Cols), len(demoSpec.agents), demoSpec.channels)
	}
	prevPeak := math.Inf(1)
	for j, ch := range h.Cols {
		peak := math.Inf(-1)
		for i, ag := range h.Rows {
			var xs []float64
			for _, l := range links {
				if l.Topology == p.Topology && l.Load == p.Load && l.Failure == p.Failure && l.Agent == ag && l.From+"→"+l.To == ch {
					xs = append(xs, l.Util)
				}
			}
			m, _, _ := refEstimate(xs)
			if !close(h.Values[i][j], m) {
				t.Errorf("heat %s %s: got %v, want %v", ag, ch, h.Values[i][j], m)
			}
			peak = math.Max(peak, m)
		}
		if peak > prevPeak {
			t.Errorf("channel %s: peak %v after %v: not sorted busiest first", ch, peak, prevPeak)
		}
		prevPeak = peak
	}
	if h := ChannelHeat(d, p, 5); len(h.Cols) != 5 {
		t.Errorf("maxCols 5: got %d columns", len(h.Cols))
	}
	th, starts := TimeHeat(d, p)
	if want := int(demoSpec.duration / demoSpec.bin); len(starts) != want {
		t.Fatalf("time heat: got %d bins, want %d", len(starts), want)
	}
	for i, ag := range th.Rows {
		for j, s := range starts {
			var xs []float64
			for _, b := range bins {
				if b.Topology == p.Topology && b.Load == p.Load && b.Failure == p.Failure && b.Agent == ag && b.TStart == s {
					xs = append(xs, b.UtilMax)
				}
			}
			if m, _, _ := refEstimate(xs); !close(th.Values[i][j], m) {
				t.Errorf("time heat %s %v: got %v, want %v", ag, s, th.Values[i][j], m)
			}
		}
	}
	if !slices.IsSorted(starts) {
		t.Errorf("time heat bins not sorted")
	}
}
