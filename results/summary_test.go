package results_test

import (
	"fmt"
	"math"
	"testing"

	"hoplore/results"
)

func TestMeanCI95(t *testing.T) {
	// Values 1..10: mean 5.5, s = 3.0277, t(0.975, 9) = 2.2622, half-width
	// 2.2622·3.0277/√10 = 2.1659 (hand computation; the t quantiles here
	// are standard Student t table values, recalled from memory, and the
	// 1..10 case is also worked in the project's verified notes on gonum).
	x := []float64{1, 2, 3, 4, 5, 6, 7, 8, 9, 10}
	m, h := results.MeanCI95(x)
	if *m != 5.5 || math.Abs(*h-2.1659) > 5e-5 {
		t.Errorf("1..10: got mean %g half-width %g, want 5.5 2.1659", *m, *h)
	}
	// Two values 1, 3: mean 2, s = √2, t(0.975, 1) = 12.706 (table value):
	// half-width 12.706·√2/√2 = 12.706.
	m, h = results.MeanCI95([]float64{1, 3})
	if *m != 2 || math.Abs(*h-12.706) > 5e-4 {
		t.Errorf("1, 3: got %g ± %g, want 2 ± 12.706", *m, *h)
	}
	m, h = results.MeanCI95([]float64{4.25})
	if *m != 4.25 || h != nil {
		t.Errorf("one value: got %v %v, want 4.25 and null", *m, h)
	}
	if m, h = results.MeanCI95(nil); m != nil || h != nil {
		t.Errorf("no values: got %v %v", m, h)
	}
}

func TestSummarize(t *testing.T) {
	cell := func(agent string, load float64, rep int, mean *float64, tput float64) results.RunRow {
		return results.RunRow{
			Dims:          results.Dims{Experiment: "e", Topology: "ring", Agent: agent, Load: load, Failure: "none", Replicate: rep, RunID: fmt.Sprint(agent, load, rep)},
			DeliveryMeanS: mean, ThroughputBps: tput,
		}
	}
	v := func(x float64) *float64 { return &x }
	runs := []results.RunRow{
		cell("b", 1, 0, v(2), 10),
		cell("a", 1, 0, v(1), 1),
		cell("b", 1, 1, nil, 20), // no delivery: skipped in delivery_mean_s
		cell("a", 1, 1, v(3), 3),
		cell("a", 2, 0, nil, 5),
		cell("b", 1, 2, v(4), 30),
	}
	got := results.Summarize(runs)
	if len(got) != 3 {
		t.Fatalf("got %d cells, want 3", len(got))
	}
	// first-appearance order: (b,1), (a,1), (a,2)
	if got[0].Agent != "b" || got[1].Agent != "a" || got[1].Load != 1 || got[2].Load != 2 {
		t.Errorf("cell order: %+v", got)
	}
	b := got[0]
	// delivery: values 2, 4 → mean 3, s = √2, t(0.975,1) = 12.706 → 12.706.
	// throughput: 10, 20, 30 → mean 20, s = 10, t(0.975, 2) = 4.3027 →
	// 4.3027·10/√3 = 24.841 (table values as in TestMeanCI95).
	if b.Replicates != 3 || *b.DeliveryMeanSMean != 3 || math.Abs(*b.DeliveryMeanSCI95-12.706) > 5e-4 ||
		*b.ThroughputBpsMean != 20 || math.Abs(*b.ThroughputBpsCI95-24.841) > 5e-3 {
		t.Errorf("cell b: got %+v", b)
	}
	if b.LossRateMean != nil || b.LossRateCI95 != nil || b.DeliveryP95SMean != nil {
		t.Errorf("cell b: all-null columns should stay null: %+v", b)
	}
	if c := got[2]; c.Replicates != 1 || c.DeliveryMeanSMean != nil || *c.ThroughputBpsMean != 5 || c.ThroughputBpsCI95 != nil {
		t.Errorf("cell (a,2): got %+v", c)
	}
}

func ExampleSummarize() {
	v := func(x float64) *float64 { return &x }
	var runs []results.RunRow
	for rep, d := range []float64{0.020, 0.024, 0.022} {
		runs = append(runs, results.RunRow{
			Dims:          results.Dims{Experiment: "demo", Topology: "ring", Agent: "shortest-path", Load: 0.5, Failure: "none", Replicate: rep},
			DeliveryMeanS: v(d),
			LossRate:      v(0),
			ThroughputBps: 1e6,
		})
	}
	for _, s := range results.Summarize(runs) {
		fmt.Printf("%s %s load %.1f: %d replicates, delivery %.4f ± %.4f s\n",
			s.Topology, s.Agent, s.Load, s.Replicates, *s.DeliveryMeanSMean, *s.DeliveryMeanSCI95)
	}
	// Output:
	// ring shortest-path load 0.5: 3 replicates, delivery 0.0220 ± 0.0050 s
}
