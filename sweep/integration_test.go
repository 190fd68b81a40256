package sweep

import (
	"context"
	"math"
	"testing"

	"gonum.org/v1/gonum/stat"
	"gonum.org/v1/gonum/stat/distuv"

	"hoplore/experiments"
)

// The bundled single-queue experiment (the shared example, run as written)
// is an M/M/1 queue with μ = 100/s and λ = 80/s: mean sojourn 1/(μ−λ) =
// 50 ms (Kleinrock, Queueing Systems Vol. 1, 1975). The four replicates'
// means must cover it with a 99.9% Student-t interval. Sizes are rounded up
// to whole bytes, which lengthens service by 0.04%: μ = 1e6/(8·1250.5).
func TestSingleQueueExampleMatchesMM1(t *testing.T) {
	if testing.Short() {
		t.Skip("statistical check: run without -short")
	}
	e, err := experiments.Resolve("single-queue")
	if err != nil {
		t.Fatal(err)
	}
	var means []float64
	for _, r := range e.Runs() {
		tab, err := ExecuteRun(context.Background(), r, "test")
		if err != nil {
			t.Fatal(err)
		}
		means = append(means, *tab.Run.DeliveryMeanS)
	}
	mu := 1e6 / (8 / (1 - math.Exp(-1.0/1250)))
	want := 1 / (mu - 80)
	m, s := stat.MeanStdDev(means, nil)
	half := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(len(means) - 1)}.Quantile(0.9995) * s / math.Sqrt(float64(len(means)))
	t.Logf("mean sojourn %.4f ± %.4f s over %d replicates; M/M/1 gives %.4f s", m, half, len(means), want)
	if math.Abs(m-want) > half {
		t.Errorf("mean sojourn %.4f ± %.4f s, want %.4f s", m, half, want)
	}
	// planned: per replicate (144k packets at ρ = 0.8) the sd of the mean
	// is √(2025/144000)/μ ≈ 1.2 ms (the asymptotic variance of the M/M/1
	// sojourn-time mean, Daley 1968), so
	// the 99.9% half-width over 4 replicates is about 12.9·1.2/2 ≈ 7.7 ms:
	// 15% of the mean; twice that is the bound
	if half > 0.3*want {
		t.Errorf("interval ±%.4f s is wider than planned (30%% of the mean)", half)
	}
}

// After one of three bridges of two-region is cut (leaving the others at
// about 0.45 utilisation, so the network can carry the load), q-routing and central-adaptive
// reroute and their binned delivery time and loss return to the band
// around the pre-event level (the recovery metric of results.Recover):
// recovery_s is set, and within a few detection-plus-control intervals.
// Shortest path recovers too, after detection and SPF. (Boyan & Littman
// 1994 report that Q-routing "reacted quickly" to a disconnected link.)
func TestAgentsRecoverAfterBridgeCut(t *testing.T) {
	if testing.Short() {
		t.Skip("runs three agents for 120 s each")
	}
	doc := `name: bridge-cut
duration: 120s
warmup: 20s
bin: 2s
seed: 11
topologies: [{name: two-region, bridges: 3}]
traffic:
  loads: [0.3]
agents:
  - shortest-path
  - q-routing
  - central-adaptive
failures:
  - name: cut
    events:
      - {at: 60s, link: [n5, n21], action: down}
`
	e, err := experiments.Parse("bridge-cut.yaml", []byte(doc))
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range e.Runs() {
		tab, err := ExecuteRun(context.Background(), r, "test")
		if err != nil {
			t.Fatal(err)
		}
		if tab.Run.Generated != tab.Run.Delivered+tab.Run.Dropped+tab.Run.InFlight {
			t.Errorf("%s: conservation violated", r.Dims.Agent)
		}
		if len(tab.Recoveries) != 1 {
			t.Fatalf("%s: %d recovery rows, want 1", r.Dims.Agent, len(tab.Recoveries))
		}
		rec := tab.Recoveries[0]
		if rec.RecoveryS == nil {
			t.Errorf("%s: never recovered from the bridge cut (lost %d packets)", r.Dims.Agent, rec.LostPackets)
			continue
		}
		t.Logf("%s: recovered in %.0f s, %d packets lost", r.Dims.Agent, *rec.RecoveryS, rec.LostPackets)
		if *rec.RecoveryS > 20 {
			t.Errorf("%s: took %.0f s to recover", r.Dims.Agent, *rec.RecoveryS)
		}
		if rec.LostPackets == 0 {
			t.Errorf("%s: the cut lost nothing: the test exercised nothing", r.Dims.Agent)
		}
	}
}
