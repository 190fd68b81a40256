package sweep

import (
	"cmp"
	"fmt"
	"math"
	"slices"
	"strings"
	"sync"

	"hoplore/experiments"
	"hoplore/optimum"
	"hoplore/results"
	"hoplore/sim"
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
	m     onceMap[optKey, cellOptimum]
	cells onceMap[cellKey, []results.OptimumRow]
}

// cellKey identifies a cell of optimum.parquet: a topology, a load and a
// failure schedule.
type cellKey struct {
	topo    *experiments.Topology
	load    float64
	failure string
}

type optKey struct {
	topo *experiments.Topology
	load float64
}

// onceMap computes a value once per key and shares it: callers of a key
// being computed wait for it. Safe for concurrent use; the zero value is
// ready.
type onceMap[K comparable, V any] struct {
	mu sync.Mutex
	m  map[K]*onceEntry[V]
}

type onceEntry[V any] struct {
	once sync.Once
	v    V
	err  error
}

// get returns the value of key k, computing it with f the first time.
func (om *onceMap[K, V]) get(k K, f func() (V, error)) (V, error) {
	om.mu.Lock()
	if om.m == nil {
		om.m = make(map[K]*onceEntry[V])
	}
	e, ok := om.m[k]
	if !ok {
		e = &onceEntry[V]{}
		om.m[k] = e
	}
	om.mu.Unlock()
	e.once.Do(func() { e.v, e.err = f() })
	return e.v, e.err
}

// of returns the optimum of run r's cell; o may be nil (computed afresh).
func (o *optima) of(r *experiments.Run) (cellOptimum, error) {
	if o == nil {
		return computeOptimum(r)
	}
	return o.m.get(optKey{r.Topology, r.Dims.Load}, func() (cellOptimum, error) { return computeOptimum(r) })
}

// rows returns the rows of optimum.parquet for run r's cell (cellRows),
// computed once per cell; o may be nil (computed afresh).
func (o *optima) rows(r *experiments.Run) ([]results.OptimumRow, error) {
	if o == nil {
		return cellRows(r, o)
	}
	return o.cells.get(cellKey{r.Topology, r.Dims.Load, r.Dims.Failure}, func() ([]results.OptimumRow, error) { return cellRows(r, o) })
}

// computeOptimum solves the least maximum utilisation and the least mean
// delay (package optimum) for run r's offered traffic — the matrix its
// sources emit before any phase factor, the first matrix of a replay, and
// its flow traffic, as the fluid demand of experiments.Run.OptimumInput —
// on the intact topology, with capacities from the mean packet size and
// M/G/1 channels of the packet sizes' variability (0 for a fixed size, 1
// for exponential sizes).
func computeOptimum(r *experiments.Run) (cellOptimum, error) {
	if !wantOptimum(r) {
		return cellOptimum{}, nil
	}
	in := r.OptimumInput()
	c, _, err := solveState(r, in, in.Rates, nil)
	return c, err
}

// wantOptimum reports whether run r's experiment asks for the optimum on
// its topology (experiments.Optimum).
func wantOptimum(r *experiments.Run) bool {
	o := r.Exp.Optimum
	return o.Compute && (o.Always || r.Topology.Net.NumNodes() <= experiments.OptimumAutoNodes)
}

// solveState solves the optimum of demand (in's units: packets/s of
// in.MeanBytes each) on run r's topology with the channels for which down
// is true (nil: none) absent, and returns it with the demand no path
// joins, in packets/s.
func solveState(r *experiments.Run, in experiments.OptimumInput, demand [][]float64, down func(c int) bool) (cellOptimum, float64, error) {
	var c cellOptimum
	eps := r.Exp.Optimum.Epsilon
	s, err := optimum.NewSolver(optimum.FromNet(r.Topology.Net, in.MeanBytes, down))
	if err == nil {
		err = s.SetServiceSCV(in.SCV)
	}
	if err == nil {
		err = s.SetDemand(demand)
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
		return c, 0, fmt.Errorf("sweep: run %s: model optimum: %w", r.Dims.RunID, err)
	}
	routable, unroutable := s.Demand()
	if routable == 0 {
		return c, unroutable, nil // nothing to route: no utilisation to speak of
	}
	c.utilMax, c.utilGap = finite(mm.Util), finite(mm.Gap)
	if mm.Util > 0 {
		c.loadLimit = finite(in.Load / mm.Util)
	}
	if d.Feasible {
		c.delayMean, c.delayGap = finite(d.Mean), finite(d.Gap)
	}
	return c, unroutable, nil
}

// optimumRows returns the rows of optimum.parquet for experiment e, cell
// by cell in run order (cellRows), from o's cache. Empty when e turns the
// optimum off.
func optimumRows(e *experiments.Experiment, o *optima) ([]results.OptimumRow, error) {
	if !e.Optimum.Compute {
		return nil, nil
	}
	seen := map[cellKey]bool{}
	var rows []results.OptimumRow
	for _, r := range e.Runs() {
		k := cellKey{r.Topology, r.Dims.Load, r.Dims.Failure}
		if seen[k] {
			continue
		}
		seen[k] = true
		cr, err := o.rows(r)
		if err != nil {
			return nil, err
		}
		rows = append(rows, cr...)
	}
	return rows, nil
}

// cellRows returns the rows of optimum.parquet for run r's cell (topology,
// load, failure schedule): the intact topology from time 0 (the opt_*
// values of runs.parquet, from o's cache) and then one row per change of
// what is down under the schedule's scheduled events, solved once per
// distinct state. A schedule with random failures differs from one
// replicate to the next and gets the intact row only. None when the
// optimum is not computed for r (wantOptimum).
func cellRows(r *experiments.Run, o *optima) ([]results.OptimumRow, error) {
	if !wantOptimum(r) {
		return nil, nil
	}
	intact, err := o.of(r)
	if err != nil {
		return nil, err
	}
	base := results.OptimumRow{Experiment: r.Dims.Experiment, Topology: r.Dims.Topology, Load: r.Dims.Load, Failure: r.Dims.Failure,
		States: results.StatesAll}
	end := r.Exp.Duration.Seconds()
	var evs []sim.FailureEvent
	if r.Failure != nil && r.Failure.Random != nil {
		base.States = results.StatesIntact
	} else {
		evs = r.Failures().Events
	}
	row := base
	row.TEndS = end
	intact.fillState(&row)
	states, err := stateRows(r, base, evs, end)
	if err != nil {
		return nil, err
	}
	if len(states) > 0 {
		row.TEndS = states[0].TStartS
	}
	return append([]results.OptimumRow{row}, states...), nil
}

// fillState copies the values into an optimum.parquet row.
func (c cellOptimum) fillState(row *results.OptimumRow) {
	row.OptUtilMax, row.OptLoadLimit, row.OptDelayMeanS = c.utilMax, c.loadLimit, c.delayMean
	row.OptUtilGap, row.OptDelayGap = c.utilGap, c.delayGap
}

// stateRows walks the failure events of run r in time order and returns
// one row per instant at which the set of down links and nodes changes,
// solving each distinct set once. Events at the same time apply together.
func stateRows(r *experiments.Run, base results.OptimumRow, evs []sim.FailureEvent, end float64) ([]results.OptimumRow, error) {
	if len(evs) == 0 {
		return nil, nil
	}
	evs = slices.Clone(evs)
	slices.SortStableFunc(evs, func(a, b sim.FailureEvent) int { return cmp.Compare(a.At, b.At) })
	g := r.Topology.Graph
	net := r.Topology.Net
	linkDown := make([]bool, len(g.Links))
	nodeDown := make([]bool, len(g.Nodes))
	in := r.OptimumInput()
	offered := in.Rates
	var total float64
	for s, row := range offered {
		for d, v := range row {
			if s != d {
				total += v
			}
		}
	}
	type solved struct {
		c                  cellOptimum
		unroutable, unsent float64
	}
	cache := map[string]solved{}
	var rows []results.OptimumRow
	prev := ""
	for i := 0; i < len(evs); {
		at := evs[i].At
		for ; i < len(evs) && evs[i].At == at; i++ {
			ev := evs[i]
			for _, l := range ev.Links {
				linkDown[l] = !ev.Up
			}
			if ev.Node >= 0 && len(ev.Links) == 0 {
				nodeDown[ev.Node] = !ev.Up
			}
		}
		var names []string
		for l, d := range linkDown {
			if d {
				names = append(names, g.Nodes[g.Links[l].A].Name+"-"+g.Nodes[g.Links[l].B].Name)
			}
		}
		for v, d := range nodeDown {
			if d {
				names = append(names, "node "+g.Nodes[v].Name)
			}
		}
		key := strings.Join(names, ", ")
		if key == prev {
			continue // nothing changed
		}
		prev = key
		st, ok := cache[key]
		if !ok {
			demand := make([][]float64, len(offered))
			var lost, unsent float64
			for s, row := range offered {
				demand[s] = slices.Clone(row)
				for d, v := range row {
					if s != d && (nodeDown[s] || nodeDown[d]) {
						lost += v
						demand[s][d] = 0
						if nodeDown[s] {
							unsent += v
						}
					}
				}
			}
			down := func(c int) bool {
				ch := net.Channels[c]
				return linkDown[ch.Link] || nodeDown[ch.From] || nodeDown[ch.To]
			}
			c, unroutable, err := solveState(r, in, demand, down)
			if err != nil {
				return nil, err
			}
			st = solved{c, lost + unroutable, unsent}
			cache[key] = st
		}
		row := base
		row.State = len(rows) + 1
		row.TStartS = at.Seconds()
		row.TEndS = end
		row.Down = key
		if total > 0 {
			row.UnroutableShare = st.unroutable / total
			row.UnsentShare = st.unsent / total
		}
		st.c.fillState(&row)
		if n := len(rows); n > 0 {
			rows[n-1].TEndS = row.TStartS
		}
		rows = append(rows, row)
	}
	return rows, nil
}

// finite returns a pointer to v, nil when v is NaN or infinite.
func finite(v float64) *float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return &v
}
