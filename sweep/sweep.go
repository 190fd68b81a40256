package sweep

import (
	"context"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"runtime"
	"time"

	"golang.org/x/term"

	"hoplore/experiments"
	"hoplore/results"
)

// Options control Execute.
type Options struct {
	// Out is the results folder. It must be empty, absent, or hold parts
	// of the same experiment (which are kept and skipped).
	Out string
	// Workers is the number of runs executed at once; 0 means the cores
	// the process may use (runtime.GOMAXPROCS(0)).
	Workers int
	// Shard and Shards select share Shard (0-based) of Shards (see
	// Assign); Shards 0 or 1 means the whole experiment.
	Shard, Shards int
	// Quiet turns the progress display off.
	Quiet bool
	// Progress receives the progress display (standard error): a bar when
	// it is a terminal, else a one-line status every StatusEvery. Nil
	// means none.
	Progress io.Writer
	// StatusEvery is the interval of the one-line status; 0 means 10 s.
	StatusEvery time.Duration
	// Version is the tool version written into every row and file.
	Version string
}

// Outcome says what Execute did.
type Outcome struct {
	Out     string
	Shard   Shard // Count 0: the whole experiment
	Total   int   // runs in the experiment
	Runs    int   // runs in this share
	Skipped int   // runs of the share found finished in Out
	Ran     int   // runs executed now
	Events  int64 // events simulated by the runs executed now
	Wall    time.Duration
	// Missing counts the experiment's runs that Out does not hold; the
	// tables are finalized (Complete) when it is zero.
	Missing  int
	Complete bool
	// Summary holds the per-cell rows of summary.parquet when Complete.
	Summary []results.SummaryRow
	// Rejected lists the parts found damaged or foreign and moved aside
	// (results.RejectBadParts); their runs were done again.
	Rejected []string
}

// Execute runs experiment e (or one share of it) into opts.Out: the runs
// that Out does not hold yet, opts.Workers at a time, each made durable as
// a part as soon as it finishes. When Out then holds every run of e, the
// tables are finalized in e's run order and their summary is returned, and
// (unless e turns the optimum off) optimum.parquet is written: the model
// optimum per cell and topology state (optimumRows). A sweep computes each
// cell's optimum once for its runs; the parts keep the runs' opt_* values
// and their cell's rows of optimum.parquet, so that a merge of shards
// writes it too (results.Finalize), while finishing a sweep here takes the
// rows from the experiment (solving again only cells whose runs ran in an
// earlier process).
//
// Errors: an Out holding another experiment is reported as results.CheckDir
// reports it (wrapping results.ErrOtherExperiment); a cancelled ctx returns
// *Interrupted at once, with the finished runs kept and counted: runs in
// progress are told to stop and abandoned, and one that finishes after the
// sweep stopped is never written; a failed or panicking run stops the
// dispatch of new runs, keeps the runs in progress, and is returned naming
// the run.
//
// Memory: each worker holds one run's simulation and tables at a time.
func Execute(ctx context.Context, e *experiments.Experiment, opts Options) (*Outcome, error) {
	runs := e.Runs()
	units := make([]unit[*results.RunTables], len(runs))
	opt := &optima{}
	for i, r := range runs {
		units[i] = &expUnit{r: r, version: opts.Version, opt: opt}
	}
	meta := results.Meta{Version: opts.Version, Experiment: e.Name, ExperimentHash: e.Hash, Runs: len(runs)}
	var extras func() ([]results.Extra, error)
	if e.Optimum.Compute {
		extras = func() ([]results.Extra, error) { // optimum.parquet, in the same set as the other tables
			rows, err := optimumRows(e, opt)
			if err != nil {
				return nil, err
			}
			return []results.Extra{results.ExtraTable(results.OptimumFile, results.TableOptimum, rows)}, nil
		}
	}
	return executeTables(ctx, meta, units, opts, extras)
}

// executeTables is Execute on any units producing result tables.
// extras, when not nil, gives the tables written with the others when the
// folder is complete.
func executeTables(ctx context.Context, meta results.Meta, units []unit[*results.RunTables], opts Options, extras func() ([]results.Extra, error)) (*Outcome, error) {
	p, sh, err := makePlan(units, opts)
	if err != nil {
		return nil, err
	}
	eo := engineOpts{out: opts.Out, workers: opts.Workers, shard: sh}
	if eo.workers <= 0 {
		eo.workers = runtime.GOMAXPROCS(0)
	}
	if !opts.Quiet && opts.Progress != nil {
		label := "hoplore: "
		if sh.Count > 1 {
			label = fmt.Sprintf("hoplore: shard %s: ", sh)
		}
		if isTerminal(opts.Progress) {
			eo.prog = &barReporter{w: opts.Progress}
		} else {
			every := opts.StatusEvery
			if every <= 0 {
				every = 10 * time.Second
			}
			eo.prog = &lineReporter{w: opts.Progress, every: every, label: label}
		}
	}
	st := &resultsStore{meta: meta, extras: extras}
	oc, err := execute(ctx, p, st, eo)
	if oc != nil {
		oc.Rejected = st.rejected
	}
	if err != nil || !oc.Complete {
		return oc, err
	}
	oc.Summary, err = results.ReadSummary(filepath.Join(opts.Out, results.SummaryFile))
	return oc, err
}

// makePlan checks the run ids and picks the share.
func makePlan[T any](units []unit[T], opts Options) (plan[T], Shard, error) {
	seen := make(map[string]int, len(units))
	for i, u := range units {
		if j, dup := seen[u.ID()]; dup {
			return plan[T]{}, Shard{}, fmt.Errorf("sweep: runs %d and %d have the same id %q", j, i, u.ID())
		}
		seen[u.ID()] = i
	}
	p := plan[T]{units: units}
	var sh Shard
	if opts.Shards > 1 {
		if opts.Shard < 0 || opts.Shard >= opts.Shards {
			return plan[T]{}, Shard{}, fmt.Errorf("sweep: shard %d/%d: want 0 <= I < N", opts.Shard, opts.Shards)
		}
		sh = Shard{opts.Shard, opts.Shards}
		p.withCosts()
		p.share = Assign(p.costs, opts.Shards)[opts.Shard]
	} else {
		p.share = make([]int, len(units))
		for i := range p.share {
			p.share[i] = i
		}
	}
	return p, sh, nil
}

func isTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	return ok && term.IsTerminal(int(f.Fd()))
}

// expUnit adapts an experiment's run to the engine.
type expUnit struct {
	r       *experiments.Run
	version string
	opt     *optima // the model optimum, once per cell
}

func (u *expUnit) ID() string    { return u.r.Dims.RunID }
func (u *expUnit) Cost() float64 { return u.r.EstimateEvents() }

func (u *expUnit) Execute(ctx context.Context) (*results.RunTables, int64, error) {
	t, err := executeRun(ctx, u.r, u.version, u.opt)
	if err != nil {
		return nil, 0, err
	}
	return t, t.Run.Events, nil
}

// resultsStore keeps runs in a results folder.
type resultsStore struct {
	meta     results.Meta
	verified bool     // parts checked (first List)
	rejected []string // parts moved aside as damaged or foreign
	extras   func() ([]results.Extra, error)
}

func (s *resultsStore) Check(dir string) error { return results.CheckDir(dir, s.meta.ExperimentHash) }
func (s *resultsStore) Mark(dir string) error  { return results.MarkDir(dir, s.meta) }

// List lists the finished runs; the first call reads every part and moves
// aside the damaged or foreign ones, so that their runs are done again.
func (s *resultsStore) List(dir string) (map[string]bool, error) {
	if !s.verified {
		s.verified = true
		rej, err := results.RejectBadParts(dir, s.meta.Experiment)
		s.rejected = rej
		if err != nil {
			return nil, err
		}
	}
	return results.ListParts(dir)
}
func (s *resultsStore) Write(dir string, t *results.RunTables) error {
	return results.WritePart(dir, t)
}
func (s *resultsStore) Finalize(dir string, order []string) error {
	var xs []results.Extra
	if s.extras != nil {
		var err error
		if xs, err = s.extras(); err != nil {
			return err
		}
	}
	return results.Finalize(dir, order, s.meta, xs...)
}
