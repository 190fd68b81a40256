package results_test

import (
	"fmt"
	"os"
	"path/filepath"

	"hoplore/results"
	"hoplore/results/resultstest"
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
	fmt.Printf("summary: %d cell, loss %.5f ± %.5f\n", len(sum), *sum[0].LossRateMean, *sum[0].LossRateCI95)
	// Output:
	// finished runs: 3
	// shortest-path/0.5/r0: loss 0.0430, throughput 76000 bit/s
	// shortest-path/0.5/r1: loss 0.0440, throughput 76000 bit/s
	// shortest-path/0.5/r2: loss 0.0449, throughput 76000 bit/s
	// mill-quarry down at 60s: 60 lost, recovered: false
	// summary: 1 cell, loss 0.04396 ± 0.00237
}
