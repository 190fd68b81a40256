package sim

import (
	"math"
	"slices"

	"hoplore/paths"
)

// IdleThresholds is the most bandwidth thresholds per destination whose
// least-delay paths are candidates of the idle-network completion time
// (IdealFCT).
const IdleThresholds = 4

// idleRoutes holds the candidate paths of the idle-network completion time
// besides HopRoute's: for each bandwidth threshold b of a destination, the
// least zero-load delay paths towards it over the channels of bandwidth
// ≥ b, as a tree of next-hop channels. A destination's thresholds are the
// smallest channel bandwidth (admitting every channel: a mouse's
// low-delay path) and the bottlenecks of the widest paths towards it from
// the other nodes (the largest bandwidth a path from that node can hold
// throughout: an elephant's), distinct; when they are more than
// IdleThresholds, IdleThresholds of them evenly spaced by rank, the
// smallest and the largest included. A channel's zero-load delay is its
// propagation delay, one full packet's transmission and the processing
// time of the node it leads to (the destination's too: that adds the same
// to every path into it).
//
// A destination's trees are computed when a flow first needs them and kept
// until the channels' parameters change (a link condition), then computed
// again when next needed: O(IdleThresholds·(N + M) log N) time per
// destination and IdleThresholds next hops per node of memory, allocated
// once.
type idleRoutes struct {
	net   *Net
	pkt   int       // the full packet size of the weights
	w     []float64 // zero-load delay of each channel, ns
	bw    []float64 // bandwidth of each channel
	minBW float64   // the smallest channel bandwidth
	use   []bool    // scratch: channels at or above a threshold
	wide  []float64 // scratch: widest-path bottlenecks towards a destination, then their distinct values
	heap  paths.Heap
	trees [][]int32 // per destination: IdleThresholds trees of N next-hop channels, nil until needed
	thr   [][IdleThresholds]float64
	nthr  []uint8
	epoch []uint32 // per destination: the parameters' epoch its trees were computed in
	cur   uint32   // the parameters' epoch, from 1; 0 marks trees never computed
	stale bool     // the weights need computing
	s     paths.Search
}

func newIdleRoutes(n *Net, packetBytes int) *idleRoutes {
	N, M := n.NumNodes(), len(n.Channels)
	return &idleRoutes{net: n, pkt: packetBytes, w: make([]float64, M), bw: make([]float64, M), use: make([]bool, M),
		wide: make([]float64, N), trees: make([][]int32, N), thr: make([][IdleThresholds]float64, N),
		nthr: make([]uint8, N), epoch: make([]uint32, N), cur: 1, stale: true}
}

// invalidate marks every tree out of date: the channels' parameters changed.
func (r *idleRoutes) invalidate() {
	r.cur++
	r.stale = true
}

// refresh computes the channels' bandwidths and zero-load delays.
func (r *idleRoutes) refresh(prm chanParams) {
	r.stale = false
	n := r.net
	r.minBW = math.Inf(1)
	for c := range n.Channels {
		b, d := prm.chanParams(c)
		r.bw[c] = b
		r.minBW = math.Min(r.minBW, b)
		r.w[c] = float64(d + txTime(int64(r.pkt), b) + n.Graph.Nodes[n.Channels[c].To].Processing)
	}
}

// widest fills r.wide[u] with the bottleneck of the widest path from u to
// d (−1 where d cannot be reached, +Inf at d): Dijkstra's algorithm on the
// (max, min) algebra, which settles nodes in decreasing bottleneck (Pollack,
// "The maximum capacity through a network", Operations Research 8, 1960).
func (r *idleRoutes) widest(d int) {
	g := r.net.Digraph()
	for u := range r.wide {
		r.wide[u] = -1
	}
	r.wide[d] = math.Inf(1)
	r.heap.Reset()
	r.heap.Push(math.Inf(-1), int32(d))
	for r.heap.Len() > 0 {
		k, v := r.heap.Pop()
		if -k < r.wide[v] {
			continue // stale entry
		}
		arcs, tails := g.In(int(v))
		for i, a := range arcs {
			u := tails[i]
			if b := math.Min(r.wide[v], r.bw[a]); b > r.wide[u] {
				r.wide[u] = b
				r.heap.Push(-b, u)
			}
		}
	}
}

// compute sets destination d's thresholds and trees.
func (r *idleRoutes) compute(d int) {
	N := r.net.NumNodes()
	r.widest(d)
	// the thresholds: the smallest bandwidth and the distinct bottlenecks
	// (at most N − 1 of them; the slot of d holds the smallest)
	b := r.wide
	b[d] = r.minBW
	m := 0
	for _, x := range b {
		if x > 0 {
			b[m] = x
			m++
		}
	}
	b = b[:m]
	slices.Sort(b)
	m = 0
	for i, x := range b {
		if i == 0 || x != b[m-1] {
			b[m] = x
			m++
		}
	}
	nt := min(m, IdleThresholds)
	r.nthr[d] = uint8(nt)
	for k := 0; k < nt; k++ {
		i := k
		if m > IdleThresholds {
			i = int(math.Round(float64(k) * float64(m-1) / float64(IdleThresholds-1)))
		}
		r.thr[d][k] = b[i]
	}
	if r.trees[d] == nil {
		r.trees[d] = make([]int32, IdleThresholds*N)
	}
	g := r.net.Digraph()
	for k := 0; k < nt; k++ {
		var use []bool // the smallest threshold admits every channel
		if k > 0 {
			use = r.use
			for c, bw := range r.bw {
				use[c] = bw >= r.thr[d][k]
			}
		}
		r.s.To(g, d, r.w, use)
		copy(r.trees[d][k*N:(k+1)*N], r.s.Via)
	}
}

// fct returns the least idealFCT over the candidate paths from src to dst:
// HopRoute's and each threshold's tree; −1 when dst cannot be reached on
// the intact network.
func (r *idleRoutes) fct(src, dst int, size int64, rate float64, prm chanParams) Time {
	n := r.net
	if src == dst {
		return 0
	}
	if n.Hops[src][dst] <= 0 {
		return -1
	}
	best := idealFCT(n, src, dst, size, r.pkt, rate, prm, nil)
	if r.stale {
		r.refresh(prm)
	}
	if r.epoch[dst] != r.cur {
		r.epoch[dst] = r.cur
		r.compute(dst)
	}
	N := n.NumNodes()
	for k := 0; k < int(r.nthr[dst]); k++ {
		next := r.trees[dst][k*N : (k+1)*N]
		if next[src] == paths.NoArc {
			continue
		}
		best = min(best, idealFCT(n, src, dst, size, r.pkt, rate, prm, next))
	}
	return best
}

// txTime is the transmission time of bytes at b bit/s, rounded to
// nanoseconds as the engine does.
func txTime(bytes int64, b float64) Time { return Time(math.Round(float64(bytes) * 8 / b * 1e9)) }

// IdleRoutesBytes returns the memory, in bytes, that a run of flow
// traffic on n nodes and m channels keeps for the candidate paths of the
// idle-network completion time when its flows go to dests destinations:
// per channel its weight, bandwidth and mask and the heap entries of a
// search; per node the scratch of a search and a destination's thresholds;
// per destination with flows IdleThresholds next hops per node. Go's
// allocation size classes (at most 1/8 above a request) are included.
func IdleRoutesBytes(n, m, dests int) float64 {
	perChannel := 8 + 8 + 1 + 2*16 // w, bw, use; the two heaps' entries (a search's lazy deletion pushes at most once per arc)
	perNode := 8 + 24 + 8*IdleThresholds + 1 + 4 + 8 + 4 + 1
	perDest := 4 * IdleThresholds * n
	return 9.0 / 8 * float64(m*perChannel+n*perNode+dests*perDest)
}
