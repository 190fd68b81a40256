package topologies

import (
	"fmt"
	"math"
	"math/rand/v2"

	"hoplore/paths"
	"hoplore/sim"
)

// Second PCG seeds, one per randomised generator, so that the same seed
// gives unrelated streams in different generators.
const (
	streamWaxman         = 0x7761786d616e0001
	streamBarabasiAlbert = 0x6261726162610002
)

// waxmanAttempts bounds the redraws of a Waxman graph that is not connected.
const waxmanAttempts = 10000

// waxmanSample is one unconditioned draw of the Waxman model.
type waxmanSample struct {
	x, y  []float64 // km
	l     float64   // largest distance between two nodes, km
	edges [][2]int  // i < j, in lexicographic order
}

// waxmanProb is the probability that two nodes d km apart are linked, when
// the largest distance between two nodes is l km: beta·exp(−d/(l·alpha))
// (Waxman 1988).
func waxmanProb(d, l, alpha, beta float64) float64 {
	if l == 0 {
		return beta
	}
	return beta * math.Exp(-d/(l*alpha))
}

// drawWaxman places n nodes uniformly on a side × side square (km) and links
// each pair i<j, in lexicographic order, with probability waxmanProb. It does
// not look at connectivity.
func drawWaxman(r *rand.Rand, n int, alpha, beta, side float64) waxmanSample {
	s := waxmanSample{x: make([]float64, n), y: make([]float64, n)}
	for i := range n {
		s.x[i] = r.Float64() * side
		s.y[i] = r.Float64() * side
	}
	for i := range n {
		for j := i + 1; j < n; j++ {
			s.l = math.Max(s.l, math.Hypot(s.x[i]-s.x[j], s.y[i]-s.y[j]))
		}
	}
	for i := range n {
		for j := i + 1; j < n; j++ {
			d := math.Hypot(s.x[i]-s.x[j], s.y[i]-s.y[j])
			if r.Float64() < waxmanProb(d, s.l, alpha, beta) {
				s.edges = append(s.edges, [2]int{i, j})
			}
		}
	}
	return s
}

// checkWaxman refuses alpha beside degree (degree sets alpha) and more than
// 10000 nodes without degree (every pair is looked at, in every redraw).
func checkWaxman(given map[string]float64, v values) error {
	_, alpha := given["alpha"]
	switch {
	case v.float("degree") > 0 && alpha:
		return &ParamError{Param: "alpha", Msg: "give alpha or degree, not both (degree solves for alpha)"}
	case v.float("degree") == 0 && v.int("nodes") > 10000:
		return &ParamError{Param: "nodes", Msg: fmt.Sprintf("at most 10000 without degree (got %d); give a target mean degree for larger sparse graphs", v.int("nodes"))}
	}
	return nil
}

func buildWaxman(v values) (*sim.Graph, error) {
	if v.float("degree") > 0 {
		return buildWaxmanSparse(v)
	}
	n := v.int("nodes")
	alpha, beta, side := v.float("alpha"), v.float("beta"), v.float("side_km")
	r := rand.New(rand.NewPCG(uint64(v.int("seed")), streamWaxman))
	for range waxmanAttempts {
		s := drawWaxman(r, n, alpha, beta, side)
		if !paths.Connected(n, s.edges) {
			continue
		}
		var b builder
		for i := range n {
			b.g.Nodes = append(b.g.Nodes, sim.Node{Name: fmt.Sprintf("n%d", i), Coord: sim.Plane, X: s.x[i], Y: s.y[i]})
		}
		for _, e := range s.edges {
			b.geoLink(e[0], e[1], v.mbps("bandwidth_mbps"), v.int("buffer"))
		}
		return &b.g, nil
	}
	// not one parameter's fault: alpha, beta and nodes together
	return nil, fmt.Errorf("topologies: no connected waxman graph with nodes=%d alpha=%g beta=%g in %d draws; raise alpha or beta", n, alpha, beta, waxmanAttempts)
}

// drawBarabasiAlbert grows a preferential-attachment graph (Barabási &
// Albert 1999): it starts from a star on m+1 nodes (node 0 linked to nodes
// 1…m), then each new node v = m+1 … n−1 links to m distinct existing nodes,
// each drawn with probability proportional to its degree (a drawn node
// already chosen for v is drawn again). The graph has m + (n−m−1)·m =
// m(n−m) links. Each link is returned as {older node, newer node}.
func drawBarabasiAlbert(r *rand.Rand, n, m int) [][2]int {
	edges := make([][2]int, 0, m*(n-m))
	ends := make([]int, 0, 2*m*(n-m)) // every link's two ends: a node appears deg times
	for i := 1; i <= m; i++ {
		edges = append(edges, [2]int{0, i})
		ends = append(ends, 0, i)
	}
	chosen := make([]int, 0, m)
	for v := m + 1; v < n; v++ {
		chosen = chosen[:0]
		for len(chosen) < m {
			t := ends[r.IntN(len(ends))]
			dup := false
			for _, c := range chosen {
				if c == t {
					dup = true
					break
				}
			}
			if !dup {
				chosen = append(chosen, t)
			}
		}
		for _, t := range chosen {
			edges = append(edges, [2]int{t, v})
			ends = append(ends, t, v)
		}
	}
	return edges
}

func buildBarabasiAlbert(v values) (*sim.Graph, error) {
	n, m := v.int("nodes"), v.int("m")
	if m >= n {
		return nil, &ParamError{Param: "m", Msg: fmt.Sprintf("must be less than nodes (%d), got %d", n, m)}
	}
	r := rand.New(rand.NewPCG(uint64(v.int("seed")), streamBarabasiAlbert))
	var b builder
	b.nodes(n)
	for _, e := range drawBarabasiAlbert(r, n, m) {
		b.link(e[0], e[1], v.mbps("bandwidth_mbps"), v.ms("delay_ms"), v.int("buffer"))
	}
	return &b.g, nil
}
