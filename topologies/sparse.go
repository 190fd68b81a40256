package topologies

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"sort"

	"hoplore/paths"
	"hoplore/sim"
)

// Sparse Waxman graphs. With degree > 0 the waxman generator draws one
// graph whose expected mean degree is degree: alpha is solved for from the
// distribution of the distance between two uniform points in the square,
// candidate pairs come from a grid of cells instead of all N² pairs, and
// the components of the draw are joined by the shortest added links.

// waxmanMissed bounds the expected number of links the sparse draw leaves
// out by never looking at pairs farther apart than its cut-off radius.
const waxmanMissed = 1e-3

// squareDistanceDensity is the density of the distance r between two
// points drawn uniformly on the unit square: r·∫4(1−r cos θ)(1−r sin θ) dθ
// over the angles θ ∈ [0, π/2] at which both coordinate differences are at
// most 1. For r ≤ 1 it is 2r(π − 4r + r²); for 1 < r ≤ √2 the angles run
// from arccos(1/r) to arcsin(1/r).
func squareDistanceDensity(r float64) float64 {
	switch {
	case r < 0 || r > math.Sqrt2:
		return 0
	case r <= 1:
		return 2 * r * (math.Pi - 4*r + r*r)
	}
	prim := func(t float64) float64 {
		s, c := math.Sincos(t)
		return t - r*s + r*c + r*r*s*s/2
	}
	return 4 * r * (prim(math.Asin(1/r)) - prim(math.Acos(1/r)))
}

// meanWaxmanProb is E[exp(−d/lambda)] for the distance d between two
// uniform points on the unit square (lambda in units of the side), by
// Simpson's rule on [0, 1] and [1, √2] with steps at most lambda/20.
func meanWaxmanProb(lambda float64) float64 {
	f := func(r float64) float64 { return squareDistanceDensity(r) * math.Exp(-r/lambda) }
	simpson := func(a, b float64) float64 {
		n := int(math.Ceil((b - a) / lambda * 20))
		n = max(n+n%2, 200)
		n = min(n, 1<<22)
		h := (b - a) / float64(n)
		s := f(a) + f(b)
		for i := 1; i < n; i++ {
			w := 2.0
			if i%2 == 1 {
				w = 4
			}
			s += w * f(a+float64(i)*h)
		}
		return s * h / 3
	}
	return simpson(0, 1) + simpson(1, math.Sqrt2)
}

// solveWaxmanLambda returns the length scale lambda (in units of the
// square's side) at which the expected mean degree of an n-node Waxman
// graph with the given beta, (n−1)·beta·E[exp(−d/lambda)], equals degree,
// by bisection on log lambda.
func solveWaxmanLambda(n int, beta, degree float64) (float64, error) {
	top := float64(n-1) * beta
	if degree >= top {
		return 0, &ParamError{Param: "degree", Msg: fmt.Sprintf("must be less than (nodes−1)·beta = %.6g", top)}
	}
	lo, hi := math.Log(1e-12), math.Log(1e6)
	for range 200 {
		mid := (lo + hi) / 2
		if float64(n-1)*beta*meanWaxmanProb(math.Exp(mid)) < degree {
			lo = mid
		} else {
			hi = mid
		}
		if hi-lo < 1e-12 {
			break
		}
	}
	return math.Exp((lo + hi) / 2), nil
}

// hullDiameter returns the largest distance between two of the points,
// found among the vertices of their convex hull (Andrew's monotone chain,
// Inf. Process. Lett. 1979), which hold the farthest pair.
func hullDiameter(x, y []float64) float64 {
	idx := make([]int, len(x))
	for i := range idx {
		idx[i] = i
	}
	sort.Slice(idx, func(a, b int) bool {
		i, j := idx[a], idx[b]
		if x[i] != x[j] {
			return x[i] < x[j]
		}
		return y[i] < y[j]
	})
	cross := func(o, a, b int) float64 {
		return (x[a]-x[o])*(y[b]-y[o]) - (y[a]-y[o])*(x[b]-x[o])
	}
	hull := make([]int, 0, 2*len(idx))
	for _, p := range idx {
		for len(hull) >= 2 && cross(hull[len(hull)-2], hull[len(hull)-1], p) <= 0 {
			hull = hull[:len(hull)-1]
		}
		hull = append(hull, p)
	}
	lower := len(hull) + 1
	for k := len(idx) - 2; k >= 0; k-- {
		p := idx[k]
		for len(hull) >= lower && cross(hull[len(hull)-2], hull[len(hull)-1], p) <= 0 {
			hull = hull[:len(hull)-1]
		}
		hull = append(hull, p)
	}
	l := 0.0
	for a := range hull {
		for b := a + 1; b < len(hull); b++ {
			l = math.Max(l, math.Hypot(x[hull[a]]-x[hull[b]], y[hull[a]]-y[hull[b]]))
		}
	}
	return l
}

// cellGrid buckets points on a side × side square into k × k cells.
type cellGrid struct {
	k     int
	size  float64
	start []int32 // cell c holds order[start[c]:start[c+1]]
	order []int32 // point indices, by cell, ascending within a cell
}

func newCellGrid(x, y []float64, side, size float64) *cellGrid {
	k := int(math.Ceil(side / size))
	k = max(1, min(k, 4096))
	g := &cellGrid{k: k, size: side / float64(k), start: make([]int32, k*k+1), order: make([]int32, len(x))}
	cell := make([]int32, len(x))
	for i := range x {
		c := g.cellOf(x[i], y[i])
		cell[i] = int32(c)
		g.start[c+1]++
	}
	for c := 0; c < k*k; c++ {
		g.start[c+1] += g.start[c]
	}
	fill := slices.Clone(g.start[:k*k])
	for i := range x {
		g.order[fill[cell[i]]] = int32(i)
		fill[cell[i]]++
	}
	return g
}

func (g *cellGrid) coord(v float64) int {
	return max(0, min(g.k-1, int(v/g.size)))
}

func (g *cellGrid) cellOf(x, y float64) int { return g.coord(y)*g.k + g.coord(x) }

func (g *cellGrid) points(cx, cy int) []int32 {
	if cx < 0 || cy < 0 || cx >= g.k || cy >= g.k {
		return nil
	}
	c := cy*g.k + cx
	return g.order[g.start[c]:g.start[c+1]]
}

// drawWaxmanSparse places n nodes on the square as drawWaxman does, then
// links pairs with the Waxman probability beta·exp(−d/lambda). Pairs farther
// apart than the radius R = lambda·ln(beta·n²/(2·waxmanMissed)) are never
// linked: the model would link fewer than waxmanMissed of them in
// expectation. Nodes are bucketed into square cells of side 2·lambda; the
// pairs between two cells whose closest points are dmin apart are visited
// by geometric skipping with the bound p = beta·exp(−dmin/lambda) and each
// visited pair kept with probability (its own probability)/p, which draws
// every pair independently with its exact probability while looking at
// about n1·n2·p of the n1·n2 pairs. Edges are returned in lexicographic
// order.
func drawWaxmanSparse(r *rand.Rand, n int, beta, lambda, side float64) waxmanSample {
	s := waxmanSample{x: make([]float64, n), y: make([]float64, n)}
	for i := range n {
		s.x[i] = r.Float64() * side
		s.y[i] = r.Float64() * side
	}
	s.l = hullDiameter(s.x, s.y)
	cut := lambda * math.Log(beta*float64(n)*float64(n)/(2*waxmanMissed))
	g := newCellGrid(s.x, s.y, side, math.Max(2*lambda, side/4096))
	// Offsets to the cells looked at from each cell, each unordered pair of
	// cells once: the cell itself, then those after it in row-major order,
	// up to the cut-off.
	type offset struct {
		dx, dy int
		p      float64 // bound on the link probability between the cells
	}
	reach := int(math.Ceil(cut/g.size)) + 1
	var offs []offset
	for dy := 0; dy <= reach; dy++ {
		for dx := -reach; dx <= reach; dx++ {
			if dy == 0 && dx < 0 {
				continue
			}
			gx, gy := float64(max(dx, -dx)-1), float64(dy-1)
			dmin := g.size * math.Hypot(math.Max(gx, 0), math.Max(gy, 0))
			if dmin > cut {
				continue
			}
			offs = append(offs, offset{dx, dy, beta * math.Exp(-dmin/lambda)})
		}
	}
	link := func(i, j int32, bound float64) {
		d := math.Hypot(s.x[i]-s.x[j], s.y[i]-s.y[j])
		if d <= cut && r.Float64()*bound < beta*math.Exp(-d/lambda) {
			s.edges = append(s.edges, [2]int{int(min(i, j)), int(max(i, j))})
		}
	}
	for cy := range g.k {
		for cx := range g.k {
			here := g.points(cx, cy)
			if len(here) == 0 {
				continue
			}
			for _, o := range offs {
				if o.dx == 0 && o.dy == 0 {
					for a, i := range here {
						for _, j := range here[a+1:] {
							link(i, j, 1)
						}
					}
					continue
				}
				there := g.points(cx+o.dx, cy+o.dy)
				m := len(here) * len(there)
				if m == 0 {
					continue
				}
				if o.p > 0.25 {
					for _, i := range here {
						for _, j := range there {
							link(i, j, 1)
						}
					}
					continue
				}
				// Geometric skipping: the gap to the next pair drawn with
				// probability o.p is floor(ln U / ln(1−o.p)).
				lq := math.Log1p(-o.p)
				for k := -1; ; {
					gap := math.Floor(math.Log(1-r.Float64()) / lq)
					if float64(k)+1+gap >= float64(m) {
						break
					}
					k += 1 + int(gap)
					link(here[k/len(there)], there[k%len(there)], o.p)
				}
			}
		}
	}
	slices.SortFunc(s.edges, func(a, b [2]int) int {
		if a[0] != b[0] {
			return a[0] - b[0]
		}
		return a[1] - b[1]
	})
	return s
}

// joinComponents adds the shortest links that join the components of the
// graph on the points into one: each round, every component but the
// largest takes its shortest link to a node outside it (ties broken by
// node indices), and those links are added shortest first unless an
// earlier one of the round already joined the same components. Each such
// link is the shortest leaving its component, so the links added are a
// minimum spanning tree of the components (Borůvka 1926). It returns the
// edges added.
func joinComponents(x, y []float64, edges [][2]int, side float64) [][2]int {
	n := len(x)
	if n < 2 {
		return nil
	}
	var grid *cellGrid
	var added [][2]int
	for {
		comps := paths.Components(n, edges)
		if len(comps) == 1 {
			return added
		}
		if grid == nil {
			grid = newCellGrid(x, y, side, side/math.Ceil(math.Sqrt(float64(n)/2)))
		}
		label := make([]int, n)
		largest := 0
		for c, members := range comps {
			for _, v := range members {
				label[v] = c
			}
			if len(members) > len(comps[largest]) {
				largest = c
			}
		}
		type cand struct {
			d    float64
			a, b int
		}
		less := func(p, q cand) bool {
			if p.d != q.d {
				return p.d < q.d
			}
			if p.a != q.a {
				return p.a < q.a
			}
			return p.b < q.b
		}
		var round []cand
		for c, members := range comps {
			if c == largest {
				continue
			}
			best := cand{d: math.Inf(1)}
			for _, v := range members {
				cx, cy := grid.coord(x[v]), grid.coord(y[v])
				for ring := 0; ring <= grid.k; ring++ {
					// points in ring ring+1 and beyond are at least
					// ring·size away
					if float64(ring-1)*grid.size > best.d {
						break
					}
					for dy := -ring; dy <= ring; dy++ {
						for dx := -ring; dx <= ring; dx++ {
							if max(dx, -dx, dy, -dy) != ring {
								continue
							}
							for _, w := range grid.points(cx+dx, cy+dy) {
								if label[w] == c {
									continue
								}
								p := cand{math.Hypot(x[v]-x[w], y[v]-y[w]), min(v, int(w)), max(v, int(w))}
								if less(p, best) {
									best = p
								}
							}
						}
					}
				}
			}
			round = append(round, best)
		}
		sort.Slice(round, func(i, j int) bool { return less(round[i], round[j]) })
		parent := make([]int, len(comps))
		for i := range parent {
			parent[i] = i
		}
		find := func(v int) int {
			for parent[v] != v {
				parent[v] = parent[parent[v]]
				v = parent[v]
			}
			return v
		}
		for _, e := range round {
			ra, rb := find(label[e.a]), find(label[e.b])
			if ra == rb {
				continue
			}
			parent[ra] = rb
			edges = append(edges, [2]int{e.a, e.b})
			added = append(added, [2]int{e.a, e.b})
		}
	}
}

// buildWaxmanSparse builds a waxman graph with a target mean degree.
func buildWaxmanSparse(v values) (*sim.Graph, error) {
	n, beta, side, degree := v.int("nodes"), v.float("beta"), v.float("side_km"), v.float("degree")
	lambda, err := solveWaxmanLambda(n, beta, degree)
	if err != nil {
		return nil, err
	}
	r := rand.New(rand.NewPCG(uint64(v.int("seed")), streamWaxman))
	s := drawWaxmanSparse(r, n, beta, lambda*side, side)
	added := joinComponents(s.x, s.y, s.edges, side)
	edges := append(s.edges, added...)
	slices.SortFunc(edges, func(a, b [2]int) int {
		if a[0] != b[0] {
			return a[0] - b[0]
		}
		return a[1] - b[1]
	})
	var b builder
	b.g.Nodes = make([]sim.Node, 0, n)
	for i := range n {
		b.g.Nodes = append(b.g.Nodes, sim.Node{Name: fmt.Sprintf("n%d", i), Coord: sim.Plane, X: s.x[i], Y: s.y[i]})
	}
	b.g.Links = make([]sim.Link, 0, len(edges))
	for _, e := range edges {
		b.geoLink(e[0], e[1], v.mbps("bandwidth_mbps"), v.int("buffer"))
	}
	return &b.g, nil
}
