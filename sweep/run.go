package sweep

import (
	"context"
	"fmt"
	"time"

	"hoplore/experiments"
	"hoplore/results"
	"hoplore/sim"
)

// ExecuteRun builds run r's configuration, runs it and returns its result
// tables, with the wall-clock time it took and version in them. It stops
// soon after ctx is done, returning ctx's error (wrapped). The model
// optimum of the run's cell (the opt_* columns, and the cell's rows of
// optimum.parquet in RunTables.Optimum) is computed for this run alone; a
// sweep computes it once per cell.
func ExecuteRun(ctx context.Context, r *experiments.Run, version string) (*results.RunTables, error) {
	return executeRun(ctx, r, version, nil)
}

func executeRun(ctx context.Context, r *experiments.Run, version string, opt *optima) (*results.RunTables, error) {
	cfg, err := r.Config()
	if err != nil {
		return nil, err
	}
	if r.StartState != "" {
		if err := startFrom(r.StartState, cfg.Net, cfg.Agent); err != nil {
			return nil, err
		}
	}
	start := time.Now()
	res, err := sim.RunContext(ctx, cfg)
	if err != nil {
		return nil, fmt.Errorf("sweep: run %s: %w", r.Dims.RunID, err)
	}
	wall := time.Since(start).Seconds()
	t := results.FromRun(results.Dims(r.Dims), cfg.Net, cfg, res, wall, version)
	o, err := opt.of(r)
	if err != nil {
		return nil, err
	}
	o.fill(&t.Run)
	if t.Optimum, err = opt.rows(r); err != nil {
		return nil, err
	}
	t.State = learnedState(r, cfg.Net, cfg.Agent)
	return t, nil
}
