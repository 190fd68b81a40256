package sim

import (
	"math"
	"math/bits"
)

// PathTree is the result of a deterministic Dijkstra from one source node:
// the cost to every node and, for every destination, the set of first-hop
// channels (as a bitset over the source's Out order, any degree) that start
// a cheapest path. Costs within a relative 1e-9 count as equal.
type PathTree struct {
	Dist  []float64 // +Inf when unreachable
	words int       // bitset words per destination
	first []uint64  // destination d's bitset is first[d*words : (d+1)*words]
	order []int
	done  []bool
	heap  []distItem
}

// FirstHops returns the bitset of first hops towards d: bit i of word i/64
// set means Out[src][i] starts a cheapest path. The slice is shared.
func (t *PathTree) FirstHops(d int) []uint64 { return t.first[d*t.words : (d+1)*t.words] }

// equalCost reports whether a and b are equal within the tie tolerance.
func equalCost(a, b float64) bool {
	return math.Abs(a-b) <= 1e-9*math.Max(math.Abs(a), math.Abs(b))
}

// ShortestFrom computes cheapest paths from src over channels with finite,
// non-negative weight w[c] (use math.Inf(1) for unusable channels), reusing t's
// storage. Cost: O((N + L) log N) with a binary heap; allocation-free once t
// is sized.
func ShortestFrom(n *Net, src int, w []float64, t *PathTree) {
	N := n.NumNodes()
	W := max(1, (len(n.Out[src])+63)/64)
	if len(t.Dist) != N || t.words != W {
		t.Dist = make([]float64, N)
		t.words = W
		t.first = make([]uint64, N*W)
		t.done = make([]bool, N)
		t.order = make([]int, 0, N)
	}
	clear(t.first)
	for i := 0; i < N; i++ {
		t.Dist[i] = math.Inf(1)
		t.done[i] = false
	}
	t.order = t.order[:0]
	t.heap = t.heap[:0]
	t.Dist[src] = 0
	t.push(distItem{0, src})
	for len(t.heap) > 0 {
		it := t.pop()
		u := it.node
		if t.done[u] || it.d != t.Dist[u] {
			continue // a stale entry
		}
		best := it.d
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
			fv := t.first[v*W : (v+1)*W]
			switch {
			case math.IsInf(t.Dist[v], 1) || (nd < t.Dist[v] && !equalCost(nd, t.Dist[v])):
				t.Dist[v] = nd
				clear(fv)
				t.push(distItem{nd, v})
			case equalCost(nd, t.Dist[v]):
			default:
				continue
			}
			if u == src {
				fv[i/64] |= 1 << uint(i%64)
			} else {
				for k, b := range t.first[u*W : (u+1)*W] {
					fv[k] |= b
				}
			}
		}
	}
}

type distItem struct {
	d    float64
	node int
}

func (t *PathTree) push(x distItem) {
	t.heap = append(t.heap, x)
	h := t.heap
	i := len(h) - 1
	for i > 0 {
		p := (i - 1) / 2
		if !distLess(x, h[p]) {
			break
		}
		h[i] = h[p]
		i = p
	}
	h[i] = x
}

func (t *PathTree) pop() distItem {
	h := t.heap
	top := h[0]
	n := len(h) - 1
	x := h[n]
	t.heap = h[:n]
	h = t.heap
	if n == 0 {
		return top
	}
	i := 0
	for {
		c := 2*i + 1
		if c >= n {
			break
		}
		if c+1 < n && distLess(h[c+1], h[c]) {
			c++
		}
		if !distLess(h[c], x) {
			break
		}
		h[i] = h[c]
		i = c
	}
	h[i] = x
	return top
}

// distLess orders heap entries by distance, then node index, so that the
// settling order is deterministic.
func distLess(a, b distItem) bool {
	return a.d < b.d || (a.d == b.d && a.node < b.node)
}

// NextHop returns the lowest-index first-hop channel from src towards d in
// tree t, or NoRoute.
func (t *PathTree) NextHop(n *Net, src, d int) int {
	if src == d {
		return NoRoute
	}
	for k, b := range t.FirstHops(d) {
		if b != 0 {
			return n.Out[src][k*64+bits.TrailingZeros64(b)]
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
