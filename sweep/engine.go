package sweep

import (
	"context"
	"errors"
	"fmt"
	"runtime/debug"
	"slices"
	"sync"
	"time"
)

// unit is one run as the engine sees it; T is what it produces (the run's
// tables).
type unit[T any] interface {
	ID() string
	Cost() float64
	Execute(ctx context.Context) (T, int64, error) // tables, simulated events
}

// store keeps finished runs durable in a folder.
type store[T any] interface {
	Check(dir string) error                   // the folder is empty or holds this experiment
	Mark(dir string) error                    // record the experiment in the folder
	List(dir string) (map[string]bool, error) // run ids finished in the folder
	Write(dir string, t T) error              // one run's part, atomic
	Finalize(dir string, order []string) error
}

// plan is what the engine runs: all units of the experiment (in run order)
// and the indices of this share.
type plan[T any] struct {
	units []unit[T]
	share []int     // indices into units, ascending
	costs []float64 // units' estimated costs (Cost), by index; nil: ask the units
}

// withCosts fills p.costs once, so that sorting and progress do not
// re-estimate (an estimate may cost O(nodes²)).
func (p *plan[T]) withCosts() {
	if p.costs != nil {
		return
	}
	p.costs = make([]float64, len(p.units))
	for i, u := range p.units {
		p.costs[i] = u.Cost()
	}
}

// engineOpts are the resolved options.
type engineOpts struct {
	out     string
	workers int
	shard   Shard
	prog    reporter
}

// Interrupted is returned when the context is cancelled (Ctrl-C, SIGTERM)
// before the share finished. The finished runs are kept.
type Interrupted struct {
	Out        string
	Kept, Runs int // runs finished in Out, runs of the experiment
}

func (e *Interrupted) Error() string {
	return fmt.Sprintf("sweep: interrupted: %d of %d runs are kept in %s; rerun the same command to resume", e.Kept, e.Runs, e.Out)
}

// execute runs the share of p that Out does not hold yet, then finalizes
// Out if it holds every run.
func execute[T any](ctx context.Context, p plan[T], st store[T], o engineOpts) (*Outcome, error) {
	start := time.Now()
	p.withCosts()
	oc := &Outcome{Out: o.out, Shard: o.shard, Runs: len(p.share), Total: len(p.units)}
	if err := st.Check(o.out); err != nil {
		return nil, err
	}
	if err := st.Mark(o.out); err != nil {
		return nil, err
	}
	have, err := st.List(o.out)
	if err != nil {
		return nil, err
	}
	// Known run ids only: a stray part from elsewhere does not count.
	var todo []int
	for _, i := range p.share {
		if have[p.units[i].ID()] {
			oc.Skipped++
		} else {
			todo = append(todo, i)
		}
	}
	// Largest first, so the workers finish together (as in Assign).
	slices.SortStableFunc(todo, func(a, b int) int {
		ca, cb := p.costs[a], p.costs[b]
		switch {
		case ca > cb:
			return -1
		case ca < cb:
			return 1
		}
		return a - b
	})
	var est float64
	for _, i := range todo {
		est += p.costs[i]
	}
	prog := o.prog
	if prog == nil {
		prog = nopReporter{}
	}
	prog.begin(len(todo), oc.Skipped, est)

	if len(todo) > 0 {
		ran, events, err := pool(ctx, p, st, o, todo, prog)
		oc.Ran, oc.Events = ran, events
		if err != nil {
			prog.end(false)
			if ctx.Err() != nil && !errors.Is(err, errRun) {
				kept := 0
				if have, lerr := st.List(o.out); lerr == nil {
					kept = countKnown(p, have)
				}
				return oc, &Interrupted{Out: o.out, Kept: kept, Runs: len(p.units)}
			}
			return oc, err
		}
	}
	prog.end(true)

	have, err = st.List(o.out)
	if err != nil {
		return oc, err
	}
	oc.Missing = len(p.units) - countKnown(p, have)
	if oc.Missing == 0 {
		order := make([]string, len(p.units))
		for i, u := range p.units {
			order[i] = u.ID()
		}
		if err := st.Finalize(o.out, order); err != nil {
			return oc, err
		}
		oc.Complete = true
	}
	oc.Wall = time.Since(start)
	return oc, nil
}

func countKnown[T any](p plan[T], have map[string]bool) int {
	n := 0
	for _, u := range p.units {
		if have[u.ID()] {
			n++
		}
	}
	return n
}

// errRun marks a failure of a run itself (as opposed to an interruption).
var errRun = errors.New("run failed")

type runError struct {
	id  string
	err error
}

func (e *runError) Error() string   { return fmt.Sprintf("sweep: run %s: %v", e.id, e.err) }
func (e *runError) Unwrap() []error { return []error{e.err, errRun} }

// pool runs the units todo (in that order of dispatch) on o.workers workers.
// It returns at once when ctx is cancelled: runs in progress are abandoned,
// and no part is written once it has returned. On a run's failure it stops dispatching,
// lets the runs in progress finish (and keeps them), and returns the error.
func pool[T any](ctx context.Context, p plan[T], st store[T], o engineOpts, todo []int, prog reporter) (ran int, events int64, err error) {
	workers := max(1, min(o.workers, len(todo)))

	// gate orders part writes against a stop: once stopped is set under the
	// write lock, no worker starts a write, so the count of kept runs is final.
	var gate sync.RWMutex
	stopped := false
	stop := func() {
		gate.Lock()
		stopped = true
		gate.Unlock()
	}

	type result struct {
		events int64
		cost   float64
		err    error
	}
	jobs := make(chan int)
	results := make(chan result)
	halt := make(chan struct{}) // closed on the first failure: dispatch no more
	go func() {
		defer close(jobs)
		for _, i := range todo {
			select {
			case jobs <- i:
			case <-halt:
				return
			case <-ctx.Done():
				return
			}
		}
	}()
	var wg sync.WaitGroup
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range jobs {
				u := p.units[i]
				t, ev, err := safeExecute(ctx, u)
				if err == nil {
					gate.RLock()
					if stopped {
						gate.RUnlock()
						return
					}
					err = st.Write(o.out, t)
					gate.RUnlock()
				}
				if err != nil && ctx.Err() == nil {
					err = &runError{u.ID(), err}
				}
				select {
				case results <- result{ev, p.costs[i], err}:
				case <-ctx.Done():
					return
				}
			}
		}()
	}
	go func() {
		wg.Wait()
		close(results)
	}()

	var first error
	for {
		select {
		case <-ctx.Done():
			stop()
			return ran, events, ctx.Err()
		case r, ok := <-results:
			if !ok {
				return ran, events, first
			}
			if r.err != nil {
				if first == nil {
					first = r.err
					close(halt)
				}
				continue
			}
			ran++
			events += r.events
			prog.done(r.cost, r.events)
		}
	}
}

// safeExecute runs u, turning a panic into an error (with the stack, for
// the report), so that one faulty run stops the sweep as a failure does and
// the runs in progress on other workers are still kept.
func safeExecute[T any](ctx context.Context, u unit[T]) (t T, ev int64, err error) {
	defer func() {
		if r := recover(); r != nil {
			err = fmt.Errorf("panic: %v\n%s", r, debug.Stack())
		}
	}()
	return u.Execute(ctx)
}
