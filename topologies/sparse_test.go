package topologies

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"hoplore/paths"
)

// The distance density of two uniform points on the unit square integrates
// to 1 and has mean (2 + √2 + 5·ln(1 + √2))/15 ≈ 0.5214 (the square
// line-picking constant, from memory: Santaló, Integral Geometry and
// Geometric Probability, 1976); checked by Simpson's rule on a fine grid.
func TestSquareDistanceDensity(t *testing.T) {
	var mass, mean float64
	const n = 200000
	for _, iv := range [][2]float64{{0, 1}, {1, math.Sqrt2}} {
		h := (iv[1] - iv[0]) / n
		for i := 0; i <= n; i++ {
			r := iv[0] + float64(i)*h
			w := 2.0
			switch {
			case i == 0 || i == n:
				w = 1
			case i%2 == 1:
				w = 4
			}
			mass += w * h / 3 * squareDistanceDensity(r)
			mean += w * h / 3 * r * squareDistanceDensity(r)
		}
	}
	wantMean := (2 + math.Sqrt2 + 5*math.Log(1+math.Sqrt2)) / 15
	if math.Abs(mass-1) > 1e-9 || math.Abs(mean-wantMean) > 1e-9 {
		t.Errorf("mass %.12f (want 1), mean %.12f (want %.12f)", mass, mean, wantMean)
	}
	// The density is continuous at r = 1: 2(π − 3) from both sides.
	if l, r := squareDistanceDensity(1), squareDistanceDensity(1+1e-12); math.Abs(l-r) > 1e-9 || math.Abs(l-2*(math.Pi-3)) > 1e-12 {
		t.Errorf("density at 1: %g and %g, want 2(π−3)", l, r)
	}
}

// E[exp(−d/λ)] against a Monte Carlo estimate with n = 10^6 pairs (10^5
// with -short): z = 3.29 gives a tolerance of 3.29·sd/√n, with sd measured
// on the sample.
func TestMeanWaxmanProb(t *testing.T) {
	r := rand.New(rand.NewPCG(11, 12))
	n := 1000000.0
	if testing.Short() {
		n = 100000 // the tolerance follows n
	}
	for _, lambda := range []float64{0.01, 0.1, 1} {
		var s, s2 float64
		for range int(n) {
			d := math.Hypot(r.Float64()-r.Float64(), r.Float64()-r.Float64())
			p := math.Exp(-d / lambda)
			s += p
			s2 += p * p
		}
		m := s / n
		sd := math.Sqrt((s2/n - m*m) * n / (n - 1))
		if got := meanWaxmanProb(lambda); math.Abs(got-m) > 3.29*sd/math.Sqrt(n) {
			t.Errorf("lambda %g: %.6f, Monte Carlo %.6f ± %.6f", lambda, got, m, 3.29*sd/math.Sqrt(n))
		}
	}
}

// Waxman with degree 4 at 1000 nodes: mean degree within 10% and
// connected. Given the positions, the number of links is a sum of
// independent Bernoulli draws with variance below its mean (2000), so
// 10% (200 links) is more than 4 standard deviations; the joining links
// add about one per isolated node (e^−4 of the nodes for a Poisson degree).
func TestWaxmanDegree(t *testing.T) {
	for _, seed := range []float64{1, 2, 3} {
		g := mustGenerate(t, "waxman", map[string]float64{"nodes": 1000, "degree": 4, "seed": seed})
		mean := 2 * float64(len(g.Links)) / float64(len(g.Nodes))
		if math.Abs(mean-4) > 0.4 {
			t.Errorf("seed %g: mean degree %.3f, want 4 ± 10%%", seed, mean)
		}
		edges := make([][2]int, len(g.Links))
		for i, l := range g.Links {
			edges[i] = [2]int{l.A, l.B}
		}
		if !paths.Connected(len(g.Nodes), edges) {
			t.Errorf("seed %g: not connected", seed)
		}
		want := fmt.Sprintf("waxman(nodes=1000,degree=4,seed=%g)", seed)
		if seed == 1 {
			want = "waxman(nodes=1000,degree=4)" // seed 1 is the default
		}
		if g.Name != want {
			t.Errorf("name %q, want %q", g.Name, want)
		}
	}
}

// The sparse draw links each pair with its Waxman probability: given the
// positions, the number of links at distances in a band is a sum of
// independent Bernoulli draws, checked against its mean Σp and variance
// Σp(1−p) at z = 3.29, for near pairs (drawn pair by pair) and far ones
// (drawn by geometric skipping between cells).
func TestDrawWaxmanSparseProbabilities(t *testing.T) {
	const n, beta, side = 2000, 0.6, 1000.0
	lambda, err := solveWaxmanLambda(n, beta, 4)
	if err != nil {
		t.Fatal(err)
	}
	lambda *= side
	bands := []float64{0, 2 * lambda, 4 * lambda, 8 * lambda, math.Inf(1)}
	seeds := uint64(3)
	if testing.Short() {
		seeds = 1
	}
	for seed := range seeds {
		s := drawWaxmanSparse(rand.New(rand.NewPCG(seed, 99)), n, beta, lambda, side)
		got := make([]float64, len(bands)-1)
		mean := make([]float64, len(bands)-1)
		vr := make([]float64, len(bands)-1)
		band := func(d float64) int {
			for b := range got {
				if d < bands[b+1] {
					return b
				}
			}
			return len(got) - 1
		}
		for _, e := range s.edges {
			got[band(math.Hypot(s.x[e[0]]-s.x[e[1]], s.y[e[0]]-s.y[e[1]]))]++
		}
		for i := range n {
			for j := i + 1; j < n; j++ {
				d := math.Hypot(s.x[i]-s.x[j], s.y[i]-s.y[j])
				p := beta * math.Exp(-d/lambda)
				mean[band(d)] += p
				vr[band(d)] += p * (1 - p)
			}
		}
		for b := range got {
			if tol := 3.29*math.Sqrt(vr[b]) + 1e-3; math.Abs(got[b]-mean[b]) > tol {
				t.Errorf("seed %d, distances [%.1f, %.1f) km: %g links, want %.1f ± %.1f", seed, bands[b], bands[b+1], got[b], mean[b], tol)
			}
		}
	}
}

// The joining links are the shortest possible: on points in two clusters far
// apart, the one added link joins the closest pair across them.
func TestJoinComponents(t *testing.T) {
	x := []float64{0, 1, 2, 10, 11, 30}
	y := []float64{0, 0, 0, 0, 0, 50}
	edges := [][2]int{{0, 1}, {1, 2}, {3, 4}}
	got := joinComponents(x, y, edges, 100)
	// {0 1 2} is largest; {3 4} joins it by 2–3 (8 km); {5} by 4–5
	// (hypot(19, 50) ≈ 53.5 km, shorter than 2–5's hypot(28, 50)).
	want := [][2]int{{2, 3}, {4, 5}}
	if fmt.Sprint(got) != fmt.Sprint(want) {
		t.Errorf("added %v, want %v", got, want)
	}
}

func TestWaxmanDegreeErrors(t *testing.T) {
	for _, c := range []struct {
		params map[string]float64
		want   string
	}{
		{map[string]float64{"degree": 4, "alpha": 0.2}, "topologies: alpha: give alpha or degree, not both (degree solves for alpha)"},
		{map[string]float64{"nodes": 20000}, "topologies: nodes: at most 10000 without degree (got 20000); give a target mean degree for larger sparse graphs"},
		{map[string]float64{"nodes": 10, "degree": 6}, "topologies: degree: must be less than (nodes−1)·beta = 5.4"},
	} {
		if _, err := Generate("waxman", c.params); err == nil || err.Error() != c.want {
			t.Errorf("%v: got %v, want %s", c.params, err, c.want)
		}
	}
}

// BenchmarkWaxmanDegree generates sparse Waxman graphs of mean degree 4; at
// 10,000 nodes it must take well under 2 s.
func BenchmarkWaxmanDegree(b *testing.B) {
	for _, n := range []int{1000, 10000} {
		b.Run(fmt.Sprint(n), func(b *testing.B) {
			b.ReportAllocs()
			links := 0
			for b.Loop() {
				g, err := Generate("waxman", map[string]float64{"nodes": float64(n), "degree": 4})
				if err != nil {
					b.Fatal(err)
				}
				links = len(g.Links)
			}
			b.ReportMetric(2*float64(links)/float64(n), "degree")
			b.ReportMetric(b.Elapsed().Seconds()/float64(b.N), "s/graph")
		})
	}
}
