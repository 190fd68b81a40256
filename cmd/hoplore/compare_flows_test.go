package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// flowSweep is a small sweep with flow traffic beside packet traffic: two
// agents, three replicates, one load on the bundled ring.
const flowSweep = `name: flow-compare
duration: 2500ms
warmup: 500ms
replicates: 3
topologies: [ring]
traffic:
  loads: [0.5]
  flows:
    share: 0.5
    size: {dist: mix, classes: [{fraction: 0.9, bytes: 10000}, {fraction: 0.1, bytes: 200000}]}
    mice_bytes: 20000
    elephant_bytes: 150000
agents:
  - shortest-path
  - {kind: central-q, pin: flow}
`

// compare tests the flow columns of a sweep with flows by default, and the
// report shows the flows-at-a-glance table; an unknown metric lists them.
func TestCompareFlowSweep(t *testing.T) {
	dir := t.TempDir()
	file := filepath.Join(dir, "flows.yaml")
	if err := os.WriteFile(file, []byte(flowSweep), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "out")
	hop(t, 0, "run", file, "--out", out, "--quiet")
	stdout, _ := hop(t, 0, "compare", out, "--a", "central-q(pin=flow)", "--b", "shortest-path")
	for _, s := range []string{"delivery mean (ms)", "flow completion time (ms)", "flow completion time p99 (ms)",
		"flow completion time, elephants (ms)", "slowdown", "slowdown p99", "slowdown, mice", "reordered (%)", "flows failed"} {
		if !strings.Contains(stdout, "  "+s+"  ") {
			t.Errorf("compare output lacks metric %q:\n%s", s, stdout)
		}
	}
	_, stderr := hop(t, 2, "compare", out, "--a", "central-q(pin=flow)", "--b", "shortest-path", "--metric", "slowdown", "--out", filepath.Join(dir, "c2.parquet"))
	for _, s := range []string{"known: ", "fct_mean_s", "slowdown_mean", "flows_failed"} {
		if !strings.Contains(stderr, s) {
			t.Errorf("unknown metric: stderr lacks %q: %s", s, stderr)
		}
	}
	if _, err := os.Stat(filepath.Join(dir, "c2.parquet")); err == nil {
		t.Error("a refused comparison wrote its file")
	}
	if testing.Short() {
		return // the page's rendering is slow under the race detector; TestFlowGlance covers its table
	}
	hop(t, 0, "report", out)
	page, err := os.ReadFile(filepath.Join(out, "report", "index.html"))
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(page), `data-table="flow-glance"`) || !strings.Contains(string(page), "least slowed") && !strings.Contains(string(page), "unclear") {
		t.Error("the report has no flows-at-a-glance table")
	}
}
