package agents_test

import (
	"testing"

	"hoplore/agents"
	"hoplore/agents/agenttest"
	"hoplore/sim"
)

// contractParams lists the agent configurations the contract suite checks.
func contractParams() []agents.Params {
	var ps []agents.Params
	add := func(p agents.Params) { ps = append(ps, p) }
	add(agents.Defaults(agents.ShortestPathKind))
	for _, v := range []string{"plain", "predictive", "dual", "confidence"} {
		for _, f := range []string{"instant", "in-band"} {
			p := agents.Defaults(agents.QRoutingKind)
			p.Variant, p.Feedback = v, f
			add(p)
		}
	}
	p := agents.Defaults(agents.QRoutingKind)
	p.Explore = 0.05
	p.Consensus = &agents.Consensus{Every: sim.Second, Weight: 0.5}
	add(p)
	ca := agents.Defaults(agents.CentralAdaptiveKind)
	add(ca)
	ca.HoldDown = 0
	add(ca)
	add(agents.Defaults(agents.CentralQKind))
	add(agents.Defaults(agents.QNetworkKind))
	qn := agents.Defaults(agents.QNetworkKind)
	qn.Explore = 0.02
	qn.Consensus = &agents.Consensus{Every: 2 * sim.Second, Weight: 0.5}
	add(qn)
	return ps
}

func TestContract(t *testing.T) {
	for _, p := range contractParams() {
		t.Run(p.Canonical(), func(t *testing.T) {
			t.Parallel()
			agenttest.Run(t, p)
		})
	}
}
