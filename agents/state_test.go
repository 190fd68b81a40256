package agents_test

import (
	"reflect"
	"testing"

	"hoplore/agents"
	"hoplore/agents/agenttest"
	"hoplore/sim"
)

// train runs p on sc and returns the agent's learned state.
func train(t *testing.T, sc agenttest.Scenario, net *sim.Net, p agents.Params, start *agents.State) *agents.State {
	t.Helper()
	a, err := agents.New(p, net)
	if err != nil {
		t.Fatal(err)
	}
	if start != nil {
		if err := agents.StartFrom(a, start); err != nil {
			t.Fatal(err)
		}
	}
	if _, err := sim.Run(sc.Config(net, a)); err != nil {
		t.Fatal(err)
	}
	st, ok := agents.ExportState(a)
	if !ok {
		t.Fatalf("%s exports no state", p.Kind)
	}
	return st
}

var trainScenario = agenttest.Scenario{Graph: agenttest.Grid(3, 3), Load: 0.6, Duration: 30 * sim.Second, Warmup: sim.Second, Seed: 21,
	Failures: sim.Failures{Detection: 50 * sim.Millisecond, Events: []sim.FailureEvent{
		{At: 10 * sim.Second, Links: []int{1}, Node: -1, Element: "l1"},
		{At: 20 * sim.Second, Links: []int{1}, Node: -1, Up: true, Element: "l1"}}}}

// learning: frozen never changes a table: a frozen agent started from a
// trained state ends a run with failures, returns and consensus rounds with
// exactly that state, and a learning one does not.
func TestFrozenNeverChanges(t *testing.T) {
	cons := &agents.Consensus{Every: sim.Second, Weight: 0.5}
	loss := agents.Objective{Name: agents.ObjectiveLoss}
	util := agents.Objective{Name: agents.ObjectiveUtilisation}
	mix := agents.Objective{Name: agents.ObjectiveMix, Mix: agents.Mix{Delay: 1, Loss: 5, Utilisation: 1}}
	for _, tc := range []struct {
		kind, variant string
		objective     agents.Objective
	}{{agents.QRoutingKind, "plain", agents.Objective{}}, {agents.QRoutingKind, "confidence", agents.Objective{}},
		{agents.QRoutingKind, "dual", agents.Objective{}}, {agents.QNetworkKind, "", agents.Objective{}},
		{agents.QRoutingKind, "plain", loss}, {agents.QRoutingKind, "predictive", util}, {agents.QRoutingKind, "confidence", mix},
		{agents.QRoutingKind, "dual", mix}} {
		t.Run(tc.kind+"/"+tc.variant+"/"+tc.objective.String(), func(t *testing.T) {
			if testing.Short() && tc.kind == agents.QNetworkKind {
				t.Skip("q-network takes seconds")
			}
			net := sim.Compile(trainScenario.Graph)
			p := agents.Defaults(tc.kind)
			if tc.variant != "" {
				p.Variant = tc.variant
			}
			if tc.objective.Name != "" {
				p.Objective = tc.objective
			}
			p.Consensus = cons
			trained := train(t, trainScenario, net, p, nil)
			other := trainScenario
			other.Seed = 99
			p.Learning = "frozen"
			after := train(t, other, net, p, trained)
			if !reflect.DeepEqual(after, trained) {
				t.Errorf("a frozen run changed the learned state")
			}
			p.Learning = "on"
			if again := train(t, other, net, p, trained); reflect.DeepEqual(again, trained) {
				t.Errorf("a learning run left the state unchanged: the check above proves nothing")
			}
		})
	}
}

// recorder wraps a per-node agent and records every decision with the
// channels its node believed up.
type recorder struct {
	inner sim.PerNode
	log   *[]decision
}

type decision struct {
	node, dst, chosen int
	up                []int
}

func (w recorder) Name() string { return w.inner.Name() }
func (w recorder) Node(v *sim.NodeView) sim.Router {
	return recRouter{Router: w.inner.Node(v), v: v, log: w.log}
}

type recRouter struct {
	sim.Router
	v   *sim.NodeView
	log *[]decision
}

func (r recRouter) Route(p *sim.Packet) int {
	c := r.Router.Route(p)
	var up []int
	for _, o := range r.v.Out() {
		if r.v.Up(o) {
			up = append(up, o)
		}
	}
	*r.log = append(*r.log, decision{node: r.v.ID(), dst: p.Dst, chosen: c, up: up})
	return c
}

// A frozen q-routing agent loaded from a training run makes exactly the
// choices the trained tables make (Boyan & Littman 1994's greedy policy:
// the usable channel of least Q, lowest index on ties), decision by
// decision, over a whole run with a failure on other traffic.
func TestFrozenMakesTheTrainedChoices(t *testing.T) {
	for _, variant := range []string{"plain", "confidence"} {
		t.Run(variant, func(t *testing.T) {
			net := sim.Compile(trainScenario.Graph)
			p := agents.Defaults(agents.QRoutingKind)
			p.Variant = variant
			trained := train(t, trainScenario, net, p, nil)
			q := map[[2]int]float64{} // (node·N+dst, channel) → Q
			for _, e := range trained.Q {
				q[[2]int{e.Node*net.NumNodes() + e.Destination, e.Channel}] = e.Value
			}
			p.Learning = "frozen"
			a, err := agents.New(p, net)
			if err != nil {
				t.Fatal(err)
			}
			if err := agents.StartFrom(a, trained); err != nil {
				t.Fatal(err)
			}
			var log []decision
			sc := trainScenario
			sc.Seed = 7
			if _, err := sim.Run(sc.Config(net, recorder{inner: a.(sim.PerNode), log: &log})); err != nil {
				t.Fatal(err)
			}
			if len(log) < 1000 {
				t.Fatalf("only %d decisions", len(log))
			}
			bad := 0
			for _, d := range log {
				want := sim.NoRoute
				best := 0.0
				for _, c := range d.up {
					if v := q[[2]int{d.node*net.NumNodes() + d.dst, c}]; want == sim.NoRoute || v < best {
						want, best = c, v
					}
				}
				if d.chosen != want {
					if bad++; bad <= 5 {
						t.Errorf("node %d for %d: chose channel %d, the trained table says %d", d.node, d.dst, d.chosen, want)
					}
				}
			}
			if bad > 0 {
				t.Errorf("%d of %d decisions differ from the trained tables", bad, len(log))
			}
		})
	}
}

// StartFrom refuses a state that does not fit the agent.
func TestStartFromRefuses(t *testing.T) {
	net := sim.Compile(agenttest.Grid(3, 3))
	small := sim.Compile(agenttest.Ring(4))
	p := agents.Defaults(agents.QRoutingKind)
	a, _ := agents.New(p, net)
	st, _ := agents.ExportState(a) // no nodes built: an empty table
	b, _ := agents.New(p, small)
	lp := agents.Defaults(agents.QRoutingKind)
	lp.Objective.Name = agents.ObjectiveLoss
	l, _ := agents.New(lp, net)
	tests := []struct {
		name  string
		agent sim.Agent
		st    *agents.State
	}{
		{"other variant", a, &agents.State{Kind: agents.QRoutingKind, Variant: "dual"}},
		{"other kind", a, &agents.State{Kind: agents.QNetworkKind}},
		{"delay state, loss agent", l, &agents.State{Kind: agents.QRoutingKind, Variant: "plain"}},
		{"loss state, delay agent", a, &agents.State{Kind: agents.QRoutingKind, Variant: "plain", Objective: "loss"}},
		{"other mix", l, &agents.State{Kind: agents.QRoutingKind, Variant: "plain", Objective: "mix/delay=1/loss=2"}},
		{"bigger topology", b, &agents.State{Kind: agents.QRoutingKind, Variant: "plain", Q: []agents.QEntry{{Node: 8, Destination: 0, Channel: 20}}}},
	}
	for _, tc := range tests {
		if err := agents.StartFrom(tc.agent, tc.st); err == nil {
			t.Errorf("%s: accepted", tc.name)
		}
	}
	sp, _ := agents.New(agents.Defaults(agents.ShortestPathKind), net)
	if err := agents.StartFrom(sp, st); err == nil {
		t.Errorf("shortest-path accepted a learned state")
	}
	if _, ok := agents.ExportState(sp); ok {
		t.Errorf("shortest-path exported a learned state")
	}
}
