package sweep

import (
	"context"
	"fmt"
	"strings"
	"testing"

	"hoplore/experiments"
	"hoplore/results"
)

// A run that records every one of its flows (traffic.flows.sample at its
// largest): the sample's term of the memory estimate bounds what the
// records add to the heap of the run and of writing its part, within 2×
// (a ring of 4, 1000 one-packet flows per second per source for 20 s
// measured: about 80,000 flows recorded).
func TestFlowSampleMemoryBound(t *testing.T) {
	heap := func(sample int) (float64, experiments.MemoryEstimate, int) {
		e, err := experiments.Parse("sample.yaml", []byte(fmt.Sprintf(`name: sample
duration: 21s
warmup: 1s
bin: 1s
topologies: [{name: ring, nodes: 4}]
traffic:
  matrix: uniform
  loads: [0.01]
  packet_size: {dist: fixed, bytes: 1000}
  flows: {arrivals: 1000/s, sample: %d, size: {dist: fixed, bytes: 1000}}
agents: [shortest-path]
optimum: {compute: false}
`, sample)))
		if err != nil {
			t.Fatal(err)
		}
		run := e.Runs()[0]
		dir := t.TempDir()
		var rows int
		got := peakHeap(func() {
			tab, _, err := (&expUnit{r: run}).Execute(context.Background())
			if err != nil {
				t.Fatal(err)
			}
			rows = len(tab.Flows)
			if err := results.WritePart(dir, tab); err != nil {
				t.Fatal(err)
			}
		})
		return got, e.EstimateMemory(1), rows
	}
	base, est0, _ := heap(0)
	for _, p := range est0.Parts {
		if strings.HasPrefix(p.Setting, "traffic.flows.sample") {
			t.Errorf("sample 0: a sample term %q", p.Setting)
		}
	}
	all, est, rows := heap(1 << 24)
	var term float64
	for _, p := range est.Parts {
		if strings.HasPrefix(p.Setting, "traffic.flows.sample") {
			term = p.Bytes / experiments.GCFactor
		}
	}
	got := all - base
	t.Logf("%d flows recorded add %.1f MB to the run's heap (%.0f bytes a flow); estimated %.1f MB (%.0f bytes a flow)",
		rows, got/1e6, got/float64(rows), term/1e6, experiments.FlowSampleBytes)
	if got > term || term > 2*got {
		t.Errorf("estimate %.1f MB, measured %.1f MB: want within [1×, 2×]", term/1e6, got/1e6)
	}
}
