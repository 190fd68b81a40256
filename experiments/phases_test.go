package experiments

import (
	"strings"
	"testing"

	"hoplore/sim"
)

// traffic.phases reach the engine configuration in order, and disorder is
// an error at the offending phase.
func TestTrafficPhases(t *testing.T) {
	doc := `name: falling
duration: 60s
bin: 5s
topologies: [ring]
traffic:
  loads: [0.5]
  phases:
    - {at: 20s, factor: 2}
    - {at: 40s, factor: 0.2}
agents: [shortest-path]
`
	e, err := Parse("falling.yaml", []byte(doc))
	if err != nil {
		t.Fatal(err)
	}
	cfg, err := e.Runs()[0].Config()
	if err != nil {
		t.Fatal(err)
	}
	want := []sim.RatePhase{{At: 20 * sim.Second, Factor: 2}, {At: 40 * sim.Second, Factor: 0.2}}
	if len(cfg.Traffic.Phases) != 2 || cfg.Traffic.Phases[0] != want[0] || cfg.Traffic.Phases[1] != want[1] {
		t.Errorf("phases %+v, want %+v", cfg.Traffic.Phases, want)
	}
	_, err = Parse("falling.yaml", []byte(strings.Replace(doc, "at: 40s", "at: 10s", 1)))
	if err == nil || !strings.HasPrefix(err.Error(), "falling.yaml:9:12: traffic.phases[1].at") {
		t.Errorf("disordered phases: error %v", err)
	}
}
