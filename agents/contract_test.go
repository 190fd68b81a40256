package agents_test

import (
	"testing"

	"hoplore/agents"
	"hoplore/agents/agenttest"
	"hoplore/sim"
)

// contract lists, for every registered kind, the configurations the
// contract suite checks, each as a change to the kind's defaults (nil: the
// defaults). A new kind adds one line; TestContract fails for a registered
// kind without one.
var contract = map[string][]func(p *agents.Params){
	agents.ShortestPathKind:    {nil},
	agents.CentralAdaptiveKind: {nil, func(p *agents.Params) { p.HoldDown = 0 }},
	agents.CentralQKind:        {nil},
	agents.CentralOptimalKind: {nil, func(p *agents.Params) {
		p.Objective.Name, p.Split, p.MaxShift = agents.ObjectiveMinDelay, agents.SplitPacket, 1
	}},
	agents.QRoutingKind: qRoutingCases(),
	agents.QNetworkKind: qNetworkCases(),
}

// qNetworkCases are the defaults, install_every, exploration with
// consensus, and the objectives: loss and utilisation (each also with
// install_every), and a mix of all three terms with consensus.
func qNetworkCases() []func(p *agents.Params) {
	mix := agents.Objective{Name: agents.ObjectiveMix, Mix: agents.Mix{Delay: 1, Loss: 5, Utilisation: 1}}
	return []func(p *agents.Params){
		nil,
		func(p *agents.Params) { p.InstallEvery = 500 * sim.Millisecond },
		func(p *agents.Params) {
			p.Explore = 0.02
			p.Consensus = &agents.Consensus{Every: 2 * sim.Second, Weight: 0.5}
		},
		func(p *agents.Params) { p.Objective.Name = agents.ObjectiveLoss },
		func(p *agents.Params) { p.Objective.Name, p.InstallEvery = agents.ObjectiveLoss, 500*sim.Millisecond },
		func(p *agents.Params) { p.Objective.Name = agents.ObjectiveUtilisation },
		func(p *agents.Params) { p.Objective.Name, p.InstallEvery = agents.ObjectiveUtilisation, 2*sim.Second },
		func(p *agents.Params) {
			p.Objective = mix
			p.Consensus = &agents.Consensus{Every: 2 * sim.Second, Weight: 0.5}
		},
	}
}

// qRoutingCases are every variant with either feedback, consensus, and
// every variant under the loss objective with in-band feedback, the
// utilisation objective and a mix of all three terms; the loss objective
// once with install_every, once with give_up_after; the utilisation
// objective with install_every; the mix with
// consensus.
func qRoutingCases() []func(p *agents.Params) {
	var cs []func(p *agents.Params)
	for _, v := range []string{"plain", "predictive", "dual", "confidence"} {
		for _, f := range []string{"instant", "in-band"} {
			cs = append(cs, func(p *agents.Params) { p.Variant, p.Feedback = v, f })
		}
	}
	mix := agents.Objective{Name: agents.ObjectiveMix, Mix: agents.Mix{Delay: 1, Loss: 5, Utilisation: 1}}
	for _, v := range []string{"plain", "predictive", "dual", "confidence"} {
		cs = append(cs,
			func(p *agents.Params) { p.Variant, p.Feedback, p.Objective.Name = v, "in-band", agents.ObjectiveLoss },
			func(p *agents.Params) { p.Variant, p.Objective.Name = v, agents.ObjectiveUtilisation },
			func(p *agents.Params) { p.Variant, p.Objective = v, mix })
	}
	cs = append(cs, func(p *agents.Params) { p.Objective.Name, p.InstallEvery = agents.ObjectiveLoss, 500*sim.Millisecond })
	cs = append(cs, func(p *agents.Params) { p.Objective.Name, p.InstallEvery = agents.ObjectiveUtilisation, 2*sim.Second })
	cs = append(cs, func(p *agents.Params) { p.Objective.Name, p.GiveUpAfter = agents.ObjectiveLoss, sim.Second })
	cs = append(cs, func(p *agents.Params) {
		p.Variant, p.Objective, p.Consensus = "dual", mix, &agents.Consensus{Every: sim.Second, Weight: 0.5}
	})
	return append(cs, func(p *agents.Params) {
		p.Explore = 0.05
		p.Consensus = &agents.Consensus{Every: sim.Second, Weight: 0.5}
	})
}

// contractParams lists the agent configurations the contract suite checks,
// kind by kind in documentation order.
func contractParams(t *testing.T) []agents.Params {
	var ps []agents.Params
	for _, k := range agents.All() {
		cases, ok := contract[k.Name]
		if !ok || len(cases) == 0 {
			t.Errorf("kind %s has no line in the contract table", k.Name)
			continue
		}
		for _, change := range cases {
			p := agents.Defaults(k.Name)
			if change != nil {
				change(&p)
			}
			ps = append(ps, p)
		}
	}
	for name := range contract {
		if _, ok := agents.Lookup(name); !ok {
			t.Errorf("the contract table names %q, which is not a registered kind", name)
		}
	}
	return ps
}

func TestContract(t *testing.T) {
	for _, p := range contractParams(t) {
		t.Run(p.Canonical(), func(t *testing.T) {
			t.Parallel()
			agenttest.Run(t, p)
		})
	}
}
