package stats_test

import (
	"math"
	"testing"

	"hoplore/stats"
)

func TestMeanCI95(t *testing.T) {
	nan := math.NaN()
	tests := []struct {
		name    string
		x       []float64
		n       int
		mean    float64 // NaN: none
		half    float64 // NaN: none
		halfTol float64
		meanTol float64
	}{
		// Values 1..10: mean 5.5, s = 3.0277, t(0.975, 9) = 2.2622 (Fisher &
		// Yates, Statistical Tables, 1938, table III): half-width
		// 2.2622·3.0277/√10 = 2.1659.
		{name: "1..10", x: []float64{1, 2, 3, 4, 5, 6, 7, 8, 9, 10}, n: 10, mean: 5.5, half: 2.1659, halfTol: 5e-5},
		// Two values 1, 3: mean 2, s = √2, t(0.975, 1) = 12.706 (Fisher &
		// Yates, table III): half-width 12.706·√2/√2 = 12.706.
		{name: "two values", x: []float64{1, 3}, n: 2, mean: 2, half: 12.706, halfTol: 5e-4},
		// 10, 20, 30: mean 20, s = 10, t(0.975, 2) = 4.303 (Fisher & Yates,
		// table III): 4.303·10/√3 = 24.84.
		{name: "three values", x: []float64{10, 20, 30}, n: 3, mean: 20, half: 24.84, halfTol: 5e-3},
		// Student (The probable error of a mean, 1908, p. 20): the ten
		// sleep differences, mean 1.58, 95% CI [0.70, 2.46] (the textbook
		// example of the t interval).
		{name: "Student 1908", x: []float64{1.2, 2.4, 1.3, 1.3, 0, 1.0, 1.8, 0.8, 4.6, 1.4}, n: 10, mean: 1.58, half: 0.88, halfTol: 0.005, meanTol: 1e-12},
		{name: "one value", x: []float64{4.25}, n: 1, mean: 4.25, half: nan},
		{name: "none", x: nil, n: 0, mean: nan, half: nan},
		// non-finite values stand for nulls and are left out
		{name: "nulls left out", x: []float64{nan, 1, math.Inf(1), 3, nan}, n: 2, mean: 2, half: 12.706, halfTol: 5e-4},
		{name: "only nulls", x: []float64{nan, math.Inf(-1)}, n: 0, mean: nan, half: nan},
	}
	same := func(got, want, tol float64) bool {
		if math.IsNaN(want) {
			return math.IsNaN(got)
		}
		return math.Abs(got-want) <= tol
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			e := stats.MeanCI95(tc.x)
			if e.N != tc.n || !same(e.Mean, tc.mean, tc.meanTol) || !same(e.CI95, tc.half, tc.halfTol) {
				t.Errorf("got n %d, %v ± %v; want n %d, %v ± %v", e.N, e.Mean, e.CI95, tc.n, tc.mean, tc.half)
			}
			if !math.IsNaN(e.CI95) && (e.Low() != e.Mean-e.CI95 || e.High() != e.Mean+e.CI95) {
				t.Errorf("interval [%v, %v] is not mean ± half-width", e.Low(), e.High())
			}
		})
	}
}

func TestMeanCI95LeavesInputAlone(t *testing.T) {
	x := []float64{math.NaN(), 2, 4}
	stats.MeanCI95(x)
	if !math.IsNaN(x[0]) || x[1] != 2 || x[2] != 4 {
		t.Errorf("input changed: %v", x)
	}
}

func TestTQuantile975(t *testing.T) {
	// Fisher & Yates, Statistical Tables (1938), table III, P = 0.05
	// two-sided, to three decimals.
	for _, tc := range []struct {
		df   int
		want float64
	}{{1, 12.706}, {2, 4.303}, {4, 2.776}, {9, 2.262}, {29, 2.045}} {
		if got := stats.TQuantile975(tc.df); math.Round(got*1000)/1000 != tc.want {
			t.Errorf("t(0.975, %d) = %v, want %v", tc.df, got, tc.want)
		}
	}
}

func BenchmarkMeanCI95(b *testing.B) {
	x := make([]float64, 30)
	for i := range x {
		x[i] = float64(i%7) + 0.25*float64(i)
	}
	b.ReportAllocs()
	var s float64
	for b.Loop() {
		s += stats.MeanCI95(x).CI95
	}
	if !(s > 0) {
		b.Fatal("no result")
	}
}
