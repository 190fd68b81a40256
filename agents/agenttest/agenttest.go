// Package agenttest is the contract every hoplore routing agent passes: a
// table of small hand-built scenarios with known answers (delivery on a
// line, a ring and a grid at low load; no forwarding into a channel the
// agent knows is down; conservation; determinism), plus the graphs and
// traffic helpers the agents' own tests use.
package agenttest

import (
	"reflect"
	"strings"
	"testing"

	"hoplore/agents"
	"hoplore/sim"
)

// Run checks the contract for the agent p describes. Each check is a subtest.
func Run(t *testing.T, p agents.Params) {
	t.Helper()
	if err := p.Validate(); err != nil {
		t.Fatalf("params: %v", err)
	}
	t.Run("kind", func(t *testing.T) { checkKind(t, p) })
	low := []struct {
		name string
		g    *sim.Graph
	}{
		{"line", Line(5)},
		{"ring", Ring(6)},
		{"grid", Grid(3, 3)},
	}
	for _, tc := range low {
		t.Run("delivers/"+tc.name, func(t *testing.T) {
			sc := Scenario{Graph: tc.g, Load: 0.1, Duration: 40 * sim.Second, Warmup: 10 * sim.Second, Seed: 11, ControlDelay: p.ControlDelay}
			r := mustRun(t, sc, p, nil)
			checkConservation(t, r)
			if r.Generated < 100 {
				t.Fatalf("generated %d measured packets, want at least 100 for a meaningful check", r.Generated)
			}
			// at 10% load with 50-packet buffers nothing may be lost
			if d := r.DroppedTotal(); d != 0 {
				t.Errorf("dropped %d of %d packets at low load (by reason %v), want 0", d, r.Generated, r.Dropped)
			}
			// in flight at the end: at most what the last second generated
			if r.InFlight > r.Generated/10 {
				t.Errorf("in flight %d of %d generated: packets are not getting through", r.InFlight, r.Generated)
			}
		})
	}
	t.Run("failure", func(t *testing.T) { checkFailure(t, p) })
	t.Run("node-failure", func(t *testing.T) {
		sc := Scenario{Graph: Grid(3, 3), Load: 0.3, Duration: 30 * sim.Second, Warmup: 5 * sim.Second, Seed: 9, ControlDelay: p.ControlDelay,
			Failures: sim.Failures{Detection: 50 * sim.Millisecond, Events: []sim.FailureEvent{
				{At: 10 * sim.Second, Node: 4, Element: "n4"},
				{At: 20 * sim.Second, Node: 4, Up: true, Element: "n4"},
			}}}
		mon := &monitor{chans: [2]int{-1, -1}}
		r := mustRun(t, sc, p, mon.wrap)
		checkConservation(t, r)
		if mon.knownDown > 0 {
			t.Errorf("forwarded %d packets into a channel its node had detected down", mon.knownDown)
		}
		if r.Delivered < r.Generated/2 {
			t.Errorf("delivered %d of %d with the centre of the grid down for a third of the window", r.Delivered, r.Generated)
		}
	})
	t.Run("deterministic", func(t *testing.T) {
		sc := Scenario{Graph: Grid(3, 3), Load: 0.5, Duration: 20 * sim.Second, Warmup: 5 * sim.Second, Seed: 5, ControlDelay: p.ControlDelay,
			Failures: sim.Failures{Detection: 50 * sim.Millisecond, Events: []sim.FailureEvent{
				{At: 8 * sim.Second, Links: []int{1}, Node: -1, Element: "l1"},
				{At: 14 * sim.Second, Links: []int{1}, Node: -1, Up: true, Element: "l1"},
			}}}
		a := mustRun(t, sc, p, nil)
		b := mustRun(t, sc, p, nil)
		if !reflect.DeepEqual(a, b) {
			t.Errorf("two runs of one config differ: generated %d/%d delivered %d/%d events %d/%d",
				a.Generated, b.Generated, a.Delivered, b.Delivered, a.Events, b.Events)
		}
		checkConservation(t, a)
	})
}

// checkKind checks what the kind's registration promises: its defaults
// pass its checks and label as the bare kind, a central kind builds a
// sim.Central (which takes control_delay) and a per-node kind a
// sim.PerNode, and p's canonical label names every field that differs from
// the defaults.
func checkKind(t *testing.T, p agents.Params) {
	k, ok := agents.Lookup(p.Kind)
	if !ok {
		t.Fatalf("kind %q is not registered", p.Kind)
	}
	d := agents.Defaults(p.Kind)
	if err := d.Validate(); err != nil {
		t.Errorf("defaults of %s fail their own checks: %v", p.Kind, err)
	}
	if got := d.Canonical(); got != p.Kind {
		t.Errorf("defaults label as %q, want %q", got, p.Kind)
	}
	a, err := agents.New(p, sim.Compile(Ring(4)))
	if err != nil {
		t.Fatal(err)
	}
	_, central := a.(sim.Central)
	_, perNode := a.(sim.PerNode)
	if central != k.Central || perNode == k.Central {
		t.Errorf("registered central=%v, but the agent is a sim.Central: %v, a sim.PerNode: %v", k.Central, central, perNode)
	}
	label := p.Canonical()
	for i := range k.Fields {
		f := &k.Fields[i]
		if in := strings.Contains(label, f.Name+"="+f.Text(&p)); in == f.IsDefault(&p) && p.Label == "" {
			t.Errorf("label %q: field %s=%s is default: %v", label, f.Name, f.Text(&p), f.IsDefault(&p))
		}
	}
}

func checkConservation(t *testing.T, r *sim.Result) {
	t.Helper()
	if got := r.Delivered + r.DroppedTotal() + r.InFlight; got != r.Generated {
		t.Errorf("conservation: delivered %d + dropped %d + in flight %d = %d, generated %d",
			r.Delivered, r.DroppedTotal(), r.InFlight, got, r.Generated)
	}
}

// mustRun builds the agent, wraps it with w (if not nil) and runs sc.
func mustRun(t *testing.T, sc Scenario, p agents.Params, w func(sim.Agent) sim.Agent) *sim.Result {
	t.Helper()
	if err := sc.Graph.Validate(); err != nil {
		t.Fatal(err)
	}
	net := sim.Compile(sc.Graph)
	a, err := agents.New(p, net)
	if err != nil {
		t.Fatal(err)
	}
	if w != nil {
		a = w(a)
	}
	r, err := sim.Run(sc.Config(net, a))
	if err != nil {
		t.Fatal(err)
	}
	return r
}

// RunScenario runs sc with the agent p describes and returns the result.
func RunScenario(t testing.TB, sc Scenario, p agents.Params) *sim.Result {
	t.Helper()
	net := sim.Compile(sc.Graph)
	a, err := agents.New(p, net)
	if err != nil {
		t.Fatal(err)
	}
	r, err := sim.Run(sc.Config(net, a))
	if err != nil {
		t.Fatal(err)
	}
	return r
}

// checkFailure cuts one link of a ring at moderate load and checks that the
// agent never forwards into a channel it knows is down, and that the only
// link_down drops are what the channel held when it failed plus what was sent
// into it before the agent could know.
func checkFailure(t *testing.T, p agents.Params) {
	const (
		fail      = 20 * sim.Second
		repair    = 35 * sim.Second
		detection = 50 * sim.Millisecond
		link      = 2 // n2–n3 on the ring
	)
	sc := Scenario{Graph: Ring(6), Load: 0.4, Duration: 50 * sim.Second, Warmup: 5 * sim.Second, Seed: 3, ControlDelay: p.ControlDelay,
		Failures: sim.Failures{Detection: detection, Events: []sim.FailureEvent{
			{At: fail, Links: []int{link}, Node: -1, Element: "n2-n3"},
			{At: repair, Links: []int{link}, Node: -1, Up: true, Element: "n2-n3"},
		}}}
	mon := &monitor{chans: [2]int{2 * link, 2*link + 1}, fail: fail, repair: repair}
	r := mustRun(t, sc, p, mon.wrap)
	checkConservation(t, r)
	if mon.knownDown > 0 {
		t.Errorf("forwarded %d packets into a channel its node had detected down", mon.knownDown)
	}
	// What could legitimately be lost on the failed link: per channel, the
	// queue (Buffer) plus the packet being transmitted plus those
	// propagating (at most 1 at 1 ms), plus every send into it after the
	// failure and before the agent could know.
	bound := int64(2*(Buffer+2)) + mon.blindSends
	if got := r.Dropped[sim.LinkDown]; got > bound {
		t.Errorf("dropped_link_down %d, want at most %d (held at failure + %d blind sends)", got, bound, mon.blindSends)
	}
	if mon.central {
		// a controller learns of the failure from its next snapshot (at most
		// every + control_delay) and installs control_delay later
		deadline := fail + p.Every + 2*p.ControlDelay + sim.Millisecond
		if mon.lastBlind > deadline {
			t.Errorf("controller still routed into the failed link at %.3fs, want none after %.3fs",
				mon.lastBlind.Seconds(), deadline.Seconds())
		}
	}
	if r.Delivered == 0 {
		t.Fatal("delivered nothing")
	}
	// the ring stays connected: after the reaction time nearly everything
	// gets through
	if lossRate := float64(r.DroppedTotal()) / float64(r.Generated); lossRate > 0.05 {
		t.Errorf("loss rate %.3f with one ring link down, want at most 0.05", lossRate)
	}
}

// monitor wraps an agent to watch decisions into the channels of one link.
type monitor struct {
	chans        [2]int
	fail, repair sim.Time
	central      bool
	knownDown    int64    // per-node: sends into a channel the node believes down
	blindSends   int64    // sends into the failed channels while they are down
	lastBlind    sim.Time // time of the last such send
}

func (m *monitor) isWatched(c int) bool { return c == m.chans[0] || c == m.chans[1] }

func (m *monitor) saw(c int, now sim.Time) {
	if m.isWatched(c) && now >= m.fail && now < m.repair {
		m.blindSends++
		m.lastBlind = now
	}
}

func (m *monitor) wrap(a sim.Agent) sim.Agent {
	switch a := a.(type) {
	case sim.PerNode:
		return &perNodeWrap{PerNode: a, m: m}
	case sim.Central:
		m.central = true
		return &centralWrap{Central: a, m: m}
	}
	return a
}

type perNodeWrap struct {
	sim.PerNode
	m *monitor
}

func (w *perNodeWrap) Node(v *sim.NodeView) sim.Router {
	return &routerWrap{r: w.PerNode.Node(v), v: v, m: w.m}
}

type routerWrap struct {
	r sim.Router
	v *sim.NodeView
	m *monitor
}

func (w *routerWrap) Route(p *sim.Packet) int {
	c := w.r.Route(p)
	if c >= 0 {
		if !w.v.Up(c) {
			w.m.knownDown++
		}
		w.m.saw(c, w.v.Now())
	}
	return c
}

func (w *routerWrap) Arrived(p *sim.Packet, in int) {
	if a, ok := w.r.(sim.Arrivals); ok {
		a.Arrived(p, in)
	}
}

func (w *routerWrap) Receive(m *sim.Message, in int) {
	if a, ok := w.r.(sim.Receiver); ok {
		a.Receive(m, in)
	}
}

func (w *routerWrap) Dropped(p *sim.Packet, out int, reason sim.DropReason) {
	if a, ok := w.r.(sim.Dropper); ok {
		a.Dropped(p, out, reason)
	}
}

func (w *routerWrap) Detected(out int, up bool) {
	if a, ok := w.r.(sim.Detector); ok {
		a.Detected(out, up)
	}
}

func (w *routerWrap) LinkChanged(link int, up bool) {
	if a, ok := w.r.(sim.LinkStater); ok {
		a.LinkChanged(link, up)
	}
}

func (w *routerWrap) Timer(tag int) {
	if a, ok := w.r.(sim.Timed); ok {
		a.Timer(tag)
	}
}

type centralWrap struct {
	sim.Central
	m *monitor
	v *sim.ControlView
}

func (w *centralWrap) Start(v *sim.ControlView) {
	w.v = v
	w.Central.Start(v)
}

func (w *centralWrap) Route(node int, p *sim.Packet) int {
	c := w.Central.Route(node, p)
	if c >= 0 {
		w.m.saw(c, w.v.Now())
	}
	return c
}

func (w *centralWrap) Timer(tag int) {
	if a, ok := w.Central.(sim.Timed); ok {
		a.Timer(tag)
	}
}
