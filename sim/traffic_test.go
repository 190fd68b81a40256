package sim_test

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"hoplore/sim"
)

// pathWalkLoads is the definition of ChannelLoads: every pair's rate added
// to each channel of the path HopRoute takes from its source to its
// destination.
func pathWalkLoads(n *sim.Net, m [][]float64, meanBytes float64) []float64 {
	load := make([]float64, len(n.Channels))
	for s := range m {
		for d, r := range m[s] {
			if r <= 0 || s == d {
				continue
			}
			for v := s; v != d; {
				c := sim.HopRoute(n, v, d)
				if c == sim.NoRoute {
					break
				}
				load[c] += r * meanBytes * 8
				v = n.Channels[c].To
			}
		}
	}
	return load
}

// testGraph returns a ring (ties between the two ways round on an even
// ring), a grid (many equal-length paths) or a random connected graph.
func testGraph(kind string, n int, seed uint64) *sim.Graph {
	g := &sim.Graph{Name: kind}
	for i := 0; i < n; i++ {
		g.Nodes = append(g.Nodes, sim.Node{Name: fmt.Sprintf("n%d", i)})
	}
	link := func(a, b int) {
		g.Links = append(g.Links, sim.Link{A: a, B: b, Bandwidth: 1e6 * float64(1+(a+b)%3), Delay: sim.Millisecond, Buffer: 10})
	}
	switch kind {
	case "ring":
		for i := 0; i < n; i++ {
			link(i, (i+1)%n)
		}
	case "grid":
		w := int(math.Sqrt(float64(n)))
		for v := 0; v < n; v++ {
			if (v+1)%w != 0 && v+1 < n {
				link(v, v+1)
			}
			if v+w < n {
				link(v, v+w)
			}
		}
	case "random":
		r := rand.New(rand.NewPCG(seed, 1))
		for v := 1; v < n; v++ {
			link(r.IntN(v), v) // a random tree keeps it connected
		}
		for k := 0; k < n; k++ {
			a, b := r.IntN(n), r.IntN(n)
			if a != b {
				if _, dup := linkIndex(g, a, b); !dup {
					link(a, b)
				}
			}
		}
	}
	return g
}

func linkIndex(g *sim.Graph, a, b int) (int, bool) {
	for i, l := range g.Links {
		if (l.A == a && l.B == b) || (l.A == b && l.B == a) {
			return i, true
		}
	}
	return 0, false
}

// TestChannelLoadsMatchesPathWalk checks the tree accumulation against the
// pair-by-pair definition. The sums are the same terms added in another
// order, so they agree to rounding: a relative 1e-12 (common practice for
// reassociated sums of a few thousand positive terms).
func TestChannelLoadsMatchesPathWalk(t *testing.T) {
	for _, tc := range []struct {
		kind string
		n    int
	}{{"ring", 7}, {"ring", 8}, {"grid", 16}, {"grid", 30}, {"random", 25}, {"random", 60}} {
		t.Run(fmt.Sprintf("%s-%d", tc.kind, tc.n), func(t *testing.T) {
			g := testGraph(tc.kind, tc.n, uint64(tc.n))
			if err := g.Validate(); err != nil {
				t.Fatal(err)
			}
			net := sim.Compile(g)
			r := rand.New(rand.NewPCG(3, uint64(tc.n)))
			sparse := sim.UniformMatrix(net)
			for s := range sparse {
				for d := range sparse[s] {
					if r.IntN(3) == 0 {
						sparse[s][d] = 0
					} else {
						sparse[s][d] *= r.Float64() * 10
					}
				}
			}
			for name, m := range map[string][][]float64{"uniform": sim.UniformMatrix(net), "gravity": sim.GravityMatrix(net), "sparse": sparse} {
				got, want := sim.ChannelLoads(net, m, 700), pathWalkLoads(net, m, 700)
				for c := range want {
					if math.Abs(got[c]-want[c]) > 1e-12*math.Abs(want[c]) {
						t.Errorf("%s: channel %d carries %.17g bit/s, the path walk says %.17g", name, c, got[c], want[c])
					}
				}
			}
		})
	}
}

func BenchmarkChannelLoads(b *testing.B) {
	for _, n := range []int{500, 2000} {
		net := sim.Compile(testGraph("ring", n, 0))
		m := sim.UniformMatrix(net)
		b.Run(fmt.Sprintf("ring-%d", n), func(b *testing.B) {
			b.ReportAllocs()
			var top float64
			for b.Loop() {
				top = 1 / sim.SaturationScale(net, m, 1000)
			}
			if !(top > 0) {
				b.Fatalf("busiest channel utilisation %g per unit of the matrix", top)
			}
			b.ReportMetric(float64(n)*float64(n+len(net.Channels))/(float64(b.Elapsed().Nanoseconds())/float64(b.N)), "node·channels/ns")
		})
	}
}
