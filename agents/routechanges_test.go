package agents_test

import (
	"testing"

	"hoplore/agents"
	"hoplore/agents/agenttest"
	"hoplore/sim"
)

// TestRouteChangesAfterCut counts, by hand, the route changes of a cut and
// repair on a triangle n0–n1–n2 carrying one periodic stream n0 → n1 (10
// packets/s, 8 ms transmissions on 1 Mbit/s: far from any queueing).
//
// The direct link n0–n1 (link 0) goes down at 20 s and comes back at 30 s;
// its end nodes detect each change 50 ms later.
//
//   - q-routing (plain, no exploration): n0's greedy choice for n1 is the
//     direct channel (zero-load estimate one hop, against two via n2, and
//     the detour's estimate is never updated while unused). After detecting
//     the cut n0 must pick n2: one change. n2's first decision for n1 only
//     sets its preference (via n1 one hop, via n0 two). On detecting
//     the repair n0 resets the direct channel's estimate to its zero-load
//     value, one hop, below the detour's learned two: one change back. Total 2.
//   - q-network: the same two. Its estimates start at zero-load times and
//     it learns the excess over them, which stays near zero this far from
//     queueing, so n0 leaves the direct channel only when forced; the
//     network has no per-channel state to reset, and on repair the direct
//     channel's estimate is still its learned one hop.
//   - shortest-path (hops): each cut or repair moves two next hops, n0's
//     towards n1 and n1's towards n0; n2's next hops never change. Total 4.
//
// Both counts fall after the warm-up (10 s), so runs' total equals the sum
// over the series bins, and each change sits in the bin where the node
// acted: n0's q-routing changes at the first packet after detection, in the
// bins starting at 20 s and 30 s.
func TestRouteChangesAfterCut(t *testing.T) {
	g := &sim.Graph{Name: "triangle", Nodes: []sim.Node{{Name: "n0"}, {Name: "n1"}, {Name: "n2"}}}
	for _, l := range [][2]int{{0, 1}, {1, 2}, {0, 2}} {
		g.Links = append(g.Links, sim.Link{A: l[0], B: l[1], Bandwidth: agenttest.Bandwidth, Delay: agenttest.Delay, Buffer: agenttest.Buffer})
	}
	if err := g.Validate(); err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		p    agents.Params
		want int64
		bins map[int]int64 // bin index (1 s bins) → changes; nil: not checked
	}{
		{agents.Defaults(agents.QRoutingKind), 2, map[int]int64{20: 1, 30: 1}},
		{agents.Defaults(agents.ShortestPathKind), 4, map[int]int64{20: 2, 30: 2}},
		{agents.Defaults(agents.QNetworkKind), 2, map[int]int64{20: 1, 30: 1}},
	}
	for _, tc := range cases {
		t.Run(tc.p.Kind, func(t *testing.T) {
			net := sim.Compile(g)
			a, err := agents.New(tc.p, net)
			if err != nil {
				t.Fatal(err)
			}
			rates := [][]float64{{0, 10, 0}, {0, 0, 0}, {0, 0, 0}}
			cfg := &sim.Config{
				Net: net, Duration: 40 * sim.Second, Warmup: 10 * sim.Second, Bin: sim.Second,
				Traffic: sim.Traffic{Rates: rates, Periodic: true, Size: sim.SizeDist{Kind: sim.Fixed, Bytes: agenttest.PacketSize}},
				Failures: sim.Failures{Detection: 50 * sim.Millisecond, Events: []sim.FailureEvent{
					{At: 20 * sim.Second, Links: []int{0}, Node: -1, Element: "n0-n1"},
					{At: 30 * sim.Second, Links: []int{0}, Node: -1, Up: true, Element: "n0-n1"},
				}},
				Agent: a, Seed: 1, AgentSeed: 2,
			}
			r, err := sim.Run(cfg)
			if err != nil {
				t.Fatal(err)
			}
			if r.RouteChanges != tc.want {
				t.Errorf("route changes %d, want %d", r.RouteChanges, tc.want)
			}
			var sum int64
			for i, b := range r.Series {
				sum += b.RouteChanges
				if b.RouteChanges != tc.bins[i] {
					t.Errorf("bin %d [%v s, %v s): %d route changes, want %d", i, b.Start.Seconds(), b.End.Seconds(), b.RouteChanges, tc.bins[i])
				}
			}
			if sum != r.RouteChanges {
				t.Errorf("series bins sum to %d route changes, run total %d", sum, r.RouteChanges)
			}
		})
	}
}
