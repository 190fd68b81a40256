package experiments

import (
	"testing"

	"hoplore/agents"
	"hoplore/sim"
)

// TestAgentFieldsSpellable checks that every field of every registered
// agent kind has a type experiment files can spell.
func TestAgentFieldsSpellable(t *testing.T) {
	for _, k := range agents.All() {
		for i := range k.Fields {
			f := &k.Fields[i]
			func() {
				defer func() {
					if r := recover(); r != nil {
						t.Errorf("kind %s: %v", k.Name, r)
					}
				}()
				newAgentValue(f)
			}()
		}
	}
}

// TestControlDelayGoesToCentralKinds checks that a run takes its control
// delay from a central agent and none for a per-node one.
func TestControlDelayGoesToCentralKinds(t *testing.T) {
	src := `name: control
duration: 10s
topologies: [ring]
traffic: {loads: [0.3]}
agents:
  - {kind: central-q, control_delay: 70ms}
  - {kind: central-adaptive}
  - q-routing
  - shortest-path
`
	e, err := Parse("control.yaml", []byte(src))
	if err != nil {
		t.Fatal(err)
	}
	want := map[string]sim.Time{
		"central-q(control_delay=70ms)": 70 * sim.Millisecond,
		"central-adaptive":              agents.Defaults(agents.CentralAdaptiveKind).ControlDelay,
		"q-routing":                     0,
		"shortest-path":                 0,
	}
	for _, r := range e.Runs() {
		cfg, err := r.Config()
		if err != nil {
			t.Fatal(err)
		}
		w, ok := want[r.Dims.Agent]
		if !ok {
			t.Fatalf("unexpected agent %q", r.Dims.Agent)
		}
		if cfg.ControlDelay != w {
			t.Errorf("%s: control delay %v, want %v", r.Dims.Agent, cfg.ControlDelay, w)
		}
		if k, _ := agents.Lookup(r.Agent.Kind); k.Central && cfg.ControlDelay == 0 {
			t.Errorf("%s: a central kind runs with control delay 0", r.Dims.Agent)
		}
	}
}
