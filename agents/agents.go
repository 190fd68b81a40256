package agents

import (
	"fmt"

	"hoplore/sim"
)

// New builds the agent p describes for one run on net. p must have passed
// Validate. The agent keeps no state between runs: call New once per run.
func New(p Params, net *sim.Net) (sim.Agent, error) {
	if err := p.Validate(); err != nil {
		return nil, err
	}
	b, ok := builders[p.Kind]
	if !ok {
		return nil, fmt.Errorf("agents: kind %q is not built yet", p.Kind)
	}
	return b(p, net)
}

// builders maps a kind to its constructor; each kind's file registers itself.
var builders = map[string]func(Params, *sim.Net) (sim.Agent, error){}
