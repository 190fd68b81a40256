package paths

import (
	"fmt"
	"math"
	"slices"
)

// NoArc marks the absence of an arc: a search's source, an unreached node,
// a node without a next hop.
const NoArc = -1

// Search is a reusable workspace for Dijkstra's algorithm (Dijkstra, "A note
// on two problems in connexion with graphs", Numerische Mathematik 1, 1959)
// with a 4-ary heap and lazy deletion. After a search,
// Dist holds each node's distance (+Inf when unreached) and Via the arc by
// which the search reached it: into the node for the forward searches, out
// of it for To. Of equally cheap arcs Via keeps the first found, nodes
// settling in (distance, index) order and each node's arcs scanned in the
// graph's tie-break order. Cost per search: O((N + M) log N); once sized for
// a graph of N nodes, searches allocate nothing.
type Search struct {
	Dist []float64
	Via  []int32

	done  []bool
	heap  Heap
	queue []int32

	// Yen's algorithm
	bannedNode, usableArc []bool
	arcBuf                []int
}

// reset sizes the workspace for n nodes and clears it.
func (s *Search) reset(n int) {
	if len(s.Dist) != n {
		s.Dist = make([]float64, n)
		s.Via = make([]int32, n)
		s.done = make([]bool, n)
	}
	inf := math.Inf(1)
	for i := range s.Dist {
		s.Dist[i] = inf
		s.Via[i] = NoArc
	}
	clear(s.done)
	s.heap.Reset()
}

// From computes the cheapest paths from src to every node over the arcs a
// with usable[a] (nil: all) and weight w[a] (non-negative; +Inf or NaN make
// the arc unusable; a negative weight panics).
func (s *Search) From(g *Graph, src int, w []float64, usable []bool) {
	s.reset(g.NumNodes())
	s.Dist[src] = 0
	s.heap.Push(0, int32(src))
	s.forward(g, w, usable, nil, -1)
}

// FromSet is From with several sources, each at distance 0: the distance to
// a node is the one from the nearest source.
func (s *Search) FromSet(g *Graph, srcs []int, w []float64, usable []bool) {
	s.reset(g.NumNodes())
	for _, v := range srcs {
		if s.Dist[v] != 0 {
			s.Dist[v] = 0
			s.heap.Push(0, int32(v))
		}
	}
	s.forward(g, w, usable, nil, -1)
}

// Between is From that stops once dst is settled, and reports whether dst
// is reachable. Only the distances and arcs of nodes settled before dst are
// final. Read the path with ArcsTo.
func (s *Search) Between(g *Graph, src, dst int, w []float64, usable []bool) bool {
	return s.between(g, src, dst, w, usable, nil)
}

func (s *Search) between(g *Graph, src, dst int, w []float64, usable, bannedNode []bool) bool {
	s.reset(g.NumNodes())
	s.Dist[src] = 0
	s.heap.Push(0, int32(src))
	s.forward(g, w, usable, bannedNode, dst)
	return !math.IsInf(s.Dist[dst], 1)
}

func (s *Search) forward(g *Graph, w []float64, usable, bannedNode []bool, target int) {
	dist, via, done := s.Dist, s.Via, s.done
	for s.heap.Len() > 0 {
		d, u := s.heap.Pop()
		if done[u] {
			continue // a stale entry
		}
		done[u] = true
		if int(u) == target {
			return
		}
		lo, hi := g.outStart[u], g.outStart[u+1]
		for k := lo; k < hi; k++ {
			a := g.outArc[k]
			if usable != nil && !usable[a] {
				continue
			}
			v := g.outHead[k]
			if bannedNode != nil && bannedNode[v] {
				continue
			}
			wa := w[a]
			if wa < 0 {
				panic(fmt.Sprintf("paths: arc %d has negative weight %g", a, wa))
			}
			if nd := d + wa; nd < dist[v] {
				dist[v] = nd
				via[v] = a
				s.heap.Push(nd, v)
			}
		}
	}
}

// To computes the cheapest paths from every node to dst (Dijkstra on the
// reversed arcs): Dist[u] is the cost from u to dst and Via[u] the arc
// leaving u on the path found. Arguments are as for From.
func (s *Search) To(g *Graph, dst int, w []float64, usable []bool) {
	s.reset(g.NumNodes())
	dist, via, done := s.Dist, s.Via, s.done
	dist[dst] = 0
	s.heap.Push(0, int32(dst))
	for s.heap.Len() > 0 {
		d, v := s.heap.Pop()
		if done[v] {
			continue
		}
		done[v] = true
		lo, hi := g.inStart[v], g.inStart[v+1]
		for k := lo; k < hi; k++ {
			a := g.inArc[k]
			if usable != nil && !usable[a] {
				continue
			}
			wa := w[a]
			if wa < 0 {
				panic(fmt.Sprintf("paths: arc %d has negative weight %g", a, wa))
			}
			u := g.inTail[k]
			if nd := d + wa; nd < dist[u] {
				dist[u] = nd
				via[u] = a
				s.heap.Push(nd, u)
			}
		}
	}
}

// ArcsTo appends to buf the arcs of the path a forward search found to t,
// source first, and returns it, with ok false (buf unchanged) when t was
// not reached.
func (s *Search) ArcsTo(g *Graph, t int, buf []int) (arcs []int, ok bool) {
	if math.IsInf(s.Dist[t], 1) {
		return buf, false
	}
	start := len(buf)
	for v := t; s.Via[v] != NoArc; v = int(g.tail[s.Via[v]]) {
		buf = append(buf, int(s.Via[v]))
	}
	slices.Reverse(buf[start:])
	return buf, true
}

// Hops fills hops[v] with the fewest arcs from src to v over usable arcs
// (nil: all), −1 where v is unreachable, by breadth-first search.
// Cost: O(N + M); allocation-free once the workspace is sized.
func (s *Search) Hops(g *Graph, src int, usable []bool, hops []int32) {
	for i := range hops {
		hops[i] = -1
	}
	if cap(s.queue) < g.NumNodes() {
		s.queue = make([]int32, 0, g.NumNodes())
	}
	q := s.queue[:0]
	hops[src] = 0
	q = append(q, int32(src))
	for i := 0; i < len(q); i++ {
		u := q[i]
		lo, hi := g.outStart[u], g.outStart[u+1]
		for k := lo; k < hi; k++ {
			if usable != nil && !usable[g.outArc[k]] {
				continue
			}
			if v := g.outHead[k]; hops[v] < 0 {
				hops[v] = hops[u] + 1
				q = append(q, v)
			}
		}
	}
	s.queue = q
}

// NextHops fills next[u], for every node u, with the first usable arc in
// u's out order whose weight plus dist of its head is least, within a
// relative tolerance tol (so that sums taken in different orders do not
// break the lowest-index tie-break): a later arc replaces the choice only if
// cheaper by more than the fraction tol. dist is the result of To for dst;
// next[dst] and next of nodes that cannot reach dst are NoArc. Cost: O(N + M).
func NextHops(g *Graph, dst int, w []float64, usable []bool, dist []float64, tol float64, next []int32) {
	for u := range next {
		next[u] = NoArc
		if u == dst || math.IsInf(dist[u], 1) {
			continue
		}
		best := math.Inf(1)
		lo, hi := g.outStart[u], g.outStart[u+1]
		for k := lo; k < hi; k++ {
			a := g.outArc[k]
			if usable != nil && !usable[a] {
				continue
			}
			v := w[a] + dist[g.outHead[k]]
			if math.IsInf(v, 1) {
				continue
			}
			if next[u] == NoArc || v < best*(1-tol) {
				best = v
				next[u] = a
			}
		}
	}
}
