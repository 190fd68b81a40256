package agents

import (
	"hoplore/sim"
)

// New builds the agent p describes for one run on net. p must have passed
// Validate. The agent keeps no state between runs: call New once per run.
func New(p Params, net *sim.Net) (sim.Agent, error) {
	if err := p.Validate(); err != nil {
		return nil, err
	}
	k, _ := Lookup(p.Kind) // Validate found it
	return k.New(p, net)
}
