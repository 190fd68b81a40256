package sim_test

import (
	"math"
	"testing"

	"hoplore/agents"
	"hoplore/sim"
)

func spWith(t *testing.T, net *sim.Net, spf sim.Time) sim.Agent {
	p := agents.Defaults(agents.ShortestPathKind)
	p.SPFDelay = spf
	a, err := agents.New(p, net)
	if err != nil {
		t.Fatal(err)
	}
	return a
}

// A triangle a–b–c carrying a→c over the direct link, cut at F. Worked by
// hand (common practice for link-state routing): packets every 10 ms of
// 1000 B at 1 Mbit/s take 8 ms to send, so none queue. At F = 5.0025 s the
// packet generated at 5.000 s is being transmitted: lost (link_down). The
// sender notices at F + 50 ms = 5.0525 s, so the packets of 5.010 … 5.050 s
// go into the dead channel: 5 more link_down. It then knows the channel is
// down but recomputes only SPF delay (100 ms) later, at 5.1525 s: the
// packets of 5.060 … 5.150 s find no route (10 no_route). From 5.160 s they
// go round through b and nothing more is lost, including when the link
// returns.
func TestLinkFailureArithmetic(t *testing.T) {
	g := &sim.Graph{Name: "triangle", Nodes: []sim.Node{{Name: "a"}, {Name: "b"}, {Name: "c"}}, Links: []sim.Link{
		{A: 0, B: 2, Bandwidth: 1e6, Delay: sim.Millisecond, Buffer: 50},
		{A: 0, B: 1, Bandwidth: 1e6, Delay: sim.Millisecond, Buffer: 50},
		{A: 1, B: 2, Bandwidth: 1e6, Delay: sim.Millisecond, Buffer: 50},
	}}
	net := sim.Compile(g)
	F := 5*sim.Second + 2500*sim.Microsecond
	cfg := &sim.Config{Net: net, Agent: spWith(t, net, 100*sim.Millisecond), Seed: 1, Duration: 12 * sim.Second, Warmup: 0, Bin: 500 * sim.Millisecond,
		Traffic: sim.Traffic{Rates: oneFlow(3, 0, 2, 100), Periodic: true, Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1000}},
		Failures: sim.Failures{Detection: 50 * sim.Millisecond, Events: []sim.FailureEvent{
			{At: F, Links: []int{0}, Node: -1, Element: "a-c"},
			{At: F + 3*sim.Second, Links: []int{0}, Node: -1, Up: true, Element: "a-c"}}}}
	r, err := sim.Run(cfg)
	if err != nil {
		t.Fatal(err)
	}
	checkConservation(t, r)
	if got := r.Dropped[sim.LinkDown]; got != 6 {
		t.Errorf("link_down drops %d, want 6", got)
	}
	if got := r.Dropped[sim.NoRouteDrop]; got != 10 {
		t.Errorf("no_route drops %d, want 10", got)
	}
	if got := r.DroppedTotal(); got != 16 {
		t.Errorf("total drops %d, want 16", got)
	}
	// after reconvergence every bin delivers all it generated
	for _, b := range r.Series {
		if b.Start >= 5500*sim.Millisecond && b.End <= 11500*sim.Millisecond && (b.Dropped != 0 || b.Delivered != b.Generated) {
			t.Errorf("bin %v: generated %d delivered %d dropped %d after reconvergence", b.Start.Seconds(), b.Generated, b.Delivered, b.Dropped)
		}
	}
	// a–c was down 3 s in each direction
	if d := r.Channels[0].Down; d != 3*sim.Second {
		t.Errorf("channel a→c down %v, want 3 s", d.Seconds())
	}
}

// A square a–b–c–d carrying a→c through b; b fails and returns. What b
// holds is lost (node_down), what was on the wire to it too (link_down);
// after reconvergence traffic goes through d without loss, and returns
// through b when b is back.
func TestNodeFailureAndReturn(t *testing.T) {
	g := &sim.Graph{Name: "square", Nodes: []sim.Node{{Name: "a"}, {Name: "b"}, {Name: "c"}, {Name: "d"}}, Links: []sim.Link{
		{A: 0, B: 1, Bandwidth: 1e6, Delay: 5 * sim.Millisecond, Buffer: 50},
		{A: 1, B: 2, Bandwidth: 1e6, Delay: 5 * sim.Millisecond, Buffer: 50},
		{A: 2, B: 3, Bandwidth: 1e6, Delay: 5 * sim.Millisecond, Buffer: 50},
		{A: 3, B: 0, Bandwidth: 1e6, Delay: 5 * sim.Millisecond, Buffer: 50},
	}}
	net := sim.Compile(g)
	cfg := &sim.Config{Net: net, Agent: spWith(t, net, 100*sim.Millisecond), Seed: 1, Duration: 20 * sim.Second, Warmup: 0, Bin: sim.Second,
		Traffic: sim.Traffic{Rates: oneFlow(4, 0, 2, 110), Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1000}},
		Failures: sim.Failures{Detection: 50 * sim.Millisecond, Events: []sim.FailureEvent{
			{At: 5 * sim.Second, Node: 1, Element: "b"},
			{At: 12 * sim.Second, Node: 1, Up: true, Element: "b"}}}}
	r, err := sim.Run(cfg)
	if err != nil {
		t.Fatal(err)
	}
	checkConservation(t, r)
	if r.Dropped[sim.NodeDown]+r.Dropped[sim.LinkDown] == 0 {
		t.Errorf("the node failure lost nothing")
	}
	for _, b := range r.Series {
		if (b.Start >= 6*sim.Second && b.End <= 12*sim.Second) || b.Start >= 13*sim.Second && b.End < 20*sim.Second {
			if b.Dropped != 0 || b.Delivered != b.Generated {
				t.Errorf("bin %v: generated %d delivered %d dropped %d after reconvergence", b.Start.Seconds(), b.Generated, b.Delivered, b.Dropped)
			}
		}
	}
	// via b again at the end: a→b carries traffic in the last bin
	if r.Channels[0].Packets == 0 {
		t.Errorf("a→b carried nothing")
	}
}

// Random failure schedules reproduce exactly for a seed and differ between seeds.
func TestRandomFailuresDeterministic(t *testing.T) {
	fill := func(i int, ev *sim.FailureEvent) { ev.Links = []int{i} }
	a := sim.RandomFailures(5, 3, 100*sim.Second, 10*sim.Second, 1000*sim.Second, fill)
	b := sim.RandomFailures(5, 3, 100*sim.Second, 10*sim.Second, 1000*sim.Second, fill)
	c := sim.RandomFailures(6, 3, 100*sim.Second, 10*sim.Second, 1000*sim.Second, fill)
	if len(a) == 0 || len(a) != len(b) {
		t.Fatalf("schedules of one seed: %d and %d events", len(a), len(b))
	}
	for i := range a {
		if a[i].At != b[i].At || a[i].Up != b[i].Up || a[i].Links[0] != b[i].Links[0] {
			t.Fatalf("event %d differs", i)
		}
	}
	if len(c) == len(a) && c[0].At == a[0].At {
		t.Errorf("another seed gave the same schedule")
	}
}

// Traffic phases change the Poisson rate exactly: thinning keeps a Poisson
// process of the new rate (Lewis & Shedler, Simulation of nonhomogeneous
// Poisson processes by thinning, 1979). Counts per phase match rate × time
// within a 99.9% normal interval (Poisson variance = mean).
func TestTrafficPhases(t *testing.T) {
	net := sim.Compile(lineGraph([]float64{100e6}, []sim.Time{0}, 1000))
	cfg := &sim.Config{Net: net, Agent: shortest(t, net), Seed: 4, Duration: 300 * sim.Second, Warmup: 0, Bin: 100 * sim.Second,
		Traffic: sim.Traffic{Rates: oneFlow(2, 0, 1, 200), Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 100},
			Phases: []sim.RatePhase{{At: 100 * sim.Second, Factor: 2.5}, {At: 200 * sim.Second, Factor: 0.25}}}}
	r, err := sim.Run(cfg)
	if err != nil {
		t.Fatal(err)
	}
	for i, want := range []float64{200 * 100, 500 * 100, 50 * 100} {
		got := float64(r.Series[i].Generated)
		if tol := 3.29 * math.Sqrt(want); math.Abs(got-want) > tol {
			t.Errorf("phase %d: %g packets, want %g ± %.0f", i, got, want, tol)
		}
	}
}
