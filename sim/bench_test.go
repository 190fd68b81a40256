package sim_test

import (
	"fmt"
	"testing"

	"hoplore/sim"
)

// gridGraph returns an r×c grid with uniform links.
func gridGraph(r, c int, bw float64, buffer int) *sim.Graph {
	g := &sim.Graph{Name: fmt.Sprintf("grid%dx%d", r, c)}
	for i := 0; i < r*c; i++ {
		g.Nodes = append(g.Nodes, sim.Node{Name: fmt.Sprintf("n%d", i)})
	}
	for i := 0; i < r; i++ {
		for j := 0; j < c; j++ {
			v := i*c + j
			if j+1 < c {
				g.Links = append(g.Links, sim.Link{A: v, B: v + 1, Bandwidth: bw, Delay: sim.Millisecond, Buffer: buffer})
			}
			if i+1 < r {
				g.Links = append(g.Links, sim.Link{A: v, B: v + c, Bandwidth: bw, Delay: sim.Millisecond, Buffer: buffer})
			}
		}
	}
	return g
}

// BenchmarkEngine measures simulated events per second with link-state
// shortest path on grids at 70% normalised load.
func BenchmarkEngine(b *testing.B) {
	for _, side := range []int{4, 8} {
		b.Run(fmt.Sprintf("grid%dx%d", side, side), func(b *testing.B) {
			net := sim.Compile(gridGraph(side, side, 10e6, 64))
			m := sim.UniformMatrix(net)
			scale := sim.SaturationScale(net, m, 1000) * 0.7
			for s := range m {
				for d := range m[s] {
					m[s][d] *= scale
				}
			}
			b.ReportAllocs()
			var events int64
			for i := 0; i < b.N; i++ {
				cfg := &sim.Config{Net: net, Agent: shortest(b, net), Seed: uint64(i), Duration: 20 * sim.Second, Warmup: 2 * sim.Second, Bin: sim.Second,
					Traffic: sim.Traffic{Rates: m, Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1000}}}
				r, err := sim.Run(cfg)
				if err != nil {
					b.Fatal(err)
				}
				if r.Delivered == 0 {
					b.Fatal("nothing delivered")
				}
				events += r.Events
			}
			b.ReportMetric(float64(events)/b.Elapsed().Seconds(), "events/s")
			b.ReportMetric(float64(events)/float64(b.N), "events/run")
		})
	}
}

// BenchmarkHistogram measures recording one delivery time.
func BenchmarkHistogram(b *testing.B) {
	h := sim.NewHistogram()
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		h.Add(float64(i%1000+1) * 1e-4)
	}
	if h.Count() != int64(b.N) {
		b.Fatal("lost values")
	}
}
