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
