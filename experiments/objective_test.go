package experiments

import (
	"testing"

	"hoplore/agents"
)

// An objective is read as a name or as a weighted mix; the mix reaches the
// agent's parameters and its label, named objectives keep their labels.
func TestObjectiveMix(t *testing.T) {
	doc := `name: mix
duration: 10s
topologies: [ring]
traffic: {loads: [0.5]}
agents:
  - {kind: q-routing, objective: loss}
  - kind: q-routing
    objective:
      mix: {delay: 1, loss: 20}
  - {kind: central-q, objective: {mix: {utilisation: 0.5, delay: 2}}}
`
	e, err := Parse("mix.yaml", []byte(doc))
	if err != nil {
		t.Fatal(err)
	}
	for i, c := range []struct {
		obj   agents.Objective
		label string
	}{
		{agents.Objective{Name: agents.ObjectiveLoss}, "q-routing(objective=loss)"},
		{agents.Objective{Name: agents.ObjectiveMix, Mix: agents.Mix{Delay: 1, Loss: 20}}, "q-routing(objective=mix/delay=1/loss=20)"},
		{agents.Objective{Name: agents.ObjectiveMix, Mix: agents.Mix{Delay: 2, Utilisation: 0.5}}, "central-q(objective=mix/delay=2/utilisation=0.5)"},
	} {
		p := e.Agents[i]
		if p.Objective != c.obj {
			t.Errorf("agents[%d].objective = %+v, want %+v", i, p.Objective, c.obj)
		}
		if got := p.Canonical(); got != c.label {
			t.Errorf("agents[%d] label %q, want %q", i, got, c.label)
		}
	}
}
