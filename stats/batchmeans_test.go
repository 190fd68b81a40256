package stats_test

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"hoplore/stats"
)

func TestBatchMeansByHand(t *testing.T) {
	// 1..11 in 5 batches: the first value is dropped, batches of 2 are
	// (2,3) (4,5) (6,7) (8,9) (10,11) with means 2.5, 4.5, 6.5, 8.5, 10.5:
	// mean 6.5, s = √10 = 3.1623, t(0.975, 4) = 2.776 (Fisher & Yates,
	// Statistical Tables, 1938, table III): half-width 2.776·3.1623/√5 =
	// 3.926; lag-1 autocorrelation of 2.5..10.5 = (16+4+4·0+… )/40: the
	// centred means −4, −2, 0, 2, 4 give Σ d_i d_{i−1} = 8+0+0+8 = 16 over
	// Σ d² = 40, 0.4.
	x := []float64{1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11}
	iv, err := stats.BatchMeans(x, 5, 0.95)
	if err != nil {
		t.Fatal(err)
	}
	if iv.Batches != 5 || iv.Size != 2 || iv.Dropped != 1 || iv.Mean != 6.5 || math.Abs(iv.Half-3.926) > 5e-4 || math.Abs(iv.Lag1-0.4) > 1e-12 {
		t.Errorf("got %+v, want 5 batches of 2, 1 dropped, mean 6.5, half 3.926, lag-1 0.4", iv)
	}
	for _, bad := range []struct {
		x     []float64
		k     int
		level float64
	}{
		{x, 1, 0.95}, {x, 12, 0.95}, {x, 5, 1}, {[]float64{1, math.NaN(), 3, 4}, 2, 0.95},
	} {
		if _, err := stats.BatchMeans(bad.x, bad.k, bad.level); err == nil {
			t.Errorf("BatchMeans(%v, %d, %g): no error", bad.x, bad.k, bad.level)
		}
	}
}

func TestBatchCount(t *testing.T) {
	for _, tc := range []struct{ n, want int }{
		{9, 0}, {10, 10}, {30, 30}, {31, 15}, {45, 22}, {59, 29}, {60, 30}, {61, 20}, {119, 29},
	} {
		if got := stats.BatchCount(tc.n); got != tc.want {
			t.Errorf("BatchCount(%d) = %d, want %d", tc.n, got, tc.want)
		}
	}
}

// mm1Sojourns returns n consecutive M/M/1 sojourn times (service rate 1,
// arrival rate rho) by Lindley's recursion W' = max(0, W + S − A) (Lindley,
// "The theory of queues with a single server", Proc. Cambridge Phil. Soc.
// 48, 1952), started in steady state: the first waiting time is 0 with
// probability 1−ρ and else exponential with rate 1−ρ (Kleinrock, Queueing
// Systems Vol. 1, 1975, §3.2), so there is no transient to delete.
func mm1Sojourns(r *rand.Rand, rho float64, n int) []float64 {
	x := make([]float64, n)
	w := 0.0
	if r.Float64() < rho {
		w = r.ExpFloat64() / (1 - rho)
	}
	for i := range x {
		s := r.ExpFloat64()
		x[i] = w + s
		w = math.Max(0, w+s-r.ExpFloat64()/rho)
	}
	return x
}

// The 95% batch-means interval from one run covers the M/M/1 mean sojourn
// time 1/(μ−λ) (Kleinrock 1975, §3.2) in at least 90% of 200 independent
// runs at ρ = 0.5 and 0.7 (Law & Kelton 2000, §9.5.3, report under-coverage
// as ρ grows; a run here is 100,000 sojourns, 20 batches of 5,000, about 150
// times the sojourns' integrated autocorrelation time (1+ρ)²/(1−ρ)² = 32 at
// ρ = 0.7, the ratio of the asymptotic variance (1+ρ)²/(1−ρ)⁴ to the
// variance 1/(1−ρ)²). Coverage of a correct 95% interval is Binomial(200,
// 0.95)/200, so it is also asserted to miss at least twice (P(≤ 1 miss) <
// 0.001): an interval that never misses is too wide. With -short (for the
// race detector) 100 runs of 20,000 at ρ = 0.5 only, and the floor is
// 95% − 3.29 standard errors of Binomial(100, 0.95)/100 = 87.8%.
func TestBatchMeansCoverageMM1(t *testing.T) {
	runs, n, rhos, floor := 200, 100_000, []float64{0.5, 0.7}, 0.90
	if testing.Short() {
		runs, n, rhos, floor = 100, 20_000, []float64{0.5}, 0.878
	}
	for _, rho := range rhos {
		want := 1 / (1 - rho)
		covered := 0
		lagSum := 0.0
		for i := 0; i < runs; i++ {
			r := rand.New(rand.NewPCG(uint64(i), uint64(rho*1000)))
			iv, err := stats.BatchMeans(mm1Sojourns(r, rho, n), stats.DefaultBatches, 0.95)
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(iv.Mean-want) <= iv.Half {
				covered++
			}
			lagSum += iv.Lag1
		}
		cov := float64(covered) / float64(runs)
		t.Logf("ρ = %.1f: coverage %.1f%% of %d runs of %d sojourns (nominal 95%%), mean lag-1 correlation of batch means %.3f", rho, 100*cov, runs, n, lagSum/float64(runs))
		if cov < floor || covered > runs-2 {
			t.Errorf("ρ = %.1f: coverage %d of %d, want ≥ %.1f%% and at least 2 misses", rho, covered, runs, 100*floor)
		}
	}
}

func ExampleBatchMeans() {
	r := rand.New(rand.NewPCG(1, 2))
	x := make([]float64, 20_000)
	for i := range x {
		x[i] = 5 + r.NormFloat64() // independent values around 5
	}
	iv, _ := stats.BatchMeans(x, stats.DefaultBatches, 0.95)
	fmt.Printf("%d batches of %d: %.2f ± %.2f\n", iv.Batches, iv.Size, iv.Mean, iv.Half)
	// Output: 20 batches of 1000: 5.00 ± 0.02
}

func TestRunInterval(t *testing.T) {
	r := rand.New(rand.NewPCG(8, 8))
	// 45 independent batch means: 22 batches of 2, no regrouping needed.
	x := make([]float64, 45)
	for i := range x {
		x[i] = 1 + 0.1*r.NormFloat64()
	}
	iv, err := stats.RunInterval(x, 0.95)
	if err != nil || iv.Batches != 22 || iv.Size != 2 {
		t.Errorf("independent: got %+v, %v; want 22 batches of 2", iv, err)
	}
	// A series drifting upwards (not stationary) cut into 40 batches of
	// 25: the batch means climb, their lag-1 autocorrelation stays far
	// above Lag1Limit at 20 and 10 batches (about 0.85 and 0.7 for a
	// straight line), so no interval.
	y := make([]float64, 1000)
	for i := range y {
		y[i] = float64(i)/100 + r.NormFloat64()
	}
	means := make([]float64, 40)
	for b := range means {
		for _, v := range y[b*25 : (b+1)*25] {
			means[b] += v / 25
		}
	}
	if iv, err := stats.RunInterval(means, 0.95); err == nil {
		t.Errorf("correlated batch means: got %+v, want an error", iv)
	}
	if _, err := stats.RunInterval(x[:9], 0.95); err == nil {
		t.Errorf("9 batches: no error")
	}
}
