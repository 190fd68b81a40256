package experiments

import (
	"errors"
	"fmt"
	"testing"

	"hoplore/internal/yamlx"
)

func ringExperiment(nodes int) []byte {
	return fmt.Appendf(nil, `name: big-ring
duration: 60s
topologies: [{name: ring, nodes: %d}]
traffic: {loads: [0.5]}
agents: [shortest-path]
`, nodes)
}

// BenchmarkValidateRing measures checking an experiment on a ring under
// uniform traffic: the normalised-load scaling is O(N·(N+L)) and the hop
// counts and traffic matrix take 12·N² bytes, so the largest ring allowed
// (MaxNodes) validates in seconds, and a 100,000-node ring is refused before
// anything of that size is built.
func BenchmarkValidateRing(b *testing.B) {
	for _, n := range []int{1000, MaxNodes, 100_000} {
		b.Run(fmt.Sprintf("nodes-%d", n), func(b *testing.B) {
			src := ringExperiment(n)
			b.ReportAllocs()
			cpu := cpuSeconds()
			for b.Loop() {
				e, err := Parse("big-ring.yaml", src)
				var ye *yamlx.Error
				switch {
				case n <= MaxNodes && err != nil:
					b.Fatal(err)
				case n <= MaxNodes && len(e.Topologies[0].Graph.Nodes) != n:
					b.Fatalf("validated %d nodes, want %d", len(e.Topologies[0].Graph.Nodes), n)
				case n > MaxNodes && !errors.As(err, &ye):
					b.Fatalf("a %d-node ring gave %v, want a bad-input error", n, err)
				}
			}
			b.ReportMetric(b.Elapsed().Seconds()/float64(b.N), "s/check")
			// processor time: comparable on a shared machine, where wall
			// time includes waiting for a processor
			b.ReportMetric((cpuSeconds()-cpu)/float64(b.N), "cpu-s/check")
		})
	}
}

// TestSchedulesOnCountsFamilies checks the run bound's count of failure
// schedules against the expansion itself.
func TestSchedulesOnCountsFamilies(t *testing.T) {
	src := []byte(`name: families
duration: 10s
topologies: [ring, {name: grid, rows: 3, cols: 3}]
traffic: {loads: [0.5]}
agents: [shortest-path]
failures:
  - none
  - {name: cut, each: links, at: 2s}
  - {name: some, each: nodes, at: 2s, sample: 3}
`)
	e, err := Parse("families.yaml", src)
	if err != nil {
		t.Fatal(err)
	}
	for i, top := range e.Topologies {
		if got, want := schedulesOn(e, top.Graph), e.Schedules(i); got != want {
			t.Errorf("%s: counted %d schedules, expansion made %d", top.Label, got, want)
		}
	}
}
