package sim_test

import (
	"math"
	"testing"

	"hoplore/sim"
	"hoplore/stats"

	"gonum.org/v1/gonum/stat/distuv"
)

// One long M/M/1 run on its own: the batch-means interval kept from the
// delivery times of its measured window (sim.Batches, stats.RunInterval)
// holds the mean sojourn time 1/(μ−λ) (Kleinrock, Queueing Systems Vol. 1,
// 1975, §3.2). The assertion widens the run's 95% interval to 99.9% (the
// same batches, t(0.9995, k−1) instead of t(0.975, k−1)), and the interval
// must be no wider than planned: about 250,000 packets at ρ = 0.5 give
// ±1.2% at 95% (n = 9604·((1+ρ)/(1−ρ))² per ±2%: Whitt, "Planning queueing
// simulations", Management Science 35, 1989, for the asymptotic variance),
// so 3% is the bound. The coverage over many runs is tested in package
// stats with Lindley's recursion.
func TestBatchMeansIntervalEngine(t *testing.T) {
	if testing.Short() {
		t.Skip("statistical check: run without -short")
	}
	const rho = 0.5
	bw, mean := 10e6, 1000.0
	mu := bw / (8 * expCeilMean(mean))
	lambda := rho * bw / (8 * mean)
	dur := 250_000 / lambda
	net := sim.Compile(lineGraph([]float64{bw}, []sim.Time{0}, 1<<30))
	cfg := &sim.Config{Net: net, Agent: shortest(t, net), Seed: 2024,
		Duration: sim.FromSeconds(dur * 1.05), Warmup: sim.FromSeconds(dur * 0.05), Bin: sim.FromSeconds(dur / 100),
		Traffic: sim.Traffic{Rates: oneFlow(2, 0, 1, lambda), Size: sim.SizeDist{Kind: sim.Exponential, MeanBytes: mean}}}
	r, err := sim.Run(cfg)
	if err != nil {
		t.Fatal(err)
	}
	means, size := r.DeliveryBatches.Means()
	iv, err := stats.RunInterval(means, 0.95)
	if err != nil {
		t.Fatal(err)
	}
	want := 1 / (mu - lambda)
	got := r.DeliverySum / float64(r.Delivered)
	t975 := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(iv.Batches - 1)}.Quantile(0.975)
	t999 := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(iv.Batches - 1)}.Quantile(0.9995)
	t.Logf("%d packets, %d batches of %d: mean %.6g ± %.3g (95%%), lag-1 %.2f; theory %.6g", r.Delivered, iv.Batches, int64(iv.Size)*size, got, iv.Half, iv.Lag1, want)
	if math.Abs(got-want) > iv.Half*t999/t975 {
		t.Errorf("mean delivery %.6g, theory %.6g: outside the 99.9%% batch-means interval ± %.3g", got, want, iv.Half*t999/t975)
	}
	if iv.Half > 0.03*want {
		t.Errorf("half-width %.3g exceeds the planned 3%% of %.6g", iv.Half, want)
	}
}
