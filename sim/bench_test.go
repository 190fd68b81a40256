package sim_test

import (
	"fmt"
	"runtime"
	"testing"

	"hoplore/sim"
	"hoplore/topologies"
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

// engineCase is one benchmarked run: a topology at a normalised load under
// link-state shortest path (hop metric), 1000-byte packets.
type engineCase struct {
	name string
	net  *sim.Net
	load float64
}

func engineCases(b *testing.B) []engineCase {
	g, err := topologies.Generate("two-region", nil)
	if err != nil {
		b.Fatal(err)
	}
	return []engineCase{
		{"two-region-0.9", sim.Compile(g), 0.9},
		{"grid4x4-0.7", sim.Compile(gridGraph(4, 4, 10e6, 64)), 0.7},
		{"grid8x8-0.7", sim.Compile(gridGraph(8, 8, 10e6, 64)), 0.7},
	}
}

// config returns the case's run with seed: 20 s, 2 s of warm-up, uniform
// traffic scaled to the normalised load (README, "The model").
func (c engineCase) config(b *testing.B, seed uint64) *sim.Config {
	m := sim.UniformMatrix(c.net)
	scale := sim.SaturationScale(c.net, m, 1000) * c.load
	for s := range m {
		for d := range m[s] {
			m[s][d] *= scale
		}
	}
	return &sim.Config{Net: c.net, Agent: shortest(b, c.net), Seed: seed, Duration: 20 * sim.Second, Warmup: 2 * sim.Second, Bin: sim.Second,
		Traffic: sim.Traffic{Rates: m, Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1000}}}
}

// BenchmarkEngine measures simulated events per second of whole runs (set-up
// included) and the allocations per event: all of them are the run's set-up
// (per channel, per node, per time bin), none per event, so allocs/event
// shrinks as runs grow.
func BenchmarkEngine(b *testing.B) {
	for _, c := range engineCases(b) {
		b.Run(c.name, func(b *testing.B) {
			b.ReportAllocs()
			var events int64
			var ms runtime.MemStats
			runtime.ReadMemStats(&ms)
			mallocs := ms.Mallocs
			cpu := cpuSeconds()
			for i := 0; i < b.N; i++ {
				r, err := sim.Run(c.config(b, uint64(i)))
				if err != nil {
					b.Fatal(err)
				}
				if r.Delivered == 0 {
					b.Fatal("nothing delivered")
				}
				events += r.Events
			}
			reportRate(b, float64(events), cpu)
			b.ReportMetric(float64(events)/float64(b.N), "events/run")
			runtime.ReadMemStats(&ms)
			b.ReportMetric(float64(ms.Mallocs-mallocs)/float64(events), "allocs/event")
		})
	}
}

// BenchmarkHeapBound is the kernel's speed bound: the bare typed event heap
// in a hold loop (pop one event, push one a random increment later) with as
// many pending events as BenchmarkEngine's run of the same case holds on
// average, and the same events per simulated second. The engine's events/s
// over this one's is the fraction of the bound the kernel reaches.
func BenchmarkHeapBound(b *testing.B) {
	for _, c := range engineCases(b) {
		cfg := c.config(b, 1)
		pending, err := sim.PendingEvents(cfg, 1000)
		if err != nil {
			b.Fatal(err)
		}
		r, err := sim.Run(c.config(b, 1))
		if err != nil {
			b.Fatal(err)
		}
		perSecond := float64(r.Events) / cfg.Duration.Seconds()
		n := int(pending + 0.5)
		b.Run(c.name, func(b *testing.B) {
			h := sim.NewHold(n, sim.FromSeconds(float64(n)/perSecond), 1)
			h.Run(10 * n) // reach the steady state
			b.ReportAllocs()
			b.ResetTimer()
			cpu := cpuSeconds()
			if h.Run(b.N) <= 0 || h.Len() != n {
				b.Fatal("the hold loop lost events")
			}
			reportRate(b, float64(b.N), cpu)
			b.ReportMetric(pending, "pending")
		})
	}
}

// reportRate reports events per second of wall time and, where the
// processor time is known, per second of processor time since cpu (the
// figure to compare on a busy shared machine).
func reportRate(b *testing.B, events, cpu float64) {
	b.ReportMetric(events/b.Elapsed().Seconds(), "events/s")
	if now := cpuSeconds(); now > cpu {
		b.ReportMetric(events/(now-cpu), "events/cpu-s")
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
	b.ReportMetric(float64(h.Bytes()), "bytes")
}
