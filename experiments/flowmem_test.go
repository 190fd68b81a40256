package experiments

import (
	"fmt"
	"strings"
	"testing"
)

// The memory estimate counts the flows a run records for flows.parquet:
// the flows expected to start in the measured window (4 sources × 50/s ×
// 20 s = 4000, twice that under a phase doubling the rates), at most
// traffic.flows.sample, FlowSampleBytes each; none with sample 0.
func TestFlowSampleMemory(t *testing.T) {
	for _, c := range []struct {
		sample int
		phases string
		want   float64
	}{
		{0, "", 0},
		{1000, "", 1000},
		{100000, "", 4000},
		{100000, "\n  phases: [{at: 5s, factor: 2}]", 8000},
	} {
		e, err := Parse("sample.yaml", []byte(fmt.Sprintf(`name: sample
duration: 21s
warmup: 1s
topologies: [{name: ring, nodes: 4}]
traffic:
  matrix: uniform
  loads: [0.1]
  flows: {arrivals: 50/s, sample: %d, size: {dist: fixed, bytes: 1000}}%s
agents: [shortest-path]
`, c.sample, c.phases)))
		if err != nil {
			t.Fatal(err)
		}
		var got float64
		for _, p := range e.EstimateMemory(1).Parts {
			if strings.HasPrefix(p.Setting, "traffic.flows.sample") {
				got = p.Bytes / GCFactor / FlowSampleBytes
				if !strings.Contains(p.Setting, fmt.Sprintf("%.3g flows recorded", c.want)) {
					t.Errorf("sample %d: setting %q does not name %.3g flows", c.sample, p.Setting, c.want)
				}
			}
		}
		if got != c.want {
			t.Errorf("sample %d%s: %g flows estimated, want %g", c.sample, c.phases, got, c.want)
		}
	}
}
