package sweep

import (
	"context"
	"errors"
	"testing"

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
