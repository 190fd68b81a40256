package paths

// Components returns the connected components of the undirected graph on
// nodes 0…n−1 with the given edges (pairs of node indices), each as its
// sorted node indices, ordered by their lowest member. It uses union–find
// with path halving (Tarjan, "Efficiency of a good but not linear set union
// algorithm", J. ACM 22(2), 1975). Cost: O((n + len(edges)) α(n)).
func Components(n int, edges [][2]int) [][]int {
	uf := newUnionFind(n)
	for _, e := range edges {
		uf.union(e[0], e[1])
	}
	// the root of a component is its lowest member: label components in
	// order of their lowest member, then fill them in node order
	label := make([]int, n)
	var sizes []int
	for v := 0; v < n; v++ {
		if r := uf.find(v); r == v {
			label[v] = len(sizes)
			sizes = append(sizes, 0)
		} else {
			label[v] = label[r]
		}
		sizes[label[v]]++
	}
	out := make([][]int, len(sizes))
	for i, s := range sizes {
		out[i] = make([]int, 0, s)
	}
	for v := 0; v < n; v++ {
		out[label[v]] = append(out[label[v]], v)
	}
	return out
}

// Connected reports whether the n ≥ 1 nodes joined by edges form a single
// component (false for n = 0). Cost: O((n + len(edges)) α(n)).
func Connected(n int, edges [][2]int) bool {
	uf := newUnionFind(n)
	comps := n
	for _, e := range edges {
		if uf.union(e[0], e[1]) {
			comps--
		}
	}
	return comps == 1
}

// unionFind keeps each set's lowest member as its root.
type unionFind []int32

func newUnionFind(n int) unionFind {
	p := make(unionFind, n)
	for i := range p {
		p[i] = int32(i)
	}
	return p
}

func (p unionFind) find(x int) int {
	for int(p[x]) != x {
		p[x] = p[p[x]]
		x = int(p[x])
	}
	return x
}

// union joins the sets of a and b and reports whether they were apart.
func (p unionFind) union(a, b int) bool {
	ra, rb := p.find(a), p.find(b)
	switch {
	case ra == rb:
		return false
	case ra < rb:
		p[rb] = int32(ra)
	default:
		p[ra] = int32(rb)
	}
	return true
}

// Components labels the weakly connected components of g restricted to the
// usable arcs (nil: all) and the live nodes (nil: all), arcs taken in either
// direction: label[v] is v's component, numbered 0, 1, … in order of each
// component's lowest node, or −1 when v is not live; an arc with an end
// that is not live joins nothing. It returns the number of components.
// Cost: O(N + M); allocation-free once the workspace is sized.
func (s *Search) Components(g *Graph, usable, live []bool, label []int32) int {
	n := g.NumNodes()
	for v := range label {
		label[v] = -1
	}
	if cap(s.queue) < n {
		s.queue = make([]int32, 0, n)
	}
	var count int32
	for r := 0; r < n; r++ {
		if label[r] >= 0 || (live != nil && !live[r]) {
			continue
		}
		label[r] = count
		q := append(s.queue[:0], int32(r))
		for i := 0; i < len(q); i++ {
			u := q[i]
			for _, side := range [2]struct{ start, other, arc []int32 }{
				{g.outStart, g.outHead, g.outArc}, {g.inStart, g.inTail, g.inArc},
			} {
				for k := side.start[u]; k < side.start[u+1]; k++ {
					v := side.other[k]
					if label[v] >= 0 || (usable != nil && !usable[side.arc[k]]) || (live != nil && !live[v]) {
						continue
					}
					label[v] = count
					q = append(q, v)
				}
			}
		}
		s.queue = q
		count++
	}
	return int(count)
}
