package report

import (
	"math"
	"path/filepath"
	"testing"

	"hoplore/results"
	"hoplore/results/resultstest"
)

// TestLoadReadsResultsTables writes real result tables with the results
// package (parts, then Finalize) and checks that Load reads every value
// the report uses exactly as the results package's own typed readers do.
func TestLoadReadsResultsTables(t *testing.T) {
	dir := t.TempDir()
	net := resultstest.Net()
	cfg := resultstest.Config(net)
	for _, ag := range []string{"shortest-path", "q-routing"} {
		for rep := range 3 {
			r := resultstest.Run(net, rep, ag == "q-routing" && rep == 2)
			tb := results.FromRun(resultstest.Dims(ag, 0.5, rep), net, cfg, r, 1, "v-test")
			if err := results.WritePart(dir, tb); err != nil {
				t.Fatal(err)
			}
		}
	}
	if err := results.Finalize(dir, nil, results.Meta{Version: "v-test", Experiment: "square-sweep", ExperimentHash: "h"}); err != nil {
		t.Fatal(err)
	}
	d, err := Load(dir)
	if err != nil {
		t.Fatal(err)
	}
	nf := func(p *float64) float64 {
		if p == nil {
			return math.NaN()
		}
		return *p
	}
	same := func(what string, got, want float64) {
		t.Helper()
		if !(got == want || (math.IsNaN(got) && math.IsNaN(want))) {
			t.Errorf("%s: got %v, want %v", what, got, want)
		}
	}
	runs, err := results.ReadRuns(filepath.Join(dir, results.RunsFile))
	if err != nil {
		t.Fatal(err)
	}
	if len(d.Runs) != len(runs) || d.Experiment != "square-sweep" {
		t.Fatalf("runs: got %d (experiment %q), want %d", len(d.Runs), d.Experiment, len(runs))
	}
	nullSeen := false
	for i, r := range runs {
		g := d.Runs[i]
		if g.Cell != (Cell{r.Topology, r.Agent, r.Load, r.Failure}) || g.Replicate != r.Replicate {
			t.Errorf("run %d: dims %+v, want %+v", i, g.Cell, r.Dims)
		}
		if g.Seed != r.Seed {
			t.Errorf("run %d: seed %d, want %d (unsigned 64-bit, exact)", i, g.Seed, r.Seed)
		}
		// every numeric column of the schema reads back as the results
		// package wrote it
		for _, c := range results.Runs.Columns {
			if !c.Number() {
				continue
			}
			want, ok := c.Float(&r)
			if !ok {
				want = math.NaN()
			}
			same(c.Name, g.Value(c.Name), want)
		}
		nullSeen = nullSeen || r.DeliveryMeanS == nil
	}
	if !nullSeen {
		t.Error("fixture has no null delivery time: the null path is untested")
	}
	series, err := results.ReadSeries(filepath.Join(dir, results.SeriesFile))
	if err != nil {
		t.Fatal(err)
	}
	if len(series) != len(d.Series) {
		t.Fatalf("series: got %d rows, want %d", len(d.Series), len(series))
	}
	for i, s := range series {
		g := d.Series[i]
		same("t_start_s", g.Start, s.TStartS)
		same("t_end_s", g.End, s.TEndS)
		same("delivery_mean_s", g.DeliveryMean, nf(s.DeliveryMeanS))
		same("dropped", float64(g.Dropped), float64(s.Dropped))
		same("util_max", g.UtilMax, s.UtilMax)
	}
	links, err := results.ReadLinks(filepath.Join(dir, results.LinksFile))
	if err != nil {
		t.Fatal(err)
	}
	if len(links) != len(d.Channels) {
		t.Fatalf("links: got %d rows, want %d", len(d.Channels), len(links))
	}
	for i, l := range links {
		g := d.Channels[i]
		if g.From != l.From || g.To != l.To {
			t.Errorf("link %d: %s→%s, want %s→%s", i, g.From, g.To, l.From, l.To)
		}
		same("util", g.Util, l.Util)
		same("down_s", g.Down, l.DownS)
	}
	recs, err := results.ReadRecoveries(filepath.Join(dir, results.RecoveriesFile))
	if err != nil {
		t.Fatal(err)
	}
	if len(recs) != len(d.Recoveries) || len(recs) == 0 {
		t.Fatalf("recoveries: got %d rows, want %d (> 0)", len(d.Recoveries), len(recs))
	}
	for i, r := range recs {
		g := d.Recoveries[i]
		if g.Element != r.Element || g.Action != r.Action {
			t.Errorf("recovery %d: %s %s, want %s %s", i, g.Element, g.Action, r.Element, r.Action)
		}
		same("at_s", g.At, r.AtS)
		same("recovery_s", g.Recovery, nf(r.RecoveryS))
		same("lost_packets", float64(g.Lost), float64(r.LostPackets))
	}
	// the report's aggregation agrees with summary.parquet, computed by the
	// results package on its own
	sum, err := results.ReadSummary(filepath.Join(dir, results.SummaryFile))
	if err != nil {
		t.Fatal(err)
	}
	for _, col := range results.Charted() {
		name := col.Name
		found := 0
		panels, err := LoadCurves(d, name)
		if err != nil {
			t.Fatal(err)
		}
		for _, p := range panels {
			for _, c := range p.Curves {
				for _, pt := range c.Points {
					for _, r := range sum {
						if r.Topology == p.Topology && r.Failure == p.Failure && r.Agent == c.Agent && r.Load == pt.X {
							found++
							mean, ci := r.MeanCI95(name)
							if !close(pt.Est.Mean, nf(mean)) || !close(pt.Est.CI95, nf(ci)) {
								t.Errorf("%s %s: got %v ± %v, summary.parquet %v ± %v", name, c.Agent, pt.Est.Mean, pt.Est.CI95, nf(mean), nf(ci))
							}
						}
					}
				}
			}
		}
		if found != len(sum) {
			t.Errorf("%s: matched %d of %d summary rows", name, found, len(sum))
		}
	}
	// and the whole report builds from them
	if err := Write(dir, Options{}); err != nil {
		t.Fatal(err)
	}
}
