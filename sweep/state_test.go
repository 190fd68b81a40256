package sweep

import (
	"context"
	"reflect"
	"testing"

	"hoplore/agents"
	"hoplore/experiments"
	"hoplore/results"
	"hoplore/sim"
)

// A learner's final state survives the trip through the state files
// exactly: the Q table (Parquet) and network parameters (JSON) read back
// into a new agent give the same state, entry for entry and bit for bit.
func TestStateFilesRoundTrip(t *testing.T) {
	e, err := experiments.Parse("rt.yaml", []byte(`name: rt
duration: 10s
bin: 1s
topologies: [{name: grid, rows: 2, cols: 3}]
traffic: {matrix: uniform, loads: [0.5]}
agents:
  - {kind: q-routing, variant: confidence}
  - {kind: q-routing, variant: predictive}
  - {kind: q-network, hidden: [3]}
`))
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	if err := results.MarkDir(dir, results.Meta{Experiment: e.Name, ExperimentHash: e.Hash}); err != nil {
		t.Fatal(err)
	}
	for _, r := range e.Runs() {
		cfg, err := r.Config()
		if err != nil {
			t.Fatal(err)
		}
		if _, err := sim.Run(cfg); err != nil {
			t.Fatal(err)
		}
		want, _ := agents.ExportState(cfg.Agent)
		tb, err := ExecuteRun(context.Background(), r, "test")
		if err != nil {
			t.Fatal(err)
		}
		if err := results.WritePart(dir, tb); err != nil {
			t.Fatal(err)
		}
		path := results.StatePath(dir, r.Dims.RunID)
		// a fresh agent, loaded, frozen, through a run without traffic
		p := r.Agent
		p.Learning = "frozen"
		a, err := agents.New(p, cfg.Net)
		if err != nil {
			t.Fatal(err)
		}
		if err := startFrom(path, cfg.Net, a); err != nil {
			t.Fatal(err)
		}
		if _, err := sim.Run(&sim.Config{Net: cfg.Net, Agent: a, Duration: 1, Bin: 1, Traffic: sim.Traffic{Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1}}}); err != nil {
			t.Fatal(err)
		}
		got, _ := agents.ExportState(a)
		if !reflect.DeepEqual(got, want) {
			t.Errorf("%s: the state read back differs", r.Dims.Agent)
		}
	}
}
