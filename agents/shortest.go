package agents

import (
	"math"
	"math/bits"

	"hoplore/sim"
)

// ShortestPath is link-state routing: every node keeps its own view of which
// links are up (from its own detection and from flooded news), and
// SPFDelay after each change recomputes its next hops with a deterministic
// Dijkstra under the chosen metric. Ties go to the lowest-index neighbour,
// or, with ECMP, are split by a hash of the packet's flow label and the node.
// A next hop the node knows to be down is never used: the packet takes
// another equal-cost next hop or is dropped (no_route) until the recompute.
type ShortestPath struct {
	p    Params
	net  *sim.Net
	base []float64 // metric weight per channel
}

var _ sim.PerNode = (*ShortestPath)(nil)

func init() { builders[ShortestPathKind] = newShortestPath }

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
	r.recompute()
	return r
}

type spRouter struct {
	a       *ShortestPath
	v       *sim.NodeView
	linkUp  []bool
	w       []float64
	tree    sim.PathTree
	pending bool
}

var (
	_ sim.Router     = (*spRouter)(nil)
	_ sim.LinkStater = (*spRouter)(nil)
	_ sim.Timed      = (*spRouter)(nil)
)

func (r *spRouter) recompute() {
	net := r.a.net
	for c := range r.w {
		if r.linkUp[net.Channels[c].Link] {
			r.w[c] = r.a.base[c]
		} else {
			r.w[c] = math.Inf(1)
		}
	}
	sim.ShortestFrom(net, r.v.ID(), r.w, &r.tree)
}

// Route implements sim.Router.
func (r *spRouter) Route(p *sim.Packet) int {
	mask := r.tree.First[p.Dst]
	out := r.v.Out()
	for mask != 0 {
		var i int
		if r.a.p.ECMP {
			n := bits.OnesCount64(mask)
			k := int(sim.Mix(uint64(p.Flow), uint64(r.v.ID())) % uint64(n))
			i = nthBit(mask, k)
		} else {
			i = bits.TrailingZeros64(mask)
		}
		c := out[i]
		if r.v.Up(c) {
			return c
		}
		mask &^= 1 << uint(i)
	}
	return sim.NoRoute
}

func nthBit(m uint64, k int) int {
	for ; k > 0; k-- {
		m &= m - 1
	}
	return bits.TrailingZeros64(m)
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
