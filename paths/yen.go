package paths

import "slices"

// Path is a loopless path: its nodes from source to destination, the arcs
// between them (len(Arcs) = len(Nodes) − 1) and its cost, the sum of the arc
// weights taken from the source.
type Path struct {
	Nodes []int
	Arcs  []int
	Cost  float64
}

// before orders paths by cost, then by node sequence.
func (p *Path) before(q *Path) bool {
	if p.Cost != q.Cost {
		return p.Cost < q.Cost
	}
	return slices.Compare(p.Nodes, q.Nodes) < 0
}

// KShortest returns up to k loopless paths from src to dst in increasing
// cost, following Yen ("Finding the k shortest loopless paths in a
// network", Management Science 17(11), 1971): each new path deviates from
// the last one found at a spur node, the root before it kept, the arcs
// other found paths take from the same root banned. Weights are as for
// From (every arc usable unless its weight is +Inf). Ties are ordered by
// node sequence and each spur search breaks ties as From does, so the result
// is a pure function of the inputs. It returns nil when dst is unreachable
// or equals src. Cost: O(k·N·(N + M) log N); the returned paths are newly
// allocated, the searches reuse s.
func (s *Search) KShortest(g *Graph, src, dst, k int, w []float64) []Path {
	if src == dst || k <= 0 {
		return nil
	}
	first, ok := s.spur(g, src, dst, w, nil, nil, nil)
	if !ok {
		return nil
	}
	n, m := g.NumNodes(), g.NumArcs()
	if len(s.bannedNode) != n {
		s.bannedNode = make([]bool, n)
	}
	if len(s.usableArc) != m {
		s.usableArc = make([]bool, m)
	}
	A := []Path{first}
	var B []Path
	for len(A) < k {
		last := A[len(A)-1]
		for i := 0; i < len(last.Nodes)-1; i++ {
			spur := last.Nodes[i]
			root := last.Nodes[:i+1]
			clear(s.bannedNode)
			for a := range s.usableArc {
				s.usableArc[a] = true
			}
			for j := range A {
				if len(A[j].Nodes) > i && slices.Equal(A[j].Nodes[:i+1], root) {
					s.usableArc[A[j].Arcs[i]] = false
				}
			}
			for _, v := range root[:i] {
				s.bannedNode[v] = true
			}
			cand, ok := s.spur(g, spur, dst, w, s.usableArc, s.bannedNode, last.Arcs[:i])
			if !ok {
				continue
			}
			if !slices.ContainsFunc(A, func(p Path) bool { return slices.Equal(p.Nodes, cand.Nodes) }) &&
				!slices.ContainsFunc(B, func(p Path) bool { return slices.Equal(p.Nodes, cand.Nodes) }) {
				B = append(B, cand)
			}
		}
		if len(B) == 0 {
			break
		}
		bi := 0
		for j := 1; j < len(B); j++ {
			if B[j].before(&B[bi]) {
				bi = j
			}
		}
		A = append(A, B[bi])
		B = slices.Delete(B, bi, bi+1)
	}
	return A
}

// spur returns the path made of the arcs root followed by the cheapest path
// from spur to dst over usable arcs (nil: all) that avoids banned nodes
// (nil: none), and false when there is none.
func (s *Search) spur(g *Graph, spur, dst int, w []float64, usable, bannedNode []bool, root []int) (Path, bool) {
	if !s.between(g, spur, dst, w, usable, bannedNode) {
		return Path{}, false
	}
	s.arcBuf = append(s.arcBuf[:0], root...)
	s.arcBuf, _ = s.ArcsTo(g, dst, s.arcBuf)
	p := Path{Arcs: slices.Clone(s.arcBuf), Nodes: make([]int, 0, len(s.arcBuf)+1)}
	if len(root) > 0 {
		p.Nodes = append(p.Nodes, int(g.tail[root[0]]))
	} else {
		p.Nodes = append(p.Nodes, spur)
	}
	for _, a := range p.Arcs {
		p.Cost += w[a]
		p.Nodes = append(p.Nodes, int(g.head[a]))
	}
	return p, true
}
