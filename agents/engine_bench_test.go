package agents_test

import (
	"runtime"
	"testing"

	"hoplore/agents"
	"hoplore/sim"
	"hoplore/topologies"
)

// BenchmarkEngine runs whole simulations of every agent kind on the bundled
// 4×4 grid at 70% normalised load and reports simulated events per second
// of wall time and of processor time (the figure to compare on a busy
// shared machine) and allocations per simulated event (setup included).
func BenchmarkEngine(b *testing.B) {
	g, err := topologies.Generate("grid", nil)
	if err != nil {
		b.Fatal(err)
	}
	net := sim.Compile(g)
	m := sim.UniformMatrix(net)
	scaled(m, 0.7*sim.SaturationScale(net, m, 1000))
	kinds := []agents.Params{agents.Defaults(agents.ShortestPathKind), agents.Defaults(agents.QRoutingKind), agents.Defaults(agents.QNetworkKind),
		agents.Defaults(agents.CentralAdaptiveKind), agents.Defaults(agents.CentralQKind), agents.Defaults(agents.CentralOptimalKind)}
	withConsensus := agents.Defaults(agents.QRoutingKind)
	withConsensus.Consensus = &agents.Consensus{Every: sim.Second, Weight: 0.5}
	withConsensus.Label = "q-routing+consensus"
	kinds = append(kinds, withConsensus)
	for _, p := range kinds {
		b.Run(p.Canonical(), func(b *testing.B) {
			b.ReportAllocs()
			var events int64
			var ms runtime.MemStats
			runtime.ReadMemStats(&ms)
			mallocs := ms.Mallocs
			cpu := processorSeconds()
			for i := 0; i < b.N; i++ {
				a, err := agents.New(p, net)
				if err != nil {
					b.Fatal(err)
				}
				cfg := &sim.Config{Net: net, Agent: a, Seed: uint64(i), AgentSeed: uint64(i), Duration: 60 * sim.Second, Warmup: 10 * sim.Second, Bin: sim.Second,
					ControlDelay: p.ControlDelay, Traffic: sim.Traffic{Rates: m, Size: sim.SizeDist{Kind: sim.Fixed, Bytes: 1000}}}
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
			if now := processorSeconds(); now > cpu {
				b.ReportMetric(float64(events)/(now-cpu), "events/cpu-s")
			}
			runtime.ReadMemStats(&ms)
			b.ReportMetric(float64(ms.Mallocs-mallocs)/float64(events), "allocs/event")
		})
	}
}
