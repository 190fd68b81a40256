package results_test

import (
	"fmt"
	"os"
	"path/filepath"

	"hoplore/results"
	"hoplore/results/resultstest"
	"hoplore/sim"
)

// A sweep stores each finished run as a part, then assembles the tables.
func ExampleFinalize() {
	dir, _ := os.MkdirTemp("", "hoplore-example")
	defer os.RemoveAll(dir)
	meta := results.Meta{Version: "dev", Experiment: "square-sweep", ExperimentHash: "0123abcd"}
	if err := results.MarkDir(dir, meta); err != nil {
		fmt.Println(err)
		return
	}
	net := resultstest.Net()
	cfg := resultstest.Config(net)
	var order []string
	for rep := 0; rep < 3; rep++ {
		d := resultstest.Dims("shortest-path", 0.5, rep)
		t := results.FromRun(d, net, cfg, resultstest.Run(net, rep, false), 0.1, "dev")
		if err := results.WritePart(dir, t); err != nil {
			fmt.Println(err)
			return
		}
		order = append(order, d.RunID)
	}
	done, _ := results.ListParts(dir)
	fmt.Println("finished runs:", len(done))
	if err := results.Finalize(dir, order, meta); err != nil {
		fmt.Println(err)
		return
	}
	runs, _ := results.ReadRuns(filepath.Join(dir, results.RunsFile))
	for _, r := range runs {
		fmt.Printf("%s: loss %.4f, throughput %.0f bit/s\n", r.RunID, *r.LossRate, r.ThroughputBps)
	}
	recs, _ := results.ReadRecoveries(filepath.Join(dir, results.RecoveriesFile))
	fmt.Printf("%s %s at %gs: %d lost, recovered: %v\n", recs[0].Element, recs[0].Action, recs[0].AtS, recs[0].LostPackets, recs[0].RecoveryS != nil)
	sum, _ := results.ReadSummary(filepath.Join(dir, results.SummaryFile))
	loss, half := sum[0].MeanCI95("loss_rate")
	fmt.Printf("summary: %d cell, loss %.5f ± %.5f\n", len(sum), *loss, *half)
	// Output:
	// finished runs: 3
	// shortest-path/0.5/r0: loss 0.0430, throughput 76000 bit/s
	// shortest-path/0.5/r1: loss 0.0440, throughput 76000 bit/s
	// shortest-path/0.5/r2: loss 0.0449, throughput 76000 bit/s
	// mill-quarry down at 60s: 60 lost, recovered: false
	// summary: 1 cell, loss 0.04396 ± 0.00237
}

// A link cut at 105 s in 10 s bins: loss and delay jump, then settle.
func ExampleRecover() {
	mk := func(start int, gen, drop int64, mean float64) sim.Bin {
		del := gen - drop
		return sim.Bin{Start: sim.Time(start) * sim.Second, End: sim.Time(start+10) * sim.Second,
			Generated: gen, Delivered: del, Dropped: drop, DelaySum: float64(del) * mean}
	}
	var series []sim.Bin
	for t := 0; t < 100; t += 10 {
		series = append(series, mk(t, 200, 0, 0.020)) // steady: 20 ms, no loss
	}
	series = append(series,
		mk(100, 200, 40, 0.090), // the cut: queued packets lost, rerouting
		mk(110, 200, 6, 0.031),  // still 3% loss
		mk(120, 200, 0, 0.024),  // back within the band ...
		mk(130, 200, 0, 0.022),
		mk(140, 200, 0, 0.021), // ... three bins in a row
	)
	cut := []sim.FailureEvent{{At: 105 * sim.Second, Node: -1, Element: "c-d"}}
	r := results.Recover(series, cut, 0, 20*sim.Second)
	fmt.Printf("level %.0f ms, band up to %.0f ms and %.0f%% loss\n", r.PreDeliveryMean*1e3, r.MaxDeliveryMean*1e3, r.MaxLossRate*100)
	fmt.Printf("recovered after %.0f s, %d packets lost\n", r.RecoveryS, r.LostPackets)
	// Output:
	// level 20 ms, band up to 25 ms and 1% loss
	// recovered after 15 s, 46 packets lost
}
