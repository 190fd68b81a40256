package agents

import (
	"math"
	"math/bits"
	"slices"

	"hoplore/sim"
)

// ShortestPath is link-state routing: every node keeps its own view of which
// links are up (from its own detection and from flooded news), and
// SPFDelay after each change recomputes its next hops with a deterministic
// Dijkstra under the chosen metric. Ties go to the lowest-index neighbour,
// or, with ECMP, are split by a hash of the packet's flow label and the node.
// A next hop the node knows to be down is never used: the packet takes
// another equal-cost next hop or is dropped (no_route) until the recompute.
// Each recompute counts as route changes the destinations whose next hop
// (with ECMP: set of next hops) changed.
type ShortestPath struct {
	p    Params
	net  *sim.Net
	base []float64 // metric weight per channel
}

var _ sim.PerNode = (*ShortestPath)(nil)

// ShortestPathKind is the kind of ShortestPath in experiment files.
const ShortestPathKind = "shortest-path"

func init() {
	Register(Kind{
		Name:  ShortestPathKind,
		Order: 10,
		Fields: []Field{
			NewField("metric", func(p *Params) *string { return &p.Metric }, "hops", oneOf("metric", "hops", "delay", "inverse-capacity")),
			NewField("ecmp", func(p *Params) *bool { return &p.ECMP }, false, nil),
			NewField("spf_delay", func(p *Params) *sim.Time { return &p.SPFDelay }, 100*sim.Millisecond, nonNegativeTime),
		},
		New: newShortestPath,
		Cost: func(p *Params, r RunSize) Cost {
			// next-hop sets and distances per node and destination, and
			// every node's view of the links
			N := float64(r.Nodes)
			return Cost{Bytes: N * (N*24 + float64(r.Channels)*8 + float64(r.Links))}
		},
	})
}

func newShortestPath(p Params, net *sim.Net) (sim.Agent, error) {
	a := &ShortestPath{p: p, net: net}
	switch p.Metric {
	case "delay":
		a.base = sim.DelayWeights(net)
	case "inverse-capacity":
		a.base = sim.InverseCapacityWeights(net)
	default:
		a.base = sim.HopWeights(net)
	}
	return a, nil
}

// Name returns the agent's label.
func (a *ShortestPath) Name() string { return a.p.Canonical() }

// Node builds node v's router and computes its initial tables.
func (a *ShortestPath) Node(v *sim.NodeView) sim.Router {
	r := &spRouter{a: a, v: v, linkUp: make([]bool, len(a.net.Graph.Links)), w: make([]float64, len(a.net.Channels))}
	for i := range r.linkUp {
		r.linkUp[i] = true
	}
	sim.ShortestFrom(a.net, v.ID(), r.weights(), &r.tree)
	return r
}

type spRouter struct {
	a       *ShortestPath
	v       *sim.NodeView
	linkUp  []bool
	w       []float64
	tree    sim.PathTree
	pending bool
	prev    []uint64 // first-hop sets before a recompute, destination-major
}

var (
	_ sim.Router     = (*spRouter)(nil)
	_ sim.LinkStater = (*spRouter)(nil)
	_ sim.Timed      = (*spRouter)(nil)
)

// weights returns the metric weights with the links the node believes down
// at +Inf.
func (r *spRouter) weights() []float64 {
	net := r.a.net
	for c := range r.w {
		if r.linkUp[net.Channels[c].Link] {
			r.w[c] = r.a.base[c]
		} else {
			r.w[c] = math.Inf(1)
		}
	}
	return r.w
}

// recompute runs Dijkstra on the node's current view and reports as route
// changes the destinations whose next hop changed: without ECMP the primary
// next hop (lowest-index first hop), with ECMP the set of first hops.
func (r *spRouter) recompute() {
	n := r.a.net.NumNodes()
	words := len(r.tree.FirstHops(0))
	r.prev = r.prev[:0]
	for d := 0; d < n; d++ {
		r.prev = append(r.prev, r.tree.FirstHops(d)...)
	}
	sim.ShortestFrom(r.a.net, r.v.ID(), r.weights(), &r.tree)
	changes := 0
	for d := 0; d < n; d++ {
		old, cur := r.prev[d*words:(d+1)*words], r.tree.FirstHops(d)
		if r.a.p.ECMP && !slices.Equal(old, cur) || !r.a.p.ECMP && lowestBit(old) != lowestBit(cur) {
			changes++
		}
	}
	r.v.CountRouteChanges(changes)
}

// lowestBit returns the index of the lowest set bit of a bitset, or −1.
func lowestBit(set []uint64) int {
	for k, w := range set {
		if w != 0 {
			return k*64 + bits.TrailingZeros64(w)
		}
	}
	return -1
}

// Route implements sim.Router: the lowest-index first hop the node believes
// up, or with ECMP the one picked by the flow hash among the equal-cost first
// hops (the next ones in order, wrapping around, if it is known to be down).
// Cost: O(degree/64) plus the hops skipped.
func (r *spRouter) Route(p *sim.Packet) int {
	set := r.tree.FirstHops(p.Dst)
	out := r.v.Out()
	start := 0
	if r.a.p.ECMP {
		n := 0
		for _, w := range set {
			n += bits.OnesCount64(w)
		}
		if n == 0 {
			return sim.NoRoute
		}
		start = int(sim.Mix(uint64(p.Flow), uint64(r.v.ID())) % uint64(n))
	}
	// the set bits from the start-th to the last, then from the first
	for pass := 0; pass < 2; pass++ {
		idx := 0
		for k, w := range set {
			for ; w != 0; w &= w - 1 {
				take := (pass == 0) == (idx >= start)
				idx++
				if !take {
					continue
				}
				if c := out[k*64+bits.TrailingZeros64(w)]; r.v.Up(c) {
					return c
				}
			}
		}
		if start == 0 {
			break
		}
	}
	return sim.NoRoute
}

// LinkChanged implements sim.LinkStater: record the news and recompute after SPFDelay.
func (r *spRouter) LinkChanged(link int, up bool) {
	r.linkUp[link] = up
	if !r.pending {
		r.pending = true
		r.v.After(r.a.p.SPFDelay, 0)
	}
}

// Timer implements sim.Timed.
func (r *spRouter) Timer(int) {
	r.pending = false
	r.recompute()
}
