package optimum

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/diff/fd"
)

// TestBlocking checks the M/M/1/K blocking probability and mean number in
// the system against the closed forms of Kleinrock, Queueing Systems Vol.
// 1, 1975, §3.6: p_K = (1 − ρ)ρ^K/(1 − ρ^(K+1)), 1/(K+1) at ρ = 1, ρ/(1 + ρ)
// for K = 1; N = ρ/(1 − ρ) − (K+1)ρ^(K+1)/(1 − ρ^(K+1)), K/2 at ρ = 1 (the
// reference values evaluated from the textbook formulas directly, away
// from ρ = 1 where they are accurate).
func TestBlocking(t *testing.T) {
	book := func(rho float64, k int) (b, n float64) {
		K := float64(k)
		if rho == 1 {
			return 1 / (K + 1), K / 2
		}
		rk := math.Pow(rho, K)
		return (1 - rho) * rk / (1 - rk*rho), rho/(1-rho) - (K+1)*rk*rho/(1-rk*rho)
	}
	for _, tc := range []struct {
		rho float64
		k   int
	}{
		{0.8, 10}, {0.8, 1}, {1, 10}, {1.25, 10}, {0.3, 2}, {3, 2}, {0.99, 100}, {1.01, 100}, {0.5, 1000}, {2, 1000}, {1e-3, 1},
	} {
		b, n := book(tc.rho, tc.k)
		gb := Blocking(tc.rho, tc.k)
		gn := meanInSystem(tc.rho, tc.k)
		if tc.rho > 1 {
			gn = float64(tc.k) - gn
		}
		if math.Abs(gb-b) > 1e-12*math.Max(b, 1e-300) || math.Abs(gn-n) > 1e-11*math.Max(n, 1) {
			t.Errorf("ρ %v K %d: B %.15g N %.15g, closed form %.15g %.15g", tc.rho, tc.k, gb, gn, b, n)
		}
	}
	// Values from the closed form by hand (ρ = 0.8, K = 10: 0.023493;
	// ρ = 1.25, K = 10: 0.218794; K = 1: ρ/(1 + ρ)).
	for _, tc := range []struct {
		rho  float64
		k    int
		want float64
	}{{0.8, 10, 0.023493}, {1.25, 10, 0.218794}, {0.8, 1, 0.8 / 1.8}, {1, 10, 1.0 / 11}} {
		if got := Blocking(tc.rho, tc.k); math.Abs(got-tc.want) > 5e-7 {
			t.Errorf("Blocking(%v, %d) = %.7f, want %.6f", tc.rho, tc.k, got, tc.want)
		}
	}
	// Near ρ = 1 the stable form stays continuous where the closed form
	// loses digits: N(1 ± δ) → K/2.
	for _, d := range []float64{1e-6, 1e-9, 1e-12} {
		lo, hi := meanInSystem(1-d, 10), 10-meanInSystem(1+d, 10)
		if math.Abs(lo-5) > 1e-4 || math.Abs(hi-5) > 1e-4 || Blocking(1-d, 10) > 1.0/11 || Blocking(1+d, 10) < 1.0/11 {
			t.Errorf("δ %v: N %v %v, B %v %v", d, lo, hi, Blocking(1-d, 10), Blocking(1+d, 10))
		}
	}
}

// TestLostShareConvex: the lost packets per unit of capacity
// h(ρ) = ρ·B(ρ) of an M/M/1/K queue are convex in ρ over the range the
// solvers use, which makes the expected loss Σ f·B(f/c) a convex cost and
// the Frank–Wolfe bound valid. Checked numerically: h′ from the closed
// form B·(1 + K − N) agrees with gonum's central finite difference of h,
// and is nondecreasing on a grid of step 10⁻³ over ρ ∈ (0, 20], for K
// from 1 to 10⁴; for K = 1 it is h′ = 1 − 1/(1 + ρ)² exactly.
// The unlimited buffer (K = 0 here) loses max(0, ρ − 1).
func TestLostShareConvex(t *testing.T) {
	for _, k := range []int{1, 2, 3, 5, 10, 30, 100, 1000, 10000} {
		prev := 0.0
		for i := 1; i <= 20000; i++ {
			rho := float64(i) * 1e-3
			h, dh := lostShare(rho, k)
			if dh < prev-1e-13 {
				t.Fatalf("K %d: h′(%v) = %.17g below h′ before it %.17g: not convex", k, rho, dh, prev)
			}
			prev = dh
			if math.Abs(h-rho*Blocking(rho, k)) > 1e-15*h {
				t.Fatalf("K %d ρ %v: h %v", k, rho, h)
			}
			if i%97 == 0 {
				num := fd.Derivative(func(x float64) float64 { h, _ := lostShare(x, k); return h }, rho, &fd.Settings{Formula: fd.Central, Step: 1e-6 * rho})
				if math.Abs(num-dh) > 1e-6*math.Max(dh, 1e-9) {
					t.Fatalf("K %d ρ %v: h′ %.12g, finite difference %.12g", k, rho, dh, num)
				}
			}
		}
	}
	// K = 1: h = ρ²/(1 + ρ), h′ = 1 − 1/(1 + ρ)², exactly.
	for _, rho := range []float64{0.1, 1, 3, 20} {
		if _, dh := lostShare(rho, 1); math.Abs(dh-(1-1/((1+rho)*(1+rho)))) > 1e-15 {
			t.Errorf("K 1: h′(%v) = %v, want %v", rho, dh, 1-1/((1+rho)*(1+rho)))
		}
	}
	for _, tc := range [][3]float64{{0.5, 0, 0}, {1, 0, 0}, {1.5, 0.5, 1}} {
		if h, dh := lostShare(tc[0], 0); h != tc[1] || dh != tc[2] {
			t.Errorf("unlimited buffer at ρ %v: h %v h′ %v", tc[0], h, dh)
		}
	}
}

// TestChannelLoss: a channel loses what finds it full plus its link-loss
// share of what it transmits, f·(B + (1 − B)·p) (independent events).
func TestChannelLoss(t *testing.T) {
	b := Blocking(0.8, 10)
	if got, want := ChannelLoss(8, 10, 10, 0.01), 8*(b+(1-b)*0.01); math.Abs(got-want) > 1e-15 {
		t.Errorf("ChannelLoss = %v, want %v", got, want)
	}
	if got := ChannelLoss(8, 10, 0, 0.02); math.Abs(got-0.16) > 1e-15 {
		t.Errorf("unlimited buffer below capacity: %v, want f·p = 0.16", got)
	}
	if got := ChannelLoss(12, 10, 0, 0); math.Abs(got-2) > 1e-14 {
		t.Errorf("unlimited buffer above capacity: %v, want the excess 2", got)
	}
}
