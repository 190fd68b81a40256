package sim_test

import (
	"fmt"
	"testing"

	"hoplore/sim"
)

// looper sends the first packet of every flow once round a loop: from node
// 0 (the source) to node 1 and straight back, or, with atHop1, at node 1 to
// node 3 and straight back; every other choice is by hop count.
type looper struct {
	net    *sim.Net
	atHop1 bool
}

func (l *looper) Name() string { return "looper" }
func (l *looper) Node(v *sim.NodeView) sim.Router {
	return &loopRouter{l: l, id: v.ID()}
}

type loopRouter struct {
	l  *looper
	id int
}

// out returns node from's channel to node to.
func (l *looper) out(from, to int) int {
	for _, c := range l.net.Out[from] {
		if l.net.Channels[c].To == to {
			return c
		}
	}
	panic(fmt.Sprintf("no channel %d→%d", from, to))
}

func (r *loopRouter) Route(p *sim.Packet) int {
	n := r.l.net
	switch {
	case p.Seq == 0 && !r.l.atHop1 && r.id == 0 && p.Hops == 0:
		return r.l.out(0, 1)
	case p.Seq == 0 && !r.l.atHop1 && r.id == 1:
		return r.l.out(1, 0)
	case p.Seq == 0 && r.l.atHop1 && r.id == 1 && p.Hops == 1:
		return r.l.out(1, 3)
	case p.Seq == 0 && r.l.atHop1 && r.id == 3:
		return r.l.out(3, 1)
	}
	return sim.HopRoute(n, r.id, p.Dst)
}

// A flow's first packet sent once round a loop (0→1→0, then on by hop
// count 0→2→3) must not pin its flow into the loop: at node 0 again it is
// further along than when it set the pin there, so the pin is re-decided
// (the agent's choice, 2), and every later packet goes 0→2→3. Counted
// exactly: flows of 30 packets paced 1.2 ms apart (1500 B at 10 Mbit/s)
// over 1 Gbit/s links (12 µs per packet), the other links 1 ms long.
//   - 0.1 ms on link 0–1: the first packet is back after 224 µs, before the
//     second is sent: 30·2 + 2 hops per flow, nothing reordered.
//   - 5 ms on link 0–1: it is back after 10.024 ms, when packets 1 to 8
//     (sent at 1.2k ms) are on their way to node 1 too. There the pin
//     would send each straight back where it came from; node 1 decides
//     afresh, and, a dead end, sends them back all the same; at node 0 they
//     find the newer pin and follow it: 2 extra hops for each of 9 packets.
//     Packet k of 1 to 8, delivered 1.2k + 12.048 ms after the flow starts,
//     arrives after packet 9 (sent at 10.8 ms, 2.024 ms on its way): 8
//     reordered per flow (RFC 4737 metric, Morton et al. 2006).
//   - the same with a link 1–2: node 1 decides afresh for packet 1 and
//     sends it on, 1→2→3, and packets 2 to 8 follow that new pin: 1 extra
//     hop each, 2 for the first. Delivered at 1.2k + 7.036 ms (k = 1…8),
//     12.048 ms (the first) and 1.2k + 2.024 ms (k ≥ 9), so the first and
//     packets 5 to 8 arrive after a higher one: 5 reordered per flow.
//
// Before pins were re-decided, every packet of every flow died at the hop
// limit.
func TestPinFlowLoopTakenOnce(t *testing.T) {
	for _, c := range []struct {
		name      string
		loopDelay sim.Time
		link12    bool
		hops      int64 // per flow
		reordered int64 // per flow
	}{
		{"back before the second packet", 100 * sim.Microsecond, false, 30*2 + 2, 0},
		{"nine packets in the loop", 5 * sim.Millisecond, false, 30*2 + 9*2, 8},
		{"eight in flight take a new way", 5 * sim.Millisecond, true, 30*2 + 2 + 8, 5},
	} {
		t.Run(c.name, func(t *testing.T) {
			g := &sim.Graph{Name: "loop"}
			for _, n := range []string{"a", "b", "c", "d"} {
				g.Nodes = append(g.Nodes, sim.Node{Name: n})
			}
			g.Links = []sim.Link{
				{A: 0, B: 1, Bandwidth: 1e9, Delay: c.loopDelay, Buffer: 100},
				{A: 0, B: 2, Bandwidth: 1e9, Delay: sim.Millisecond, Buffer: 100},
				{A: 2, B: 3, Bandwidth: 1e9, Delay: sim.Millisecond, Buffer: 100},
			}
			if c.link12 {
				g.Links = append(g.Links, sim.Link{A: 1, B: 2, Bandwidth: 1e9, Delay: sim.Millisecond, Buffer: 100})
			}
			net := sim.Compile(g)
			cfg := flowCfg(t, net, 3, 0.2, sim.SizeDist{Kind: sim.Fixed, Bytes: 45_000}, 10e6, 200*sim.Second)
			cfg.Agent = &looper{net: net}
			cfg.PinFlows = true
			r, err := sim.Run(cfg)
			if err != nil {
				t.Fatal(err)
			}
			checkConservation(t, r)
			f := r.Flows
			if f.Completed < 20 || f.Failed != 0 || f.Unfinished != 0 {
				t.Fatalf("flows: completed %d, failed %d, unfinished %d; hop-limit drops %d", f.Completed, f.Failed, f.Unfinished, r.Dropped[sim.HopLimit])
			}
			if r.Delivered != 30*f.Completed || r.DroppedTotal() != 0 {
				t.Errorf("delivered %d packets of %d flows, dropped %v", r.Delivered, f.Completed, r.Dropped)
			}
			if want := f.Completed * c.hops; r.HopsSum != want {
				t.Errorf("%d hops over %d flows, want %d (%d per flow)", r.HopsSum, f.Completed, want, c.hops)
			}
			if want := c.reordered * f.Completed; f.Reordered != want {
				t.Errorf("%d packets reordered over %d flows, want %d", f.Reordered, f.Completed, want)
			}
		})
	}
}

// A flow's first packet that dies at the hop limit on coming back to a node
// (0→1→3→1 with a hop limit of 3: it arrives at 1 with 3 hops) cannot tell
// the pin there that it loops; the pin is re-decided for the next packet
// instead (the agent's choice, 1→2), and the flow loses its first packet
// only (it dies 336 µs after it was sent, before the second packet, sent
// 1.2 ms after it, reaches node 1). Exact: 30-packet flows, one packet each
// dropped at the hop limit,
// the other 29 delivered in 2 hops (0→1→2). Before, every packet followed
// the first into the loop and died there.
func TestPinFlowLoopAtHopLimit(t *testing.T) {
	g := &sim.Graph{Name: "spur"}
	for _, n := range []string{"a", "b", "c", "d"} {
		g.Nodes = append(g.Nodes, sim.Node{Name: n})
	}
	g.Links = []sim.Link{
		{A: 0, B: 1, Bandwidth: 1e9, Delay: 100 * sim.Microsecond, Buffer: 100},
		{A: 1, B: 2, Bandwidth: 1e9, Delay: 100 * sim.Microsecond, Buffer: 100},
		{A: 1, B: 3, Bandwidth: 1e9, Delay: 100 * sim.Microsecond, Buffer: 100},
	}
	net := sim.Compile(g)
	cfg := flowCfg(t, net, 2, 0.2, sim.SizeDist{Kind: sim.Fixed, Bytes: 45_000}, 10e6, 200*sim.Second)
	cfg.Agent = &looper{net: net, atHop1: true}
	cfg.PinFlows = true
	cfg.HopLimit = 3
	r, err := sim.Run(cfg)
	if err != nil {
		t.Fatal(err)
	}
	checkConservation(t, r)
	f := r.Flows
	if f.Failed < 20 || f.Completed != 0 || f.Unfinished != 0 {
		t.Fatalf("flows: completed %d, failed %d, unfinished %d", f.Completed, f.Failed, f.Unfinished)
	}
	if r.Dropped[sim.HopLimit] != f.Failed || r.DroppedTotal() != f.Failed {
		t.Errorf("dropped %v over %d flows, want one packet per flow at the hop limit", r.Dropped, f.Failed)
	}
	if r.Delivered != 29*f.Failed || r.HopsSum != 2*r.Delivered {
		t.Errorf("delivered %d packets in %d hops over %d flows, want 29 per flow in 2 hops each", r.Delivered, r.HopsSum, f.Failed)
	}
}

// firstBack sends the first packet of every flow straight back from the
// node after the source, once; every other choice is by hop count.
type firstBack struct{ net *sim.Net }

func (b *firstBack) Name() string { return "first-back" }
func (b *firstBack) Node(v *sim.NodeView) sim.Router {
	id := v.ID()
	return routerFunc(func(p *sim.Packet) int {
		if p.Seq == 0 && p.Hops == 1 {
			for _, c := range b.net.Out[id] {
				if b.net.Channels[c].To == p.Prev {
					return c
				}
			}
		}
		return sim.HopRoute(b.net, id, p.Dst)
	})
}
