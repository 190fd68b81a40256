package paths

import (
	"fmt"
	"slices"
)

// Graph is a directed graph on nodes 0…N−1 with arcs 0…M−1 in compressed
// sparse row form: each node's out-arcs lie side by side in one array
// (its out-slots 0, 1, …), ordered by head node, then by arc index, and
// likewise its in-arcs, ordered by tail node, then arc index. A Graph is
// immutable and may be shared between goroutines.
type Graph struct {
	tail, head []int32 // per arc

	outStart []int32 // len N+1
	outHead  []int32 // per out-slot: the node the arc leads to
	outArc   []int32 // per out-slot: the arc index

	inStart []int32
	inTail  []int32
	inArc   []int32
}

// NewGraph returns the graph on n nodes whose arc i runs from tails[i] to
// heads[i]. Parallel arcs and self-loops are allowed. It panics if the
// slices differ in length or name a node outside [0, n). Cost: O(N + M log M).
func NewGraph(n int, tails, heads []int) *Graph {
	if len(tails) != len(heads) {
		panic(fmt.Sprintf("paths: %d tails for %d heads", len(tails), len(heads)))
	}
	m := len(tails)
	g := &Graph{tail: make([]int32, m), head: make([]int32, m)}
	for i := range tails {
		t, h := tails[i], heads[i]
		if t < 0 || t >= n || h < 0 || h >= n {
			panic(fmt.Sprintf("paths: arc %d joins %d to %d, outside [0, %d)", i, t, h, n))
		}
		g.tail[i], g.head[i] = int32(t), int32(h)
	}
	g.outStart, g.outHead, g.outArc = csr(n, g.tail, g.head)
	g.inStart, g.inTail, g.inArc = csr(n, g.head, g.tail)
	return g
}

// csr groups arcs by from[a], each group ordered by (to[a], a).
func csr(n int, from, to []int32) (start, other, arc []int32) {
	start = make([]int32, n+1)
	for _, f := range from {
		start[f+1]++
	}
	for v := 0; v < n; v++ {
		start[v+1] += start[v]
	}
	other = make([]int32, len(from))
	arc = make([]int32, len(from))
	fill := slices.Clone(start[:n])
	for a, f := range from {
		arc[fill[f]] = int32(a)
		fill[f]++
	}
	for v := 0; v < n; v++ {
		s := arc[start[v]:start[v+1]]
		slices.SortFunc(s, func(x, y int32) int {
			if to[x] != to[y] {
				return int(to[x] - to[y])
			}
			return int(x - y)
		})
		for i, a := range s {
			other[int(start[v])+i] = to[a]
		}
	}
	return start, other, arc
}

// NumNodes returns N.
func (g *Graph) NumNodes() int { return len(g.outStart) - 1 }

// NumArcs returns M.
func (g *Graph) NumArcs() int { return len(g.tail) }

// Arc returns arc a's tail and head nodes.
func (g *Graph) Arc(a int) (tail, head int) { return int(g.tail[a]), int(g.head[a]) }

// Out returns node u's out-arcs and, slot for slot, the nodes they lead to,
// in the graph's tie-break order. The slices are shared: do not modify them.
func (g *Graph) Out(u int) (arcs, heads []int32) {
	s, e := g.outStart[u], g.outStart[u+1]
	return g.outArc[s:e], g.outHead[s:e]
}

// In returns node v's in-arcs and, slot for slot, the nodes they come from,
// ordered by tail node, then arc index. The slices are shared.
func (g *Graph) In(v int) (arcs, tails []int32) {
	s, e := g.inStart[v], g.inStart[v+1]
	return g.inArc[s:e], g.inTail[s:e]
}

// OutDegree returns the number of arcs leaving u.
func (g *Graph) OutDegree(u int) int { return int(g.outStart[u+1] - g.outStart[u]) }
