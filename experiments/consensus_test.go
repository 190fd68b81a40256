package experiments

import (
	"strings"
	"testing"
)

// consensus.split_horizon reaches the agent's parameters and its label, and
// is refused for q-network, whose consensus averages parameters.
func TestConsensusSplitHorizon(t *testing.T) {
	doc := `name: sh
duration: 10s
topologies: [ring]
traffic: {loads: [0.5]}
agents:
  - {kind: q-routing, consensus: {every: 1s, split_horizon: true}}
`
	e, err := Parse("sh.yaml", []byte(doc))
	if err != nil {
		t.Fatal(err)
	}
	p := e.Agents[0]
	if p.Consensus == nil || !p.Consensus.SplitHorizon {
		t.Fatalf("split horizon not set: %+v", p.Consensus)
	}
	if got, want := p.Canonical(), "q-routing(consensus=1s/0.5/split-horizon)"; got != want {
		t.Errorf("label %q, want %q", got, want)
	}
	bad := strings.Replace(doc, "kind: q-routing", "kind: q-network", 1)
	if _, err := Parse("sh.yaml", []byte(bad)); err == nil || !strings.Contains(err.Error(), "split_horizon: applies to q-routing only") {
		t.Errorf("q-network with split horizon: error %v", err)
	}
}

// A topology file given where an experiment is expected gets a message that
// says so and how to use it.
func TestTopologyFileGivenAsExperiment(t *testing.T) {
	doc := "name: t\nnodes: [a, b]\nlinks:\n  - {a: a, b: b}\n"
	_, err := Parse("dir/t.yaml", []byte(doc))
	if err == nil || !strings.HasPrefix(err.Error(), "dir/t.yaml:1:1: this is a topology file") || !strings.Contains(err.Error(), "{file: t.yaml}") {
		t.Errorf("error %v", err)
	}
}
