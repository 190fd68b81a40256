package paths

import (
	"fmt"
	"math"
	"math/bits"
)

// TieTolerance is the relative tolerance under which FirstHops counts two
// path costs as equal, so that sums taken in different orders still tie.
const TieTolerance = 1e-9

// equalCost reports whether a and b are equal within TieTolerance.
func equalCost(a, b float64) bool {
	return math.Abs(a-b) <= TieTolerance*math.Max(math.Abs(a), math.Abs(b))
}

// FirstHops is a reusable workspace holding, after Compute, the cheapest
// cost from one source to every node (Dist, +Inf when unreachable) and, for
// every destination, the set of the source's out-slots whose arc starts a
// cheapest path: a bitset of any width over the source's out order (bit i
// of word i/64 is out-slot i). Costs within TieTolerance count as equal, and
// a node's set is the union of its equally cheap predecessors' sets.
type FirstHops struct {
	Dist  []float64
	words int      // bitset words per destination
	sets  []uint64 // destination d's set is sets[d*words : (d+1)*words]
	done  []bool
	heap  Heap
}

// Compute runs Dijkstra from src over arcs with usable[a] (nil: all) and
// weight w[a] (non-negative; +Inf or NaN make the arc unusable; a negative
// weight panics), reusing f's storage. Cost: O((N + M) log N · ⌈deg(src)/64⌉);
// allocation-free once f is sized for the graph and the source's degree.
func (f *FirstHops) Compute(g *Graph, src int, w []float64, usable []bool) {
	N := g.NumNodes()
	W := max(1, (g.OutDegree(src)+63)/64)
	if len(f.Dist) != N || f.words != W {
		f.Dist = make([]float64, N)
		f.words = W
		f.sets = make([]uint64, N*W)
		f.done = make([]bool, N)
	}
	clear(f.sets)
	clear(f.done)
	inf := math.Inf(1)
	for i := range f.Dist {
		f.Dist[i] = inf
	}
	f.heap.Reset()
	dist := f.Dist
	dist[src] = 0
	f.heap.Push(0, int32(src))
	base := g.outStart[src]
	for f.heap.Len() > 0 {
		best, u := f.heap.Pop()
		if f.done[u] || best != dist[u] {
			continue // a stale entry
		}
		f.done[u] = true
		lo, hi := g.outStart[u], g.outStart[u+1]
		for k := lo; k < hi; k++ {
			a := g.outArc[k]
			if usable != nil && !usable[a] {
				continue
			}
			wa := w[a]
			if math.IsInf(wa, 1) || wa != wa {
				continue
			}
			if wa < 0 {
				panic(fmt.Sprintf("paths: arc %d has negative weight %g", a, wa))
			}
			v := g.outHead[k]
			if f.done[v] {
				continue
			}
			nd := best + wa
			fv := f.sets[int(v)*W : int(v+1)*W]
			switch {
			case math.IsInf(dist[v], 1) || (nd < dist[v] && !equalCost(nd, dist[v])):
				dist[v] = nd
				clear(fv)
				f.heap.Push(nd, v)
			case equalCost(nd, dist[v]):
			default:
				continue
			}
			if int(u) == src {
				i := int(k - base)
				fv[i/64] |= 1 << uint(i%64)
			} else {
				for j, b := range f.sets[int(u)*W : int(u+1)*W] {
					fv[j] |= b
				}
			}
		}
	}
}

// Set returns the bitset of the source's out-slots that start a cheapest
// path to d (empty for the source itself and unreachable nodes). The slice
// is shared and valid until the next Compute.
func (f *FirstHops) Set(d int) []uint64 { return f.sets[d*f.words : (d+1)*f.words] }

// First returns the lowest out-slot of the source that starts a cheapest
// path to d, or −1 if there is none.
func (f *FirstHops) First(d int) int {
	for k, b := range f.Set(d) {
		if b != 0 {
			return k*64 + bits.TrailingZeros64(b)
		}
	}
	return -1
}
