package sweep

import (
	"context"
	"errors"
	"math"
	"testing"

	"hoplore/experiments"
	"hoplore/results"
)

// TestExecuteRun checks that a run's tables carry its dimensions and the
// version, and that a cancelled context stops it with the context's error.
func TestExecuteRun(t *testing.T) {
	e := tiny(t)
	r := e.Runs()[1]
	tab, err := ExecuteRun(context.Background(), r, "v-run")
	if err != nil {
		t.Fatal(err)
	}
	if tab.Run.Dims != results.Dims(r.Dims) || tab.Run.Version != "v-run" {
		t.Errorf("run row has dims %+v version %q, want %+v and v-run", tab.Run.Dims, tab.Run.Version, r.Dims)
	}
	if tab.Run.Events <= 0 || tab.Run.Generated <= 0 {
		t.Errorf("run row counts %d events, %d packets", tab.Run.Events, tab.Run.Generated)
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := ExecuteRun(ctx, r, "v-run"); !errors.Is(err, context.Canceled) {
		t.Errorf("cancelled run returned %v, want context.Canceled", err)
	}
}

// TestOptimumColumns checks the model optimum columns of the tiny grid's
// runs. On the ring of 8 with uniform demand the least maximum utilisation
// is load × m/(m+1) with m = 4 (the 4-hop pairs split evenly over both
// directions; see the optimum package's ring test), so opt_util_max must
// bracket 0.8·load within the experiment's ε and opt_load_limit be about
// 1.25; every run of a cell carries the same values whatever its agent,
// replicate or failure schedule.
func TestOptimumColumns(t *testing.T) {
	e := tiny(t)
	eps := e.Optimum.Epsilon
	opt := &optima{}
	byCell := map[[2]any]cellOptimum{}
	for _, r := range e.Runs() {
		o, err := opt.of(r)
		if err != nil {
			t.Fatal(err)
		}
		if o.utilMax == nil || o.loadLimit == nil || o.delayMean == nil || o.utilGap == nil || o.delayGap == nil {
			t.Fatalf("run %s: a null optimum column: %+v", r.Dims.RunID, o)
		}
		if *o.utilGap > eps || *o.delayGap > eps {
			t.Errorf("run %s: gaps %v %v above ε %v", r.Dims.RunID, *o.utilGap, *o.delayGap, eps)
		}
		if r.Dims.Topology == "ring" {
			want := 0.8 * r.Dims.Load
			if *o.utilMax < want*(1-1e-9) || *o.utilMax > want*(1+eps) {
				t.Errorf("ring at load %v: opt_util_max %v, want %v within ε", r.Dims.Load, *o.utilMax, want)
			}
		}
		key := [2]any{r.Dims.Topology, r.Dims.Load}
		if prev, ok := byCell[key]; ok && prev != o {
			t.Errorf("run %s: optimum computed again for its cell", r.Dims.RunID)
		}
		byCell[key] = o
	}
	if len(byCell) != 4 {
		t.Errorf("%d distinct cells, want 4", len(byCell))
	}
	// Without the optimum the columns are null.
	e.Optimum.Compute = false
	if o, err := computeOptimum(e.Runs()[0]); err != nil || o != (cellOptimum{}) {
		t.Errorf("optimum off: got %+v, %v; want nulls", o, err)
	}
}

// TestOptimumStates checks optimum.parquet's rows for a scheduled cut on a
// ring of 5 under uniform demand. Intact, shortest paths are optimal and
// every channel carries the pairs 1 and 2 hops away (3 per direction), so
// λ* = load. With link n0–n1 down the ring is a path of 5 nodes whose
// middle channels carry 2 × 3 = 6 pairs per direction (a cut after k of
// n nodes is crossed by k(n−k) pairs): λ* = 2·load. After the repair the
// intact value returns. (Counting argument; the optimum package's ring and
// simplex tests check the solver itself.)
func TestOptimumStates(t *testing.T) {
	e, err := experiments.Parse("states.yaml", []byte(`
name: states
duration: 6s
topologies: [{name: ring, nodes: 5}]
traffic: {matrix: uniform, loads: [0.4]}
agents: [shortest-path]
failures:
  - name: cut
    events:
      - {at: 2s, link: [n0, n1], action: down}
      - {at: 4s, link: [n0, n1], action: up}
`))
	if err != nil {
		t.Fatal(err)
	}
	rows, err := optimumRows(e, &optima{})
	if err != nil {
		t.Fatal(err)
	}
	eps := e.Optimum.Epsilon
	want := []struct {
		start, end, util float64
		down             string
	}{{0, 2, 0.4, ""}, {2, 4, 0.8, "n0-n1"}, {4, 6, 0.4, ""}}
	if len(rows) != len(want) {
		t.Fatalf("got %d rows, want %d: %+v", len(rows), len(want), rows)
	}
	for i, w := range want {
		r := rows[i]
		if r.State != i || r.TStartS != w.start || r.TEndS != w.end || r.Down != w.down || r.Failure != "cut" || r.UnroutableShare != 0 {
			t.Errorf("row %d: %+v, want state %d over [%v, %v) down %q", i, r, i, w.start, w.end, w.down)
		}
		if r.OptUtilMax == nil || *r.OptUtilMax < w.util*(1-1e-9) || *r.OptUtilMax > w.util*(1+eps) {
			t.Errorf("row %d: opt_util_max %v, want %v within ε", i, r.OptUtilMax, w.util)
		}
		if r.OptDelayMeanS == nil || r.OptLoadLimit == nil {
			t.Errorf("row %d: null delay or load limit", i)
		}
	}
}

// TestOptimumStatesNode: a node down on a ring of 5 under uniform demand
// (20 pairs of equal rate) leaves the 8 pairs to or from it with no path,
// unroutable share 0.4, of which the 4 it would send are unsent, 0.2; the
// rest of the ring, a path, stays connected. A schedule with random
// failures gets the intact row only, marked so.
func TestOptimumStatesNode(t *testing.T) {
	e, err := experiments.Parse("node.yaml", []byte(`
name: node
duration: 6s
topologies: [{name: ring, nodes: 5}]
traffic: {matrix: uniform, loads: [0.4]}
agents: [shortest-path]
failures:
  - name: site
    events:
      - {at: 2s, node: n2, action: down}
      - {at: 4s, node: n2, action: up}
  - {name: flaky, random: {scope: links, mtbf: 4s, mttr: 1s}}
`))
	if err != nil {
		t.Fatal(err)
	}
	rows, err := optimumRows(e, &optima{})
	if err != nil {
		t.Fatal(err)
	}
	var site, flaky []results.OptimumRow
	for _, r := range rows {
		switch r.Failure {
		case "site":
			site = append(site, r)
		case "flaky":
			flaky = append(flaky, r)
		}
	}
	if len(site) != 3 || site[1].Down != "node n2" || math.Abs(site[1].UnroutableShare-0.4) > 1e-12 || math.Abs(site[1].UnsentShare-0.2) > 1e-12 ||
		site[0].UnsentShare != 0 || site[2].UnroutableShare != 0 {
		t.Errorf("node down: %+v; want 3 states, the middle one unroutable 0.4, unsent 0.2", site)
	}
	for _, r := range site {
		if r.States != results.StatesAll {
			t.Errorf("scheduled state %d: states %q, want %q", r.State, r.States, results.StatesAll)
		}
	}
	if len(flaky) != 1 || flaky[0].States != results.StatesIntact || flaky[0].TEndS != 6 {
		t.Errorf("random failures: %+v; want the intact row only, states %q", flaky, results.StatesIntact)
	}
}

// TestOptimumAutoSize: beyond experiments.OptimumAutoNodes nodes the
// optimum is left out (null columns, no optimum.parquet rows) unless the
// file asks for it.
func TestOptimumAutoSize(t *testing.T) {
	e, err := experiments.Parse("big.yaml", []byte(`
name: big
duration: 1s
topologies: [{name: ring, nodes: 201}]
traffic: {matrix: uniform, loads: [0.5]}
agents: [shortest-path]
`))
	if err != nil {
		t.Fatal(err)
	}
	if o, err := computeOptimum(e.Runs()[0]); err != nil || o != (cellOptimum{}) {
		t.Errorf("201 nodes: got %+v, %v; want nulls", o, err)
	}
	if rows, err := optimumRows(e, &optima{}); err != nil || len(rows) != 0 {
		t.Errorf("201 nodes: %d optimum rows, %v; want none", len(rows), err)
	}
	e.Optimum.Always = true
	if !wantOptimum(e.Runs()[0]) {
		t.Error("compute: true does not force the optimum")
	}
}
