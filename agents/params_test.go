package agents_test

import (
	"flag"
	"fmt"
	"os"
	"strings"
	"testing"

	"hoplore/agents"
	"hoplore/sim"
)

var update = flag.Bool("update", false, "rewrite the golden files in testdata")

// paramCases changes one kind's defaults in one way each: every field to a
// non-default value (for the labels) and to a bad one (for the checks).
var paramCases = []struct {
	kind   string
	change func(p *agents.Params)
}{
	{agents.ShortestPathKind, func(p *agents.Params) {}},
	{agents.ShortestPathKind, func(p *agents.Params) { p.Metric = "delay" }},
	{agents.ShortestPathKind, func(p *agents.Params) { p.Metric = "inverse-capacity"; p.ECMP = true }},
	{agents.ShortestPathKind, func(p *agents.Params) { p.SPFDelay = 1500 * sim.Microsecond }},
	{agents.ShortestPathKind, func(p *agents.Params) { p.SPFDelay = 0 }},
	{agents.ShortestPathKind, func(p *agents.Params) { p.Metric = "latency" }},
	{agents.ShortestPathKind, func(p *agents.Params) { p.SPFDelay = -1 }},
	{agents.ShortestPathKind, func(p *agents.Params) { p.Label = "link-state" }},
	{agents.QRoutingKind, func(p *agents.Params) {}},
	{agents.QRoutingKind, func(p *agents.Params) { p.Variant, p.Feedback = "dual", "in-band" }},
	{agents.QRoutingKind, func(p *agents.Params) { p.LearningRate, p.Explore = 0.7, 0.125 }},
	{agents.QRoutingKind, func(p *agents.Params) { p.Consensus = &agents.Consensus{Every: sim.Second, Weight: 0.5} }},
	{agents.QRoutingKind, func(p *agents.Params) {
		p.Consensus = &agents.Consensus{Every: 250 * sim.Millisecond, Weight: 1, SplitHorizon: true}
	}},
	{agents.QRoutingKind, func(p *agents.Params) { p.Variant = "fast" }},
	{agents.QRoutingKind, func(p *agents.Params) { p.Feedback = "late" }},
	{agents.QRoutingKind, func(p *agents.Params) { p.LearningRate = 0 }},
	{agents.QRoutingKind, func(p *agents.Params) { p.LearningRate = 1.5 }},
	{agents.QRoutingKind, func(p *agents.Params) { p.Explore = 1 }},
	{agents.QRoutingKind, func(p *agents.Params) { p.Consensus = &agents.Consensus{Weight: 0.5} }},
	{agents.QRoutingKind, func(p *agents.Params) { p.Consensus = &agents.Consensus{Every: sim.Second, Weight: 2} }},
	{agents.QNetworkKind, func(p *agents.Params) {}},
	{agents.QNetworkKind, func(p *agents.Params) { p.Hidden = []int{16, 8} }},
	{agents.QNetworkKind, func(p *agents.Params) { p.Replay, p.TargetSync = 64, 50 }},
	{agents.QNetworkKind, func(p *agents.Params) {
		p.LearningRate, p.Explore = 0.05, 0.02
		p.Consensus = &agents.Consensus{Every: 2 * sim.Second, Weight: 0.25}
	}},
	{agents.QNetworkKind, func(p *agents.Params) { p.Hidden = nil }},
	{agents.QNetworkKind, func(p *agents.Params) { p.Hidden = []int{4, 2000} }},
	{agents.QNetworkKind, func(p *agents.Params) { p.Replay = 0 }},
	{agents.QNetworkKind, func(p *agents.Params) { p.TargetSync = -3 }},
	{agents.CentralAdaptiveKind, func(p *agents.Params) {}},
	{agents.CentralAdaptiveKind, func(p *agents.Params) { p.Every, p.ControlDelay = 5*sim.Second, 0 }},
	{agents.CentralAdaptiveKind, func(p *agents.Params) { p.HoldDown, p.Smoothing = 0, 0.2 }},
	{agents.CentralAdaptiveKind, func(p *agents.Params) { p.Every = 0 }},
	{agents.CentralAdaptiveKind, func(p *agents.Params) { p.ControlDelay = -sim.Millisecond }},
	{agents.CentralAdaptiveKind, func(p *agents.Params) { p.HoldDown = -sim.Second }},
	{agents.CentralAdaptiveKind, func(p *agents.Params) { p.Smoothing = 0 }},
	{agents.CentralAdaptiveKind, func(p *agents.Params) { p.CostCeiling, p.CostStep = 0, 0 }},
	{agents.CentralAdaptiveKind, func(p *agents.Params) { p.CostCeiling, p.CostStep = 5, 0.25 }},
	{agents.CentralAdaptiveKind, func(p *agents.Params) { p.CostCeiling = 0.5 }},
	{agents.CentralAdaptiveKind, func(p *agents.Params) { p.CostStep = -1 }},
	{agents.CentralOptimalKind, func(p *agents.Params) {}},
	{agents.CentralOptimalKind, func(p *agents.Params) { p.Objective.Name, p.Split = agents.ObjectiveMinDelay, agents.SplitPacket }},
	{agents.CentralOptimalKind, func(p *agents.Params) { p.MaxShift, p.Epsilon, p.Smoothing = 1, 0.01, 0.5 }},
	{agents.CentralOptimalKind, func(p *agents.Params) { p.Objective.Name = "fastest" }},
	{agents.CentralOptimalKind, func(p *agents.Params) { p.Split = "random" }},
	{agents.CentralOptimalKind, func(p *agents.Params) { p.MaxShift = 0 }},
	{agents.CentralOptimalKind, func(p *agents.Params) { p.Epsilon = 0.7 }},
	{agents.CentralOptimalKind, func(p *agents.Params) { p.Objective.Name = agents.ObjectiveUtilisation }},
	{agents.CentralOptimalKind, func(p *agents.Params) { p.Objective.Name = agents.ObjectiveDelay }},
	{agents.CentralOptimalKind, func(p *agents.Params) { p.Objective.Name = agents.ObjectiveLoss }},
	{agents.CentralOptimalKind, func(p *agents.Params) {
		p.Objective = agents.Objective{Name: agents.ObjectiveMix, Mix: agents.Mix{Delay: 1, Loss: 20, Utilisation: 0.5}}
	}},
	{agents.CentralOptimalKind, func(p *agents.Params) {
		p.Objective = agents.Objective{Name: agents.ObjectiveMix, Mix: agents.Mix{Loss: -1}}
	}},
	{agents.CentralQKind, func(p *agents.Params) {}},
	{agents.CentralQKind, func(p *agents.Params) { p.K, p.LearningRate, p.Discount = 5, 0.1, 0 }},
	{agents.CentralQKind, func(p *agents.Params) { p.Explore, p.DropPenalty, p.ControlDelay = 0, 3*sim.Second, sim.Second }},
	{agents.CentralQKind, func(p *agents.Params) { p.K = 17 }},
	{agents.CentralQKind, func(p *agents.Params) { p.LearningRate = 2 }},
	{agents.CentralQKind, func(p *agents.Params) { p.Discount = 1 }},
	{agents.CentralQKind, func(p *agents.Params) { p.Explore = -0.1 }},
	{agents.CentralQKind, func(p *agents.Params) { p.DropPenalty = -1 }},
	{"q-routeing", func(p *agents.Params) {}},
}

// TestParamsGolden pins the agent column's values (a contract of the
// result tables) and the check messages of every field: go test -update
// rewrites testdata/params.golden.
func TestParamsGolden(t *testing.T) {
	var b strings.Builder
	for _, c := range paramCases {
		p := agents.Defaults(c.kind)
		c.change(&p)
		check := "ok"
		if err := p.Validate(); err != nil {
			check = err.Error()
		}
		fmt.Fprintf(&b, "%s\t%s\n", p.Canonical(), check)
	}
	const path = "testdata/params.golden"
	if *update {
		if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (go test -update creates it)", err)
	}
	if b.String() != string(want) {
		t.Errorf("labels or checks differ from %s:\ngot:\n%s\nwant:\n%s", path, b.String(), want)
	}
}
