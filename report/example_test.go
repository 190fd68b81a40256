package report_test

import (
	"fmt"
	"os"
	"path/filepath"

	"hoplore/report"
	"hoplore/results"
	"hoplore/results/resultstest"
)

// The paired t test on Student's (1908) sleep data: differences between two
// drugs for ten patients.
func ExamplePairedTTest() {
	d := []float64{1.2, 2.4, 1.3, 1.3, 0, 1.0, 1.8, 0.8, 4.6, 1.4}
	r := report.PairedTTest(d)
	fmt.Printf("mean %.2f, 95%% CI [%.2f, %.2f], t = %.2f, df = %g, p = %.4f\n",
		r.MeanDiff, r.MeanDiff-r.CI95, r.MeanDiff+r.CI95, r.T, r.DF, r.P)
	w := report.WilcoxonSignedRank(d)
	fmt.Printf("Wilcoxon: n = %d, W+ = %g, exact p = %.4f\n", w.N, w.WPlus, w.P)
	// Output:
	// mean 1.58, 95% CI [0.70, 2.46], t = 4.06, df = 9, p = 0.0028
	// Wilcoxon: n = 9, W+ = 45, exact p = 0.0039
}

// Compare pairs two agents' runs by replicate in every cell and tests the
// differences; PrintComparisons shows them as a table. Here the differences
// are −4, −3, −2, −3 ms: mean −3, s = 0.816, t = −7.35 on 3 degrees of
// freedom, 95% CI −3 ± 3.182·0.408 (computed by hand); all four negative,
// so W+ = 0 and the exact two-sided Wilcoxon p = 2/16.
func ExampleCompare() {
	d := &report.Data{Dir: "example", Experiment: "example"}
	fast := []float64{0.010, 0.012, 0.011, 0.013}
	slow := []float64{0.014, 0.015, 0.013, 0.016}
	for i := range fast {
		d.Runs = append(d.Runs,
			report.NewRun(report.Cell{Topology: "two-region", Agent: "q-routing", Load: 0.8, Failure: "none"}, i,
				map[string]float64{"delivery_mean_s": fast[i], "delivery_p95_s": 2 * fast[i], "loss_rate": 0}),
			report.NewRun(report.Cell{Topology: "two-region", Agent: "shortest-path", Load: 0.8, Failure: "none"}, i,
				map[string]float64{"delivery_mean_s": slow[i], "delivery_p95_s": 2 * slow[i], "loss_rate": 0}))
	}
	rows, err := report.Compare(d, "q-routing", "shortest-path")
	if err != nil {
		fmt.Println(err)
		return
	}
	report.PrintComparisons(os.Stdout, rows)
	// Output:
	// paired comparison, differences A − B over replicates (A = q-routing, B = shortest-path)
	//     topology  failure  load              metric  n  mean A  mean B  A − B  (A − B)/B            95% CI   p (t)    Holm  p (Wilcoxon)    Holm                                 verdict
	//   two-region     none   0.8  delivery mean (ms)  4    11.5    14.5     -3     -20.7%  [-4.299, -1.701]  0.0052  0.0052        0.1250  0.1250                                 A lower
	//   two-region     none   0.8   delivery p95 (ms)  4      23      29     -6     -20.7%  [-8.598, -3.402]  0.0052  0.0052        0.1250  0.1250                                 A lower
	//   two-region     none   0.8            loss (%)  4       0       0     +0          –                 –       –       –             –       –  untested: identical in every replicate
	// Holm: p adjusted by Holm's step-down method (1979) across the cells tested on the same metric; verdicts use it at 0.05.
	// No interval or p-value from fewer than 3 pairs or from differences without spread. p (Wilcoxon): exact signed-rank distribution; ~ marks the normal approximation.
}

// Write reads a result folder and writes the page and the chart files.
// The folder here is written with the results package from hand-made runs
// of two agents.
func ExampleWrite() {
	dir, err := os.MkdirTemp("", "report-example")
	if err != nil {
		fmt.Println(err)
		return
	}
	defer os.RemoveAll(dir)
	net := resultstest.Net()
	cfg := resultstest.Config(net)
	for _, agent := range []string{"shortest-path", "q-routing"} {
		for rep := range 2 {
			r := results.FromRun(resultstest.Dims(agent, 0.5, rep), net, cfg, resultstest.Run(net, rep, false), 1, "example")
			if err := results.WritePart(dir, r); err != nil {
				fmt.Println(err)
				return
			}
		}
	}
	if err := results.Finalize(dir, nil, results.Meta{Version: "example", Experiment: "square-sweep", ExperimentHash: "x"}); err != nil {
		fmt.Println(err)
		return
	}
	if err := report.Write(dir, report.Options{}); err != nil {
		fmt.Println(err)
		return
	}
	files, _ := os.ReadDir(filepath.Join(dir, "report"))
	for _, f := range files {
		fmt.Println(f.Name())
	}
	// Output:
	// delivery-mean.png
	// delivery-mean.svg
	// delivery-p95.png
	// delivery-p95.svg
	// event-square-cut.png
	// event-square-cut.svg
	// index.html
	// learning.png
	// learning.svg
	// links.png
	// links.svg
	// loss.png
	// loss.svg
	// resilience.png
	// resilience.svg
	// util-time.png
	// util-time.svg
}
