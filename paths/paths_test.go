package paths_test

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/gonum/graph"
	gpath "gonum.org/v1/gonum/graph/path"
	"gonum.org/v1/gonum/graph/simple"
	"gonum.org/v1/gonum/graph/topo"

	"hoplore/paths"
)

// instance is a random directed graph with weights and a usable mask.
type instance struct {
	n            int
	tails, heads []int
	w            []float64
	usable       []bool // nil: all
	g            *paths.Graph
}

// randomInstance draws n nodes and about n·deg arcs. With ints, weights are
// small integers (many exact ties); otherwise uniform in (0, 10). parallel
// allows parallel arcs and self-loops; masked makes about a tenth of the
// arcs unusable through the mask and a tenth through +Inf weights.
func randomInstance(r *rand.Rand, n int, deg float64, ints, parallel, masked bool) *instance {
	in := &instance{n: n}
	seen := map[[2]int]bool{}
	m := int(float64(n) * deg)
	for len(in.tails) < m {
		a, b := r.IntN(n), r.IntN(n)
		if !parallel && (a == b || seen[[2]int{a, b}]) {
			if len(seen) >= n*(n-1) {
				break
			}
			continue
		}
		seen[[2]int{a, b}] = true
		in.tails = append(in.tails, a)
		in.heads = append(in.heads, b)
		w := 0.0
		if ints {
			w = float64(r.IntN(4))
		} else {
			w = 10 * (1 - r.Float64())
		}
		in.w = append(in.w, w)
	}
	if masked {
		in.usable = make([]bool, len(in.w))
		for a := range in.w {
			in.usable[a] = r.IntN(10) != 0
			if r.IntN(10) == 0 {
				in.w[a] = math.Inf(1)
			}
		}
	}
	in.g = paths.NewGraph(n, in.tails, in.heads)
	return in
}

// gonumGraph is the reference: usable arcs with finite weights, the
// cheapest of parallel arcs, no self-loops (which never shorten a path).
func (in *instance) gonumGraph(reverse bool) *simple.WeightedDirectedGraph {
	g := simple.NewWeightedDirectedGraph(0, math.Inf(1))
	for v := 0; v < in.n; v++ {
		g.AddNode(simple.Node(v))
	}
	for a := range in.tails {
		if (in.usable != nil && !in.usable[a]) || math.IsInf(in.w[a], 1) || in.tails[a] == in.heads[a] {
			continue
		}
		t, h := in.tails[a], in.heads[a]
		if reverse {
			t, h = h, t
		}
		if e := g.WeightedEdge(int64(t), int64(h)); e != nil && e.Weight() <= in.w[a] {
			continue
		}
		g.SetWeightedEdge(g.NewWeightedEdge(simple.Node(t), simple.Node(h), in.w[a]))
	}
	return g
}

func close(a, b float64) bool {
	if math.IsInf(a, 1) || math.IsInf(b, 1) {
		return a == b
	}
	return math.Abs(a-b) <= 1e-12*math.Max(1, math.Abs(b))
}

type shape struct {
	name                   string
	n                      int
	deg                    float64
	ints, parallel, masked bool
}

var shapes = []shape{
	{"sparse", 30, 1.5, false, false, false},
	{"dense-ints", 20, 6, true, false, false},
	{"masked-parallel", 40, 3, false, true, true},
	{"ints-masked", 25, 3, true, true, true},
	{"tiny", 3, 2, true, true, false},
}

// Distances from a source agree with gonum's graph/path.DijkstraFrom
// (gonum v0.17, an independent general-purpose implementation); gonum's
// tie-breaking is not deterministic, so only distances are compared, and
// every node's Via arc must realise its distance.
func TestFromMatchesGonum(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 1))
	var s paths.Search
	for _, sh := range shapes {
		for rep := range 10 {
			in := randomInstance(r, sh.n, sh.deg, sh.ints, sh.parallel, sh.masked)
			ref := in.gonumGraph(false)
			for src := 0; src < in.n; src++ {
				s.From(in.g, src, in.w, in.usable)
				sp := gpath.DijkstraFrom(simple.Node(src), ref)
				for v := 0; v < in.n; v++ {
					_, want := sp.To(int64(v))
					if got := s.Dist[v]; !close(got, want) {
						t.Fatalf("%s/%d: dist %d→%d = %g, gonum %g", sh.name, rep, src, v, got, want)
					}
					checkVia(t, in, &s, src, v, false)
				}
			}
		}
	}
}

func checkVia(t *testing.T, in *instance, s *paths.Search, root, v int, reverse bool) {
	t.Helper()
	a := s.Via[v]
	switch {
	case v == root || math.IsInf(s.Dist[v], 1):
		if a != paths.NoArc {
			t.Fatalf("node %d: via %d, want none", v, a)
		}
	case a == paths.NoArc:
		t.Fatalf("node %d reached without an arc", v)
	default:
		tail, head := in.g.Arc(int(a))
		other, self := tail, head
		if reverse {
			other, self = head, tail
		}
		if self != v || s.Dist[other]+in.w[a] != s.Dist[v] {
			t.Fatalf("node %d: via arc %d (%d→%d) does not realise distance %g", v, a, tail, head, s.Dist[v])
		}
	}
}

// Distances towards a destination agree with gonum on the reversed graph.
func TestToMatchesGonum(t *testing.T) {
	r := rand.New(rand.NewPCG(2, 1))
	var s paths.Search
	for _, sh := range shapes {
		for rep := range 10 {
			in := randomInstance(r, sh.n, sh.deg, sh.ints, sh.parallel, sh.masked)
			ref := in.gonumGraph(true)
			for dst := 0; dst < in.n; dst++ {
				s.To(in.g, dst, in.w, in.usable)
				sp := gpath.DijkstraFrom(simple.Node(dst), ref)
				for u := 0; u < in.n; u++ {
					_, want := sp.To(int64(u))
					if got := s.Dist[u]; !close(got, want) {
						t.Fatalf("%s/%d: dist %d→%d = %g, gonum %g", sh.name, rep, u, dst, got, want)
					}
					checkVia(t, in, &s, dst, u, true)
				}
			}
		}
	}
}

// From a set of sources, a node's distance is the least over the sources of
// gonum's distance; Between stops at the destination with its distance.
func TestFromSetAndBetween(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 1))
	var s paths.Search
	for _, sh := range shapes {
		in := randomInstance(r, sh.n, sh.deg, sh.ints, sh.parallel, sh.masked)
		ref := in.gonumGraph(false)
		all := gpath.DijkstraAllPaths(ref)
		srcs := []int{r.IntN(in.n), r.IntN(in.n)}
		s.FromSet(in.g, srcs, in.w, in.usable)
		for v := 0; v < in.n; v++ {
			want := math.Min(all.Weight(int64(srcs[0]), int64(v)), all.Weight(int64(srcs[1]), int64(v)))
			if !close(s.Dist[v], want) {
				t.Fatalf("%s: set dist to %d = %g, gonum %g", sh.name, v, s.Dist[v], want)
			}
		}
		for src := 0; src < in.n; src++ {
			for dst := 0; dst < in.n; dst++ {
				ok := s.Between(in.g, src, dst, in.w, in.usable)
				want := all.Weight(int64(src), int64(dst))
				if ok != !math.IsInf(want, 1) || (ok && !close(s.Dist[dst], want)) {
					t.Fatalf("%s: between %d→%d: %v %g, gonum %g", sh.name, src, dst, ok, s.Dist[dst], want)
				}
				arcs, ok2 := s.ArcsTo(in.g, dst, nil)
				if ok2 != ok {
					t.Fatalf("%s: ArcsTo says %v, Between %v", sh.name, ok2, ok)
				}
				sum, at := 0.0, src
				for _, a := range arcs {
					tl, hd := in.g.Arc(a)
					if tl != at {
						t.Fatalf("%s: path %d→%d is not joined at arc %d", sh.name, src, dst, a)
					}
					sum += in.w[a]
					at = hd
				}
				if ok && (at != dst || !close(sum, want)) {
					t.Fatalf("%s: path %d→%d ends at %d costing %g, want %g", sh.name, src, dst, at, sum, want)
				}
			}
		}
	}
}

// The first-hop set from a source to d holds exactly the out-slots i whose
// arc weight plus the head's distance to d equals the distance from the
// source to d (integer weights: the tolerance plays no part), with
// distances from gonum.
func TestFirstHopsAgainstGonum(t *testing.T) {
	r := rand.New(rand.NewPCG(4, 1))
	var f paths.FirstHops
	for _, sh := range shapes {
		if !sh.ints {
			continue
		}
		for rep := range 10 {
			in := randomInstance(r, sh.n, sh.deg, true, sh.parallel, sh.masked)
			// zero weights can make a cheapest path leave and re-enter the
			// source; keep them positive here
			for a := range in.w {
				if in.w[a] == 0 {
					in.w[a] = 4
				}
			}
			all := gpath.DijkstraAllPaths(in.gonumGraph(false))
			for src := 0; src < in.n; src++ {
				f.Compute(in.g, src, in.w, in.usable)
				arcs, heads := in.g.Out(src)
				for d := 0; d < in.n; d++ {
					want := all.Weight(int64(src), int64(d))
					if !close(f.Dist[d], want) {
						t.Fatalf("%s: dist %d→%d = %g, gonum %g", sh.name, src, d, f.Dist[d], want)
					}
					set := f.Set(d)
					first := -1
					for i, a := range arcs {
						usable := (in.usable == nil || in.usable[a]) && !math.IsInf(in.w[a], 1)
						inSet := set[i/64]&(1<<uint(i%64)) != 0
						wantIn := d != src && usable && !math.IsInf(want, 1) && in.w[a]+all.Weight(int64(heads[i]), int64(d)) == want
						if inSet != wantIn {
							t.Fatalf("%s/%d: %d→%d slot %d (arc %d): in set %v, want %v", sh.name, rep, src, d, i, a, inSet, wantIn)
						}
						if wantIn && first < 0 {
							first = i
						}
					}
					if got := f.First(d); got != first {
						t.Fatalf("%s: first hop %d→%d = %d, want %d", sh.name, src, d, got, first)
					}
				}
			}
		}
	}
}

// A source of degree above 64 gets a set of more than one word.
func TestFirstHopsWideSource(t *testing.T) {
	const leaves = 150
	var tails, heads []int
	var w []float64
	for i := 1; i <= leaves; i++ {
		tails, heads = append(tails, 0, i), append(heads, i, leaves+1)
		w = append(w, 1, float64(i%3)) // leaves 3, 6, … tie at cost 1
	}
	g := paths.NewGraph(leaves+2, tails, heads)
	var f paths.FirstHops
	f.Compute(g, 0, w, nil)
	set := f.Set(leaves + 1)
	if len(set) != 3 {
		t.Fatalf("set has %d words, want 3", len(set))
	}
	n := 0
	for i := 0; i < leaves; i++ {
		if set[i/64]&(1<<uint(i%64)) != 0 {
			n++
			if (i+1)%3 != 0 {
				t.Errorf("slot %d (leaf %d) in set", i, i+1)
			}
		}
	}
	if n != leaves/3 || f.First(leaves+1) != 2 {
		t.Errorf("got %d tied first hops from slot %d, want %d from slot 2", n, f.First(leaves+1), leaves/3)
	}
}

// NextHops picks, at every node, the first out-slot attaining the least
// weight plus remaining distance (integer weights: exact).
func TestNextHops(t *testing.T) {
	r := rand.New(rand.NewPCG(5, 1))
	var s paths.Search
	for _, sh := range shapes {
		in := randomInstance(r, sh.n, sh.deg, true, sh.parallel, sh.masked)
		next := make([]int32, in.n)
		for dst := 0; dst < in.n; dst++ {
			s.To(in.g, dst, in.w, in.usable)
			paths.NextHops(in.g, dst, in.w, in.usable, s.Dist, 1e-12, next)
			for u := 0; u < in.n; u++ {
				want := int32(paths.NoArc)
				if u != dst && !math.IsInf(s.Dist[u], 1) {
					arcs, heads := in.g.Out(u)
					for i, a := range arcs {
						if (in.usable == nil || in.usable[a]) && in.w[a]+s.Dist[heads[i]] == s.Dist[u] {
							want = a
							break
						}
					}
				}
				if next[u] != want {
					t.Fatalf("%s: next hop %d→%d = %d, want %d", sh.name, u, dst, next[u], want)
				}
			}
		}
	}
}

// Hop counts agree with gonum's Dijkstra on unit weights.
func TestHopsMatchGonum(t *testing.T) {
	r := rand.New(rand.NewPCG(6, 1))
	var s paths.Search
	for _, sh := range shapes {
		in := randomInstance(r, sh.n, sh.deg, true, sh.parallel, sh.masked)
		for a := range in.w {
			in.w[a] = 1 // +Inf arcs become usable: only the mask counts
		}
		all := gpath.DijkstraAllPaths(in.gonumGraph(false))
		hops := make([]int32, in.n)
		for src := 0; src < in.n; src++ {
			s.Hops(in.g, src, in.usable, hops)
			for v := 0; v < in.n; v++ {
				want := all.Weight(int64(src), int64(v))
				if math.IsInf(want, 1) {
					want = -1
				}
				if float64(hops[v]) != want {
					t.Fatalf("%s: hops %d→%d = %d, gonum %g", sh.name, src, v, hops[v], want)
				}
			}
		}
	}
}

// Yen's k shortest loopless paths: the costs agree with gonum's
// graph/path.YenKShortestPaths, every path is loopless and joined by its
// arcs, costs never decrease, and a second call gives the same paths.
func TestKShortestMatchesGonum(t *testing.T) {
	r := rand.New(rand.NewPCG(7, 1))
	var s paths.Search
	for _, sh := range []shape{{"sparse", 12, 2.5, false, false, false}, {"dense", 9, 5, false, false, false}, {"ints", 10, 3, true, false, false}} {
		for rep := range 4 {
			in := randomInstance(r, sh.n, sh.deg, sh.ints, false, false)
			ref := in.gonumGraph(false)
			for range 6 {
				src, dst := r.IntN(in.n), r.IntN(in.n)
				for _, k := range []int{1, 3, 7} {
					got := s.KShortest(in.g, src, dst, k, in.w)
					var want []float64
					if src != dst {
						for _, p := range gpath.YenKShortestPaths(ref, k, math.Inf(1), simple.Node(src), simple.Node(dst)) {
							want = append(want, pathWeight(ref, p))
						}
					}
					slices.Sort(want)
					if len(got) != len(want) {
						t.Fatalf("%s/%d %d→%d k=%d: %d paths, gonum %d", sh.name, rep, src, dst, k, len(got), len(want))
					}
					for i, p := range got {
						if !close(p.Cost, want[i]) {
							t.Errorf("%s %d→%d k=%d path %d: cost %g, gonum %g", sh.name, src, dst, k, i, p.Cost, want[i])
						}
						checkLoopless(t, in.g, p, src, dst)
						if i > 0 && p.Cost < got[i-1].Cost {
							t.Errorf("path %d cheaper than path %d", i, i-1)
						}
					}
					again := s.KShortest(in.g, src, dst, k, in.w)
					for i := range got {
						if !slices.Equal(got[i].Arcs, again[i].Arcs) {
							t.Fatalf("%s %d→%d k=%d: second call gave another path %d", sh.name, src, dst, k, i)
						}
					}
				}
			}
		}
	}
}

func pathWeight(g graph.Weighted, p []graph.Node) float64 {
	w := 0.0
	for i := 0; i+1 < len(p); i++ {
		e, _ := g.Weight(p[i].ID(), p[i+1].ID())
		w += e
	}
	return w
}

func checkLoopless(t *testing.T, g *paths.Graph, p paths.Path, src, dst int) {
	t.Helper()
	if p.Nodes[0] != src || p.Nodes[len(p.Nodes)-1] != dst || len(p.Arcs) != len(p.Nodes)-1 {
		t.Fatalf("path %v does not run %d→%d", p.Nodes, src, dst)
	}
	seen := map[int]bool{}
	for i, v := range p.Nodes {
		if seen[v] {
			t.Fatalf("path %v revisits %d", p.Nodes, v)
		}
		seen[v] = true
		if i > 0 {
			if tl, hd := g.Arc(p.Arcs[i-1]); tl != p.Nodes[i-1] || hd != v {
				t.Fatalf("path %v: arc %d does not join %d to %d", p.Nodes, p.Arcs[i-1], p.Nodes[i-1], v)
			}
		}
	}
}

// Components agree with gonum's graph/topo.ConnectedComponents, in the
// documented order.
func TestComponentsMatchGonum(t *testing.T) {
	r := rand.New(rand.NewPCG(8, 1))
	for rep := range 40 {
		n := 1 + r.IntN(40)
		var edges [][2]int
		ug := simple.NewUndirectedGraph()
		for v := 0; v < n; v++ {
			ug.AddNode(simple.Node(v))
		}
		for range r.IntN(n + 5) {
			a, b := r.IntN(n), r.IntN(n)
			edges = append(edges, [2]int{a, b})
			if a != b {
				ug.SetEdge(ug.NewEdge(simple.Node(a), simple.Node(b)))
			}
		}
		var want [][]int
		for _, c := range topo.ConnectedComponents(ug) {
			ids := make([]int, len(c))
			for i, v := range c {
				ids[i] = int(v.ID())
			}
			slices.Sort(ids)
			want = append(want, ids)
		}
		slices.SortFunc(want, func(a, b []int) int { return a[0] - b[0] })
		got := paths.Components(n, edges)
		if fmt.Sprint(got) != fmt.Sprint(want) {
			t.Fatalf("rep %d: components %v, gonum %v", rep, got, want)
		}
		if paths.Connected(n, edges) != (len(want) == 1) {
			t.Fatalf("rep %d: Connected says %v with %d components", rep, !(len(want) == 1), len(want))
		}
	}
	if paths.Connected(0, nil) || len(paths.Components(0, nil)) != 0 {
		t.Error("the empty graph is neither connected nor has components")
	}
}

// The heap pops in (key, node) order whatever the push order, duplicates
// included (the reference is the standard library's sort).
func TestHeapOrder(t *testing.T) {
	r := rand.New(rand.NewPCG(9, 1))
	var h paths.Heap
	type kv struct {
		k float64
		v int32
	}
	var all, got []kv
	for i := 0; i < 3000; i++ {
		x := kv{float64(r.IntN(50)), int32(r.IntN(20))}
		all = append(all, x)
		h.Push(x.k, x.v)
		if i%3 == 0 {
			mk, mv := h.Min()
			k, v := h.Pop()
			if mk != k || mv != v {
				t.Fatalf("Min gave (%g, %d), Pop (%g, %d)", mk, mv, k, v)
			}
			got = append(got, kv{k, v})
		}
	}
	for h.Len() > 0 {
		k, v := h.Pop()
		got = append(got, kv{k, v})
	}
	if len(got) != len(all) {
		t.Fatalf("popped %d of %d", len(got), len(all))
	}
	// the pops after the interleaved phase are sorted
	tail := got[len(all)/3:]
	if !slices.IsSortedFunc(tail, func(a, b kv) int {
		if a.k != b.k {
			return int(a.k - b.k)
		}
		return int(a.v - b.v)
	}) {
		t.Error("drained entries are not in (key, node) order")
	}
	slices.SortFunc(all, func(a, b kv) int {
		if a.k != b.k {
			return int(a.k - b.k)
		}
		return int(a.v - b.v)
	})
	slices.SortFunc(got, func(a, b kv) int {
		if a.k != b.k {
			return int(a.k - b.k)
		}
		return int(a.v - b.v)
	})
	if !slices.Equal(all, got) {
		t.Error("popped entries differ from pushed ones")
	}
}

// Repeated searches on a sized workspace allocate nothing.
func TestSearchesAllocateNothing(t *testing.T) {
	in := randomInstance(rand.New(rand.NewPCG(10, 1)), 200, 4, false, true, true)
	var s paths.Search
	var f paths.FirstHops
	hops := make([]int32, in.n)
	next := make([]int32, in.n)
	for _, c := range []struct {
		name string
		fn   func()
	}{
		{"From", func() { s.From(in.g, 3, in.w, in.usable) }},
		{"To", func() { s.To(in.g, 3, in.w, in.usable) }},
		{"Between", func() { s.Between(in.g, 3, 7, in.w, nil) }},
		{"FromSet", func() { s.FromSet(in.g, []int{1, 2}, in.w, in.usable) }},
		{"Hops", func() { s.Hops(in.g, 3, in.usable, hops) }},
		{"NextHops", func() { paths.NextHops(in.g, 3, in.w, in.usable, s.Dist, 1e-12, next) }},
		{"FirstHops", func() { f.Compute(in.g, 3, in.w, in.usable) }},
		{"Components", func() { s.Components(in.g, in.usable, nil, hops) }},
	} {
		c.fn()
		if a := testing.AllocsPerRun(20, c.fn); a != 0 {
			t.Errorf("%s: %g allocations per call, want 0", c.name, a)
		}
	}
}

// NewGraph orders each node's out-arcs by head, then arc index.
func TestGraphOrder(t *testing.T) {
	g := paths.NewGraph(4, []int{0, 0, 0, 0, 2}, []int{3, 1, 3, 2, 0})
	arcs, heads := g.Out(0)
	if !slices.Equal(arcs, []int32{1, 3, 0, 2}) || !slices.Equal(heads, []int32{1, 2, 3, 3}) {
		t.Errorf("out(0) = %v → %v, want [1 3 0 2] → [1 2 3 3]", arcs, heads)
	}
	in, tails := g.In(3)
	if !slices.Equal(in, []int32{0, 2}) || !slices.Equal(tails, []int32{0, 0}) {
		t.Errorf("in(3) = %v ← %v", in, tails)
	}
	if g.NumNodes() != 4 || g.NumArcs() != 5 || g.OutDegree(0) != 4 || g.OutDegree(3) != 0 {
		t.Error("wrong sizes")
	}
}

// Search.Components labels the weak components over usable arcs and live
// nodes as gonum's graph/topo.ConnectedComponents finds them on the
// undirected graph of those arcs.
func TestSearchComponentsMatchGonum(t *testing.T) {
	r := rand.New(rand.NewPCG(11, 1))
	var s paths.Search
	for rep := range 40 {
		in := randomInstance(r, 1+r.IntN(30), 0.3+r.Float64()*1.5, true, true, true)
		live := make([]bool, in.n)
		ug := simple.NewUndirectedGraph()
		for v := range live {
			live[v] = r.IntN(8) != 0
			if live[v] {
				ug.AddNode(simple.Node(v))
			}
		}
		for a := range in.tails {
			x, y := in.tails[a], in.heads[a]
			if in.usable[a] && live[x] && live[y] && x != y {
				ug.SetEdge(ug.NewEdge(simple.Node(x), simple.Node(y)))
			}
		}
		var want [][]int
		for _, c := range topo.ConnectedComponents(ug) {
			ids := make([]int, len(c))
			for i, v := range c {
				ids[i] = int(v.ID())
			}
			slices.Sort(ids)
			want = append(want, ids)
		}
		slices.SortFunc(want, func(a, b []int) int { return a[0] - b[0] })
		label := make([]int32, in.n)
		count := s.Components(in.g, in.usable, live, label)
		got := make([][]int, count)
		for v, l := range label {
			if l < 0 {
				if live[v] {
					t.Fatalf("rep %d: live node %d unlabelled", rep, v)
				}
				continue
			}
			got[l] = append(got[l], v)
		}
		if fmt.Sprint(got) != fmt.Sprint(want) {
			t.Fatalf("rep %d: components %v, gonum %v", rep, got, want)
		}
	}
}

// Programming mistakes panic with a message naming the package.
func TestPanics(t *testing.T) {
	g := paths.NewGraph(2, []int{0}, []int{1})
	var s paths.Search
	var f paths.FirstHops
	for _, c := range []struct {
		name string
		fn   func()
	}{
		{"lengths", func() { paths.NewGraph(2, []int{0, 1}, []int{1}) }},
		{"node out of range", func() { paths.NewGraph(2, []int{0}, []int{2}) }},
		{"negative weight From", func() { s.From(g, 0, []float64{-1}, nil) }},
		{"negative weight To", func() { s.To(g, 1, []float64{-1}, nil) }},
		{"negative weight FirstHops", func() { f.Compute(g, 0, []float64{-1}, nil) }},
	} {
		t.Run(c.name, func(t *testing.T) {
			defer func() {
				r := recover()
				if msg, ok := r.(string); !ok || !strings.HasPrefix(msg, "paths: ") {
					t.Errorf("recovered %v, want a panic starting \"paths: \"", r)
				}
			}()
			c.fn()
		})
	}
}
