package sweep

import (
	"fmt"
	"math"
	"sync"

	"hoplore/experiments"
	"hoplore/optimum"
	"hoplore/results"
)

// cellOptimum is the model optimum of a cell's offered matrix on its intact
// topology: the opt_* columns of runs.parquet (nil: null).
type cellOptimum struct {
	utilMax, loadLimit, delayMean, utilGap, delayGap *float64
}

// fill copies the values into a run's row.
func (c cellOptimum) fill(row *results.RunRow) {
	row.OptUtilMax, row.OptLoadLimit, row.OptDelayMeanS = c.utilMax, c.loadLimit, c.delayMean
	row.OptUtilGap, row.OptDelayGap = c.utilGap, c.delayGap
}

// optima computes the model optimum once per cell and shares it between
// the cell's runs: it depends on the topology, the offered matrix (hence
// the load) and the experiment's optimum settings, not on the agent, the
// replicate or the failure schedule. Runs of a cell that start while it is
// being computed wait for it. Safe for concurrent use.
type optima struct {
	mu sync.Mutex
	m  map[optKey]*optEntry
}

type optKey struct {
	topo *experiments.Topology
	load float64
}

type optEntry struct {
	once sync.Once
	v    cellOptimum
	err  error
}

// of returns the optimum of run r's cell; o may be nil (computed afresh).
func (o *optima) of(r *experiments.Run) (cellOptimum, error) {
	if o == nil {
		return computeOptimum(r)
	}
	k := optKey{r.Topology, r.Dims.Load}
	o.mu.Lock()
	if o.m == nil {
		o.m = make(map[optKey]*optEntry)
	}
	e, ok := o.m[k]
	if !ok {
		e = &optEntry{}
		o.m[k] = e
	}
	o.mu.Unlock()
	e.once.Do(func() { e.v, e.err = computeOptimum(r) })
	return e.v, e.err
}

// computeOptimum solves the least maximum utilisation and the least mean
// delay (package optimum) for run r's offered matrix — the matrix its
// sources emit before any phase factor, the first matrix of a replay — on
// the intact topology, with capacities from the mean packet size.
func computeOptimum(r *experiments.Run) (cellOptimum, error) {
	var c cellOptimum
	if !r.Exp.Optimum.Compute {
		return c, nil
	}
	eps := r.Exp.Optimum.Epsilon
	s, err := optimum.NewSolver(optimum.FromNet(r.Topology.Net, r.Exp.Traffic.Size.Mean(), nil))
	if err == nil {
		err = s.SetDemand(r.Rates())
	}
	var mm optimum.MinMax
	if err == nil {
		mm, err = s.MinMaxUtil(eps)
	}
	var d optimum.MinDelay
	if err == nil {
		d, err = s.MinDelay(eps)
	}
	if err != nil {
		return c, fmt.Errorf("sweep: run %s: model optimum: %w", r.Dims.RunID, err)
	}
	if routable, _ := s.Demand(); routable == 0 {
		return c, nil // nothing offered: no utilisation to speak of
	}
	c.utilMax, c.utilGap = finite(mm.Util), finite(mm.Gap)
	if mm.Util > 0 {
		c.loadLimit = finite(r.Dims.Load / mm.Util)
	}
	if d.Feasible {
		c.delayMean, c.delayGap = finite(d.Mean), finite(d.Gap)
	}
	return c, nil
}

// finite returns a pointer to v, nil when v is NaN or infinite.
func finite(v float64) *float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return &v
}
