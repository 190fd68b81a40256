package sim_test

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"hoplore/sim"

	"gonum.org/v1/gonum/stat"
)

// orderStat returns the ceil(p·n)-th smallest of sorted, the quantile
// Histogram.Quantile reports.
func orderStat(sorted []float64, p float64) float64 {
	k := int(math.Ceil(p * float64(len(sorted))))
	return sorted[max(k, 1)-1]
}

func relErr(got, want float64) float64 { return math.Abs(got-want) / want }

// The exponential distribution's p-quantile is −ln(1−p)/λ (Kleinrock,
// Queueing Systems Vol. 1, 1975, §2.10). 10^6 values at the midpoints of
// 10^6 equal-probability strata, x_i = −ln(1−(i−½)/n)/λ, have their
// ceil(p·n)-th smallest within 2e-5 (relative) of that quantile, so the
// histogram's only error is its own; the values are shuffled so that their
// order cannot help.
func TestHistogramExponentialQuantiles(t *testing.T) {
	const n = 1_000_000
	lambdas := []float64{1, 250, 0.01}
	if testing.Short() {
		lambdas = lambdas[:1] // for the race detector
	}
	for _, lambda := range lambdas {
		vals := make([]float64, n)
		for i := range vals {
			vals[i] = -math.Log(1-(float64(i)+0.5)/n) / lambda
		}
		r := rand.New(rand.NewPCG(1, 2))
		r.Shuffle(n, func(i, j int) { vals[i], vals[j] = vals[j], vals[i] })
		h := sim.NewHistogram()
		for _, v := range vals {
			h.Add(v)
		}
		for _, p := range []float64{0.5, 0.95, 0.99} {
			want := -math.Log(1-p) / lambda
			got := h.Quantile(p)
			if e := relErr(got, want); e > sim.HistRelErr {
				t.Errorf("λ=%g p=%g: got %.9g, want %.9g (relative error %.2e > %.0e)", lambda, p, got, want, e, sim.HistRelErr)
			}
		}
	}
}

// 10^6 random exponential values: every quantile reported is within 0.1%
// of the exact order statistic (sorting), and the exact p-quantiles agree
// with gonum's empirical quantile and, within sampling error, with
// −ln(1−p)/λ: the asymptotic standard deviation of a sample p-quantile is
// √(p(1−p)/n)/f(x_p) (Serfling, Approximation Theorems of Mathematical
// Statistics, 1980, §2.3), checked at z = 3.29.
func TestHistogramRandomExponential(t *testing.T) {
	n := 1_000_000
	if testing.Short() {
		n = 200_000 // for the race detector
	}
	const lambda = 40.0
	r := rand.New(rand.NewPCG(7, 11))
	vals := make([]float64, n)
	h := sim.NewHistogram()
	for i := range vals {
		vals[i] = r.ExpFloat64() / lambda
		h.Add(vals[i])
	}
	slices.Sort(vals)
	for _, p := range []float64{0.001, 0.1, 0.5, 0.9, 0.95, 0.99, 0.999, 1} {
		exact := orderStat(vals, p)
		if g := stat.Quantile(p, stat.Empirical, vals, nil); g != exact {
			t.Fatalf("p=%g: gonum empirical quantile %g, order statistic %g", p, g, exact)
		}
		got := h.Quantile(p)
		if e := relErr(got, exact); e > sim.HistRelErr {
			t.Errorf("p=%g: got %.9g, exact %.9g (relative error %.2e)", p, got, exact, e)
		}
		if p < 1 {
			theory := -math.Log(1-p) / lambda
			sd := math.Sqrt(p*(1-p)/float64(n)) / (lambda * (1 - p))
			if math.Abs(exact-theory) > 3.29*sd {
				t.Errorf("p=%g: sample quantile %.6g, theory %.6g ± %.2g", p, exact, theory, 3.29*sd)
			}
		}
	}
	if h.Min() != vals[0] || h.Max() != vals[n-1] || h.Count() != int64(n) {
		t.Errorf("min/max/count: got %g %g %d, want %g %g %d", h.Min(), h.Max(), h.Count(), vals[0], vals[n-1], n)
	}
}

// Log-uniform values over eight decades, a point mass and zeros: every
// percentile is within 0.1% of the exact order statistic (common practice:
// the error bound of a log-bucketed sketch holds uniformly over its range).
func TestHistogramRelativeErrorEverywhere(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 5))
	cases := []struct {
		name string
		draw func() float64
	}{
		{"log-uniform 1e-6..1e2", func() float64 { return math.Exp(math.Log(1e-6) + r.Float64()*math.Log(1e8)) }},
		{"point mass and tail", func() float64 {
			if r.IntN(2) == 0 {
				return 0.0125
			}
			return 0.0125 + r.ExpFloat64()*0.003
		}},
		{"uniform near one bucket", func() float64 { return 0.5 * (1 + 0.003*r.Float64()) }},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			h := sim.NewHistogram()
			vals := make([]float64, 200_000)
			if testing.Short() {
				vals = vals[:50_000] // for the race detector
			}
			for i := range vals {
				vals[i] = tc.draw()
				h.Add(vals[i])
			}
			slices.Sort(vals)
			for p := 0.005; p <= 1; p += 0.005 {
				want := orderStat(vals, p)
				if got := h.Quantile(p); relErr(got, want) > sim.HistRelErr {
					t.Errorf("p=%.3f: got %.9g, want %.9g", p, got, want)
				}
			}
		})
	}
	t.Run("zeros", func(t *testing.T) {
		h := sim.NewHistogram()
		for range 10 {
			h.Add(0)
		}
		h.Add(2e-3)
		if got := h.Quantile(0.5); got != 0 {
			t.Errorf("median of zeros: got %g, want 0", got)
		}
		if got := h.Quantile(1); got != 2e-3 {
			t.Errorf("max: got %g, want 2e-3", got)
		}
	})
	t.Run("empty", func(t *testing.T) {
		if got := sim.NewHistogram().Quantile(0.5); !math.IsNaN(got) {
			t.Errorf("empty: got %g, want NaN", got)
		}
	})
}

// Merging histograms of parts gives exactly the histogram of the whole, in
// any order, whatever ranges the parts cover.
func TestHistogramMerge(t *testing.T) {
	r := rand.New(rand.NewPCG(9, 9))
	whole := sim.NewHistogram()
	parts := []*sim.Histogram{sim.NewHistogram(), sim.NewHistogram(), sim.NewHistogram(), sim.NewHistogram()}
	scales := []float64{1e-4, 1e-1, 3, 1e-2}
	for i := 0; i < 100_000; i++ {
		k := i % len(parts)
		v := r.ExpFloat64() * scales[k]
		parts[k].Add(v)
		whole.Add(v)
	}
	for _, order := range [][]int{{0, 1, 2, 3}, {2, 0, 3, 1}} {
		m := sim.NewHistogram()
		for _, k := range order {
			m.Merge(parts[k])
		}
		m.Merge(sim.NewHistogram())
		if m.Count() != whole.Count() || m.Min() != whole.Min() || m.Max() != whole.Max() {
			t.Errorf("order %v: count/min/max %d %g %g, want %d %g %g", order, m.Count(), m.Min(), m.Max(), whole.Count(), whole.Min(), whole.Max())
		}
		for p := 0.01; p <= 1; p += 0.01 {
			if got, want := m.Quantile(p), whole.Quantile(p); got != want {
				t.Errorf("order %v p=%.2f: merged %g, whole %g", order, p, got, want)
			}
		}
	}
}

// Two replicates whose 95th percentiles lie within one bucket (0.1% wide)
// of each other still report different values: the quantile is interpolated
// by rank inside the bucket, not reported at a fixed point of it.
func TestHistogramNoTiesByBucketing(t *testing.T) {
	a, b := sim.NewHistogram(), sim.NewHistogram()
	for i := 0; i < 1000; i++ {
		v := 0.01 * (1 + float64(i)*1e-6) // 1000 values within 0.1%
		a.Add(v)
		b.Add(v)
	}
	b.Add(0.0101) // above the p95: b's p95 is the next value up
	pa, pb := a.Quantile(0.95), b.Quantile(0.95)
	if pa == pb {
		t.Errorf("p95 of two different sets in one bucket tie at %g", pa)
	}
	// Independent replicates of one distribution: exact p95s differ, and so
	// do the reported ones.
	for seed := uint64(0); seed < 20; seed++ {
		r1 := rand.New(rand.NewPCG(seed, 1))
		r2 := rand.New(rand.NewPCG(seed, 2))
		h1, h2 := sim.NewHistogram(), sim.NewHistogram()
		for i := 0; i < 5000; i++ {
			h1.Add(0.002 + r1.ExpFloat64()*1e-3)
			h2.Add(0.002 + r2.ExpFloat64()*1e-3)
		}
		if h1.Quantile(0.95) == h2.Quantile(0.95) {
			t.Errorf("seed %d: replicates tie at p95 %g", seed, h1.Quantile(0.95))
		}
	}
}

// Once its range is known a histogram records without allocating, and its
// memory stays within HistogramBytes of the span of its values.
func TestHistogramMemory(t *testing.T) {
	h := sim.NewHistogram()
	r := rand.New(rand.NewPCG(4, 4))
	for i := 0; i < 100_000; i++ {
		h.Add(1e-3 * math.Pow(1e3, r.Float64())) // spans three decades
	}
	if got, bound := float64(h.Bytes()), sim.HistogramBytes(h.Max()/h.Min()); got > bound {
		t.Errorf("memory %v bytes for a span of %.0f, bound %v", got, h.Max()/h.Min(), bound)
	}
	if got := sim.HistogramBytes(1e15); got != sim.HistogramMaxBytes {
		t.Errorf("bytes for the whole grid: %v, want the maximum %v", got, sim.HistogramMaxBytes)
	}
	allocs := testing.AllocsPerRun(1000, func() { h.Add(1e-3 * math.Pow(1e3, r.Float64())) })
	if allocs != 0 {
		t.Errorf("Add allocates %v times per value", allocs)
	}
}

func ExampleHistogram() {
	h := sim.NewHistogram()
	for i := 1; i <= 1000; i++ {
		h.Add(float64(i) * 1e-3) // 1 ms .. 1 s
	}
	fmt.Printf("p50 %.3f s, p99 %.3f s, max %.3f s\n", h.Quantile(0.5), h.Quantile(0.99), h.Max())
	// Output: p50 0.500 s, p99 0.990 s, max 1.000 s
}
