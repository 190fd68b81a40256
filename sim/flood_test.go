package sim_test

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	gpath "gonum.org/v1/gonum/graph/path"
	"gonum.org/v1/gonum/graph/simple"

	"hoplore/sim"
)

// newsAgent records when each node hears link-state news, and routes nothing.
type newsAgent struct {
	heard map[[2]int]sim.Time // (node, link) → time
}

func (a *newsAgent) Name() string { return "news" }

func (a *newsAgent) Node(v *sim.NodeView) sim.Router { return &newsRouter{a: a, v: v} }

type newsRouter struct {
	a *newsAgent
	v *sim.NodeView
}

func (r *newsRouter) Route(*sim.Packet) int { return sim.NoRoute }

func (r *newsRouter) LinkChanged(link int, up bool) {
	r.a.heard[[2]int{r.v.ID(), link}] = r.v.Now()
}

// Link-state news of a failed link reaches every node at the detection
// delay plus its propagation-delay distance from the nearer end node over
// the links still up (README, "The model"), and a node cut off from both
// never hears; distances from gonum's graph/path.DijkstraFrom (gonum v0.17)
// on the graph without the failed links, from a virtual node joined to both
// end nodes at zero cost.
func TestFloodReachesEveryNodeAtItsDistance(t *testing.T) {
	r := rand.New(rand.NewPCG(5, 6))
	for rep := range 5 {
		n := 12 + r.IntN(20)
		g := &sim.Graph{Name: fmt.Sprint("random", rep)}
		for i := range n {
			g.Nodes = append(g.Nodes, sim.Node{Name: fmt.Sprint("n", i)})
		}
		link := func(a, b int) {
			g.Links = append(g.Links, sim.Link{A: a, B: b, Bandwidth: 1e6, Delay: sim.Time(1+r.IntN(20)) * sim.Millisecond, Buffer: 10})
		}
		for i := 1; i < n; i++ {
			link(i, r.IntN(i)) // a random tree: connected
		}
		for range n / 2 {
			if a, b := r.IntN(n), r.IntN(n); a != b {
				link(a, b)
			}
		}
		net := sim.Compile(g)
		cut := r.Perm(len(g.Links))[:2]
		a := &newsAgent{heard: map[[2]int]sim.Time{}}
		const at, detect = 2 * sim.Second, 50 * sim.Millisecond
		cfg := &sim.Config{Net: net, Agent: a, Seed: 1, Duration: 5 * sim.Second, Bin: sim.Second,
			Traffic:  sim.Traffic{Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 100}},
			Failures: sim.Failures{Detection: detect, Events: []sim.FailureEvent{{At: at, Links: cut, Node: -1}}}}
		if _, err := sim.Run(cfg); err != nil {
			t.Fatal(err)
		}
		for k, l := range cut {
			// the links of one event go down in their order: news of the
			// k-th travels over the links up once it is down
			sp := gpath.DijkstraFrom(simple.Node(n), floodReference(g, cut[:k+1], l))
			for v := range n {
				got, ok := a.heard[[2]int{v, l}]
				_, d := sp.To(int64(v))
				switch {
				case math.IsInf(d, 1) && ok:
					t.Errorf("rep %d: node %d, cut off from link %d, heard of it", rep, v, l)
				case math.IsInf(d, 1):
				case !ok:
					t.Errorf("rep %d: node %d never heard of link %d (distance %g ns)", rep, v, l, d)
				case got != at+detect+sim.Time(d):
					t.Errorf("rep %d: node %d heard of link %d at %v, want %v", rep, v, l, got, at+detect+sim.Time(d))
				}
			}
		}
	}
}

// floodReference is g's links without those down, as a directed graph
// weighted by propagation delay in ns, plus node N joined at cost 0 to both
// end nodes of link l.
func floodReference(g *sim.Graph, down []int, l int) *simple.WeightedDirectedGraph {
	n := len(g.Nodes)
	ref := simple.NewWeightedDirectedGraph(0, math.Inf(1))
	for v := range n + 1 {
		ref.AddNode(simple.Node(v))
	}
	for i, lk := range g.Links {
		if slices.Contains(down, i) {
			continue
		}
		w := float64(lk.Delay)
		if e := ref.WeightedEdge(int64(lk.A), int64(lk.B)); e == nil || e.Weight() > w {
			ref.SetWeightedEdge(ref.NewWeightedEdge(simple.Node(lk.A), simple.Node(lk.B), w))
			ref.SetWeightedEdge(ref.NewWeightedEdge(simple.Node(lk.B), simple.Node(lk.A), w))
		}
	}
	ref.SetWeightedEdge(ref.NewWeightedEdge(simple.Node(n), simple.Node(g.Links[l].A), 0))
	ref.SetWeightedEdge(ref.NewWeightedEdge(simple.Node(n), simple.Node(g.Links[l].B), 0))
	return ref
}
