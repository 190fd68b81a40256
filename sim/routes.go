package sim

import "math"

// PathTree is the result of a deterministic Dijkstra from one source node:
// the cost to every node and, for every destination, the set of first-hop
// channels (as bits over the source's Out order) that start a cheapest path.
// Costs within a relative 1e-9 count as equal.
type PathTree struct {
	Dist  []float64 // +Inf when unreachable
	First []uint64  // bit i set: Out[src][i] starts a cheapest path (nodes of degree ≤ 64)
	order []int
	done  []bool
}

// equalCost reports whether a and b are equal within the tie tolerance.
func equalCost(a, b float64) bool {
	return math.Abs(a-b) <= 1e-9*math.Max(math.Abs(a), math.Abs(b))
}

// ShortestFrom computes cheapest paths from src over channels with finite,
// non-negative weight w[c] (use math.Inf(1) for unusable channels), reusing t's
// storage. Cost: O(N² + L) — simple and allocation-free once t is sized,
// adequate for the topologies hoplore runs (up to a few thousand nodes).
func ShortestFrom(n *Net, src int, w []float64, t *PathTree) {
	N := n.NumNodes()
	if len(t.Dist) != N {
		t.Dist = make([]float64, N)
		t.First = make([]uint64, N)
		t.done = make([]bool, N)
		t.order = make([]int, 0, N)
	}
	for i := 0; i < N; i++ {
		t.Dist[i] = math.Inf(1)
		t.First[i] = 0
		t.done[i] = false
	}
	t.order = t.order[:0]
	t.Dist[src] = 0
	for {
		u, best := -1, math.Inf(1)
		for v := 0; v < N; v++ {
			if !t.done[v] && t.Dist[v] < best {
				u, best = v, t.Dist[v]
			}
		}
		if u < 0 {
			break
		}
		t.done[u] = true
		t.order = append(t.order, u)
		for i, c := range n.Out[u] {
			wc := w[c]
			if math.IsInf(wc, 1) || wc < 0 {
				continue
			}
			v := n.Channels[c].To
			if t.done[v] {
				continue
			}
			nd := best + wc
			var bits uint64
			if u == src {
				if i < 64 {
					bits = 1 << uint(i)
				}
			} else {
				bits = t.First[u]
			}
			switch {
			case math.IsInf(t.Dist[v], 1) || (nd < t.Dist[v] && !equalCost(nd, t.Dist[v])):
				t.Dist[v] = nd
				t.First[v] = bits
			case equalCost(nd, t.Dist[v]):
				t.First[v] |= bits
			}
		}
	}
}

// NextHop returns the lowest-index first-hop channel from src towards d in
// tree t, or NoRoute.
func (t *PathTree) NextHop(n *Net, src, d int) int {
	b := t.First[d]
	if b == 0 || src == d {
		return NoRoute
	}
	for i := 0; i < len(n.Out[src]) && i < 64; i++ {
		if b&(1<<uint(i)) != 0 {
			return n.Out[src][i]
		}
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
