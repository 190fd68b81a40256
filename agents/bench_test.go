package agents_test

import (
	"testing"

	"hoplore/agents"
	"hoplore/agents/agenttest"
	"hoplore/sim"
)

func benchParams() []agents.Params {
	var ps []agents.Params
	ps = append(ps, agents.Defaults(agents.ShortestPathKind))
	for _, v := range []string{"plain", "predictive", "dual", "confidence"} {
		p := agents.Defaults(agents.QRoutingKind)
		p.Variant = v
		ps = append(ps, p)
	}
	for _, o := range []string{agents.ObjectiveLoss, agents.ObjectiveUtilisation} {
		p := agents.Defaults(agents.QRoutingKind)
		p.Objective.Name = o
		ps = append(ps, p)
	}
	for _, v := range []string{"plain", "predictive", "dual", "confidence"} {
		qm := agents.Defaults(agents.QRoutingKind)
		qm.Variant = v
		qm.Objective = agents.Objective{Name: agents.ObjectiveMix, Mix: agents.Mix{Delay: 1, Loss: 5, Utilisation: 1}}
		ps = append(ps, qm)
	}
	ps = append(ps, agents.Defaults(agents.QNetworkKind)) // hidden [32]
	qn := agents.Defaults(agents.QNetworkKind)
	qn.InstallEvery = 500 * sim.Millisecond
	ps = append(ps, qn)
	qnl := agents.Defaults(agents.QNetworkKind)
	qnl.Objective.Name = agents.ObjectiveLoss
	qnm := agents.Defaults(agents.QNetworkKind)
	qnm.Objective = agents.Objective{Name: agents.ObjectiveMix, Mix: agents.Mix{Delay: 1, Loss: 5, Utilisation: 1}}
	ps = append(ps, qnl, qnm)
	ps = append(ps, agents.Defaults(agents.CentralAdaptiveKind), agents.Defaults(agents.CentralQKind))
	co := agents.Defaults(agents.CentralOptimalKind)
	co.Split = agents.SplitPacket
	return append(ps, agents.Defaults(agents.CentralOptimalKind), co)
}

// benchHook wraps an agent and, at one decision (or arrival) well into a run,
// hands repetitions of the wrapped agent's call on that very packet.
type benchHook struct {
	act      func(call func()) // runs the timed repetitions of call
	at, seen int
	arrivals bool // time Arrived (feedback and learning) instead of Route
	done     bool
	sink     int
}

func (h *benchHook) hit() bool {
	h.seen++
	return h.seen == h.at
}

func (h *benchHook) wrap(a sim.Agent) sim.Agent {
	switch a := a.(type) {
	case sim.PerNode:
		return &benchPerNode{PerNode: a, h: h}
	case sim.Central:
		return &benchCentral{Central: a, h: h}
	}
	return a
}

type benchPerNode struct {
	sim.PerNode
	h *benchHook
}

func (w *benchPerNode) Node(v *sim.NodeView) sim.Router {
	return &benchRouter{r: w.PerNode.Node(v), h: w.h}
}

type benchRouter struct {
	r sim.Router
	h *benchHook
}

func (w *benchRouter) Route(p *sim.Packet) int {
	if !w.h.arrivals && w.h.hit() {
		w.h.act(func() { w.h.sink += w.r.Route(p) })
		w.h.done = true
	}
	return w.r.Route(p)
}

func (w *benchRouter) Arrived(p *sim.Packet, in int) {
	a, ok := w.r.(sim.Arrivals)
	if !ok {
		return
	}
	if w.h.arrivals && w.h.hit() {
		w.h.act(func() { a.Arrived(p, in) })
		w.h.done = true
	}
	a.Arrived(p, in)
}

func (w *benchRouter) Receive(m *sim.Message, in int) {
	if a, ok := w.r.(sim.Receiver); ok {
		a.Receive(m, in)
	}
}

func (w *benchRouter) Dropped(p *sim.Packet, out int, reason sim.DropReason) {
	if a, ok := w.r.(sim.Dropper); ok {
		a.Dropped(p, out, reason)
	}
}

func (w *benchRouter) Detected(out int, up bool) {
	if a, ok := w.r.(sim.Detector); ok {
		a.Detected(out, up)
	}
}

func (w *benchRouter) LinkChanged(link int, up bool) {
	if a, ok := w.r.(sim.LinkStater); ok {
		a.LinkChanged(link, up)
	}
}

func (w *benchRouter) Timer(tag int) {
	if a, ok := w.r.(sim.Timed); ok {
		a.Timer(tag)
	}
}

type benchCentral struct {
	sim.Central
	h *benchHook
}

func (w *benchCentral) Route(node int, p *sim.Packet) int {
	if w.h.hit() {
		route, step := p.Route, p.RouteStep
		w.h.act(func() {
			w.h.sink += w.Central.Route(node, p)
			p.Route, p.RouteStep = route, step
		})
		w.h.done = true
	}
	return w.Central.Route(node, p)
}

func (w *benchCentral) Timer(tag int) {
	if a, ok := w.Central.(sim.Timed); ok {
		a.Timer(tag)
	}
}

// hookRun runs p on g at half load and hands the at-th decision (or
// arrival) to act.
func hookRun(tb testing.TB, g *sim.Graph, p agents.Params, arrivals bool, at int, act func(call func())) {
	net := sim.Compile(g)
	a, err := agents.New(p, net)
	if err != nil {
		tb.Fatal(err)
	}
	h := &benchHook{act: act, at: at, arrivals: arrivals}
	sc := agenttest.Scenario{Graph: g, Load: 0.5, Duration: 30 * sim.Second, Warmup: sim.Second, Seed: 1, ControlDelay: p.ControlDelay}
	if _, err := sim.Run(sc.Config(net, h.wrap(a))); err != nil {
		tb.Fatal(err)
	}
	if !h.done {
		tb.Fatalf("the run made fewer than %d decisions", h.at)
	}
}

func benchRun(b *testing.B, g *sim.Graph, p agents.Params, arrivals bool) {
	b.ReportAllocs()
	b.StopTimer()
	var cpu float64
	hookRun(b, g, p, arrivals, 10000, func(call func()) {
		b.StartTimer()
		start := processorSeconds()
		for i := 0; i < b.N; i++ {
			call()
		}
		if now := processorSeconds(); now > start {
			cpu = now - start
		}
		b.StopTimer()
	})
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N), "ns/decision")
	if cpu > 0 {
		// processor time: on a shared machine wall time also counts the
		// waits for a processor
		b.ReportMetric(cpu*1e9/float64(b.N), "cpu-ns/decision")
	}
}

// BenchmarkDecision times one routing decision of every kind (ns/op is per
// decision) on a 4×4 grid at half load, after 20,000 decisions of learning.
// Decisions must not allocate.
func BenchmarkDecision(b *testing.B) {
	for _, p := range benchParams() {
		b.Run(p.Canonical(), func(b *testing.B) { benchRun(b, agenttest.Grid(4, 4), p, false) })
	}
	b.Run("q-network/boyan-littman-36", func(b *testing.B) {
		benchRun(b, agenttest.BoyanLittmanGrid(), agents.Defaults(agents.QNetworkKind), false)
	})
}

// BenchmarkFeedback times the per-hop learning work of the per-node kinds:
// the arrival handler at the receiving node, its feedback and the sender's
// update (for q-network: a target-network evaluation and four SGD steps).
func BenchmarkFeedback(b *testing.B) {
	for _, p := range benchParams() {
		if p.Kind != agents.QRoutingKind && p.Kind != agents.QNetworkKind {
			continue
		}
		b.Run(p.Canonical(), func(b *testing.B) { benchRun(b, agenttest.Grid(4, 4), p, true) })
	}
}

// TestDecisionsDoNotAllocate fails if a routing decision of any kind, well
// into a run, allocates (house rule: the hot loop allocates nothing). Speed
// is measured by BenchmarkDecision, not asserted here.
func TestDecisionsDoNotAllocate(t *testing.T) {
	if testing.Short() {
		// the full run checks every configuration; -short serves the race
		// detector's run, under which this one took 25 s of the package's
		// time for nothing the race detector looks at
		t.Skip("allocation counts are checked without -short")
	}
	for _, p := range benchParams() {
		var allocs float64
		hookRun(t, agenttest.Grid(4, 4), p, false, 10000, func(call func()) {
			allocs = testing.AllocsPerRun(500, call)
		})
		if allocs != 0 {
			t.Errorf("%s: %.1f allocations per decision, want 0", p.Canonical(), allocs)
		}
	}
}
