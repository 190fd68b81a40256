package sim

import "hoplore/paths"

// PathTree is the result of a deterministic Dijkstra from one source node:
// the cost to every node and, for every destination, the set of first-hop
// channels (as a bitset over the source's Out order, any degree) that start
// a cheapest path. Costs within a relative paths.TieTolerance (1e-9) count
// as equal.
type PathTree struct {
	Dist []float64 // +Inf when unreachable
	fh   paths.FirstHops
}

// FirstHops returns the bitset of first hops towards d: bit i of word i/64
// set means Out[src][i] starts a cheapest path. The slice is shared.
func (t *PathTree) FirstHops(d int) []uint64 { return t.fh.Set(d) }

// ShortestFrom computes cheapest paths from src over channels with finite,
// non-negative weight w[c] (use math.Inf(1) for unusable channels), reusing t's
// storage. Cost: O((N + L) log N) with a 4-ary heap; allocation-free once t
// is sized.
func ShortestFrom(n *Net, src int, w []float64, t *PathTree) {
	t.fh.Compute(n.digraph, src, w, nil)
	t.Dist = t.fh.Dist
}

// NextHop returns the lowest-index first-hop channel from src towards d in
// tree t, or NoRoute.
func (t *PathTree) NextHop(n *Net, src, d int) int {
	if src == d {
		return NoRoute
	}
	if i := t.fh.First(d); i >= 0 {
		return n.Out[src][i]
	}
	return NoRoute
}

// Metric weights for link-state routing.

// HopWeights returns weight 1 for every channel.
func HopWeights(n *Net) []float64 {
	w := make([]float64, len(n.Channels))
	for i := range w {
		w[i] = 1
	}
	return w
}

// DelayWeights returns, per channel, the zero-load time of a 1000-byte
// packet in seconds: propagation delay plus 8000 bits / bandwidth.
func DelayWeights(n *Net) []float64 {
	w := make([]float64, len(n.Channels))
	for i, c := range n.Channels {
		w[i] = c.Delay.Seconds() + 8000/c.Bandwidth
	}
	return w
}

// InverseCapacityWeights returns 1 Gbit/s divided by each channel's bandwidth.
func InverseCapacityWeights(n *Net) []float64 {
	w := make([]float64, len(n.Channels))
	for i, c := range n.Channels {
		w[i] = 1e9 / c.Bandwidth
	}
	return w
}
