package sim_test

import (
	"testing"

	"hoplore/sim"
)

// outcomeWant is the exact outcome of one failure event.
type outcomeWant struct {
	reachable, unreachable, queueFull int64
	last                              sim.Time // −1: no reachable drop
}

func checkOutcome(t *testing.T, k int, got sim.Outcome, want outcomeWant) {
	t.Helper()
	if got.LostReachable != want.reachable || got.LostUnreachable != want.unreachable || got.LostQueueFull != want.queueFull || got.LastReachable != want.last {
		t.Errorf("event %d: lost reachable %d, unreachable %d, queue_full %d, last reachable drop %v; want %d, %d, %d, %v",
			k, got.LostReachable, got.LostUnreachable, got.LostQueueFull, got.LastReachable,
			want.reachable, want.unreachable, want.queueFull, want.last)
	}
}

// checkUnreachableSums checks the unreachable counts against each other: per
// reason at most the drops, the bins add up to the run's (warm-up 0), and
// every drop after the first event is attributed to exactly one event.
func checkUnreachableSums(t *testing.T, r *sim.Result) {
	t.Helper()
	for k := range r.Unreachable {
		if r.Unreachable[k] > r.Dropped[k] {
			t.Errorf("%v: %d unreachable of %d dropped", sim.DropReason(k), r.Unreachable[k], r.Dropped[k])
		}
	}
	var bins int64
	for _, b := range r.Series {
		bins += b.Unreachable
		if b.Unreachable > b.Dropped {
			t.Errorf("bin %v: %d unreachable of %d dropped", b.Start.Seconds(), b.Unreachable, b.Dropped)
		}
	}
	if bins != r.DroppedUnreachable() {
		t.Errorf("bins hold %d unreachable drops, the run %d", bins, r.DroppedUnreachable())
	}
	var ev int64
	for _, o := range r.Outcomes {
		ev += o.LostUnreachable
	}
	if ev != r.DroppedUnreachable() {
		t.Errorf("events hold %d unreachable drops, the run %d", ev, r.DroppedUnreachable())
	}
}

// Link-state routing after a link failure, worked by hand (common practice
// for link-state routing: detection, flooding, then an SPF delay before the
// new table). Every case sends 1000 B packets every 10 ms (first at 10 ms)
// at 1 Mbit/s: 8 ms of transmission, 1 ms of propagation per hop, so no
// packet ever waits. Detection 50 ms, spf_delay 100 ms.
func TestReconnectHandWorked(t *testing.T) {
	const ms = sim.Millisecond
	link := func(a, b int) sim.Link { return sim.Link{A: a, B: b, Bandwidth: 1e6, Delay: ms, Buffer: 50} }
	tests := []struct {
		name  string
		nodes []string
		links []sim.Link
		rates [][]float64
		fail  sim.FailureEvent
		back  sim.Time // when the element returns
		want  []outcomeWant
		// unreachable drops by reason over the run
		unreach [sim.NumDropReasons]int64
	}{
		{
			// Triangle a–b–c, a→c over the direct link 0, cut at F = 5.0025 s.
			// Lost: the packet of 5.000 s being transmitted (link_down); a
			// notices at F + 50 ms = 5.0525 s, so 5.010 … 5.050 s go into the
			// dead channel (5 link_down); a recomputes at F + 50 + 0 (a is an
			// end node: no flooding) + 100 ms = 5.1525 s, so 5.060 … 5.150 s
			// find no route (10). 16 reachable losses, the last at 5.150 s,
			// the last emission before the recomputation.
			name:  "triangle",
			nodes: []string{"a", "b", "c"},
			links: []sim.Link{link(0, 2), link(0, 1), link(1, 2)},
			rates: oneFlow(3, 0, 2, 100),
			fail:  sim.FailureEvent{At: 5*sim.Second + 2500*sim.Microsecond, Links: []int{0}, Node: -1, Element: "a-c"},
			back:  8 * sim.Second,
			want:  []outcomeWant{{reachable: 16, last: 5150 * ms}, {last: -1}},
		},
		{
			// Bridge x–y with a longer bypass x–p–q–y; a→b goes a–x–y–b, and
			// the bridge is cut at F = 5.0125 s. A packet emitted at g reaches
			// x at g + 9 ms and is transmitted on x→y over [g + 9, g + 17] ms.
			// Lost: 5.000 s, on x→y at F (link_down); x notices at F + 50 ms =
			// 5.0625 s, so the packets reaching x at 5.019 … 5.059 s (emitted
			// 5.010 … 5.050) go into the dead channel (5 link_down); x
			// recomputes at 5.0625 + 100 ms = 5.1625 s, so those reaching x at
			// 5.069 … 5.159 s (emitted 5.060 … 5.150) find no route (10).
			// a's own recomputation keeps a–x. 16 reachable losses; the last at
			// 5.159 s, the last arrival at x before its recomputation.
			name:  "bridge-bypass",
			nodes: []string{"a", "x", "y", "b", "p", "q"},
			links: []sim.Link{link(0, 1), link(1, 2), link(2, 3), link(1, 4), link(4, 5), link(5, 2)},
			rates: oneFlow(6, 0, 3, 100),
			fail:  sim.FailureEvent{At: 5*sim.Second + 12500*sim.Microsecond, Links: []int{1}, Node: -1, Element: "x-y"},
			back:  8 * sim.Second,
			want:  []outcomeWant{{reachable: 16, last: 5159 * ms}, {last: -1}},
		},
		{
			// Triangle a–b–c; a→b and c→a. Node b fails at F = 5.0095 s, just
			// after the packet of 5.000 s reached it (at 5.009 s): nothing is
			// in flight for b. Every packet for b emitted after F (5.010 …
			// 7.990 s: 299) is unreachable: 5 go into the dead channel before a
			// notices (5.010 … 5.050 s, link_down), the rest find no route.
			// c→a never loses a packet. When b returns at 7.9995 s, its packets
			// are reachable again but a's table still has no route to b until
			// the news floods back: detection at 8.0495 s, recomputation at
			// 8.1495 s, so 8.000 … 8.140 s are lost (15 no_route, reachable).
			name:    "node-down",
			nodes:   []string{"a", "b", "c"},
			links:   []sim.Link{link(0, 1), link(0, 2), link(1, 2)},
			rates:   [][]float64{{0, 100, 0}, {0, 0, 0}, {100, 0, 0}},
			fail:    sim.FailureEvent{At: 5*sim.Second + 9500*sim.Microsecond, Node: 1, Element: "b"},
			back:    8*sim.Second - 500*sim.Microsecond,
			want:    []outcomeWant{{unreachable: 299, last: -1}, {reachable: 15, last: 8140 * ms}},
			unreach: [sim.NumDropReasons]int64{sim.LinkDown: 5, sim.NoRouteDrop: 294},
		},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			g := &sim.Graph{Name: tc.name, Links: tc.links}
			for _, n := range tc.nodes {
				g.Nodes = append(g.Nodes, sim.Node{Name: n})
			}
			net := sim.Compile(g)
			back := tc.fail
			back.At, back.Up = tc.back, true
			cfg := &sim.Config{Net: net, Agent: spWith(t, net, 100*ms), Seed: 1, Duration: 12 * sim.Second, Bin: 500 * ms,
				Traffic:  sim.Traffic{Rates: tc.rates, Periodic: true, Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1000}},
				Failures: sim.Failures{Detection: 50 * ms, Events: []sim.FailureEvent{tc.fail, back}}}
			r, err := sim.Run(cfg)
			if err != nil {
				t.Fatal(err)
			}
			checkConservation(t, r)
			checkUnreachableSums(t, r)
			if len(r.Outcomes) != len(tc.want) {
				t.Fatalf("%d outcomes, want %d", len(r.Outcomes), len(tc.want))
			}
			for k, w := range tc.want {
				checkOutcome(t, k, r.Outcomes[k], w)
			}
			if r.Unreachable != tc.unreach {
				t.Errorf("unreachable drops by reason %v, want %v", r.Unreachable, tc.unreach)
			}
			var lost int64
			for _, o := range r.Outcomes {
				lost += o.LostReachable + o.LostUnreachable + o.LostQueueFull
			}
			if lost != r.DroppedTotal() {
				t.Errorf("events account for %d drops, the run has %d", lost, r.DroppedTotal())
			}
		})
	}
}

// A partition marks the packets already in the network: on a line a–x–y–b
// carrying a→b, cutting x–y at F leaves every packet on the a side
// unreachable, including the one transmitting on a→x at F, although it is
// dropped only later (at x, for want of a route).
func TestPartitionMarksPacketsInFlight(t *testing.T) {
	const ms = sim.Millisecond
	net := sim.Compile(lineGraph([]float64{1e6, 1e6, 1e6}, []sim.Time{ms, ms, ms}, 50))
	F := 5*sim.Second + 4*ms // the packet of 5.000 s is on a→x (5.000–5.008 s)
	cfg := &sim.Config{Net: net, Agent: spWith(t, net, 100*ms), Seed: 1, Duration: 6 * sim.Second, Bin: 500 * ms,
		Traffic:  sim.Traffic{Rates: oneFlow(4, 0, 3, 100), Periodic: true, Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1000}},
		Failures: sim.Failures{Detection: 50 * ms, Events: []sim.FailureEvent{{At: F, Links: []int{1}, Node: -1, Element: "x-y"}}}}
	r, err := sim.Run(cfg)
	if err != nil {
		t.Fatal(err)
	}
	checkConservation(t, r)
	checkUnreachableSums(t, r)
	// 4.990 s is on x→y (4.999 … 5.007 s) at F: lost with the link, and
	// unreachable since x is cut off from b. 5.000 … 6.000 s (101) are
	// dropped at x, or at a itself once the news reached it (F + 50 ms + 1 ms
	// flooding + 100 ms SPF delay = 5.155 s). 102 in all, none reachable.
	if r.InFlight != 0 {
		t.Errorf("in flight %d, want 0", r.InFlight)
	}
	checkOutcome(t, 0, r.Outcomes[0], outcomeWant{unreachable: 102, last: -1})
	if r.DroppedUnreachable() != r.DroppedTotal() {
		t.Errorf("%d unreachable of %d dropped", r.DroppedUnreachable(), r.DroppedTotal())
	}
}
