package main

import (
	"errors"
	"fmt"
	"io"
	"path/filepath"
	"runtime"
	"strings"

	"github.com/spf13/cobra"

	"hoplore/experiments"
	"hoplore/internal/memguard"
	"hoplore/report"
	"hoplore/results"
	"hoplore/sweep"
)

// runOptions are the flags of hoplore run.
type runOptions struct {
	out     string
	workers int
	quiet   bool
	shard   string
	report  bool
	memory  string
}

func newRunCmd(d *deps) *cobra.Command {
	o := &runOptions{}
	cmd := &cobra.Command{
		Use:   "run [FILE or NAME]",
		Short: "Run an experiment's grid into a results folder (default: the bundled demo)",
		Long: `Run every run of an experiment file, or of a bundled experiment by name (the
bundled demo when none is given), in parallel, into a results folder of
Parquet tables, then print a per-cell summary: mean ± 95% confidence
half-width over the replicates.

Each finished run is saved at once. Rerunning the same command after a kill
or Ctrl-C resumes: finished runs are kept and skipped, and the final tables
are the same as those of an uninterrupted sweep.

With --shard I/N only the I-th of N deterministic shares of the runs is done
(balanced by estimated cost); inside a Slurm job array the share defaults to
SLURM_ARRAY_TASK_ID/SLURM_ARRAY_TASK_COUNT (the array must be 0..N-1). A shard
folder holds the shard's finished runs; combine the shard folders with
hoplore merge. See also hoplore slurm.`,
		Example: `  hoplore run
  hoplore run load-sweep --workers 8 --out results/load
  hoplore run sweep.yaml --shard 2/16 --out shards/2`,
		Args: cobra.MaximumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			arg := "demo"
			if len(args) == 1 {
				arg = args[0]
			}
			if cmd.Flags().Changed("out") && strings.TrimSpace(o.out) == "" {
				return badInput(fmt.Errorf("run: --out: empty folder name (leave the flag out for results/<name>)"))
			}
			return runRun(d, arg, o)
		},
	}
	f := cmd.Flags()
	f.StringVar(&o.out, "out", "", "results folder (default results/<name>)")
	f.IntVar(&o.workers, "workers", 0, "runs executed at once (default: the cores this process may use)")
	f.BoolVarP(&o.quiet, "quiet", "q", false, "print nothing but errors: no progress, no summary")
	f.StringVar(&o.shard, "shard", "", "run only share I of N (0-based, written I/N); default from a Slurm job array")
	f.StringVar(&o.memory, "memory-limit", "", memoryFlagHelp)
	f.BoolVar(&o.report, "report", false, "also write the HTML report (DIR/report/index.html) when the sweep is complete")
	return cmd
}

// maxWorkers bounds --workers: each worker holds one run in memory.
const maxWorkers = 4096

func runRun(d *deps, arg string, o *runOptions) error {
	if o.workers < 0 || o.workers > maxWorkers {
		return badInput(fmt.Errorf("run: --workers %d: want 0 (all cores) to %d", o.workers, maxWorkers))
	}
	e, err := experiments.Resolve(arg)
	if err != nil {
		return err
	}
	var sh sweep.Shard
	if o.shard != "" {
		if sh, err = sweep.ParseShard(o.shard); err != nil {
			return badInput(fmt.Errorf("run: --shard: %w", err))
		}
	} else if env, ok, err := sweep.EnvShard(); err != nil {
		return badInput(fmt.Errorf("run: %w", err))
	} else if ok {
		sh = env
	}
	out := o.out
	if out == "" {
		out = filepath.Join("results", e.Name)
	}
	workers := o.workers
	if workers == 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	mb, err := checkMemory("run", e, workers, o.memory)
	if err != nil {
		return err
	}
	memguard.SetSoftLimit(mb.limit)
	lock, err := lockOut(out, "run", true)
	if err != nil {
		return err
	}
	defer lock.Unlock()
	oc, err := sweep.Execute(d.ctx, e, sweep.Options{
		Out:      out,
		Workers:  o.workers,
		Shard:    sh.Index,
		Shards:   sh.Count,
		Quiet:    o.quiet,
		Progress: d.stderr,
		Version:  d.version,
	})
	if errors.Is(err, results.ErrOtherExperiment) {
		return badInput(fmt.Errorf("run: %w", err))
	}
	if err != nil {
		return err
	}
	for _, p := range oc.Rejected {
		fmt.Fprintf(d.stderr, "hoplore: run: a damaged or foreign part was moved aside and its run done again: %s\n", p)
	}
	if !o.quiet {
		printOutcome(d.stdout, e.Name, oc)
	}
	if o.report && oc.Complete {
		if err := report.Write(out, report.Options{}); err != nil {
			return err
		}
		if !o.quiet {
			fmt.Fprintf(d.stdout, "report: %s\n", filepath.Join(out, "report", "index.html"))
		}
	}
	return nil
}

// printOutcome says what a sweep did and, when its folder is complete,
// prints the per-cell summary.
func printOutcome(w io.Writer, name string, oc *sweep.Outcome) {
	var what strings.Builder
	if oc.Shard.Count > 1 {
		fmt.Fprintf(&what, "shard %s of %s: %d runs", oc.Shard, name, oc.Runs)
	} else {
		fmt.Fprintf(&what, "%s: %d runs", name, oc.Runs)
	}
	fmt.Fprintf(&what, ", %d run now", oc.Ran)
	if oc.Skipped > 0 {
		fmt.Fprintf(&what, ", %d kept from before", oc.Skipped)
	}
	if oc.Ran > 0 {
		fmt.Fprintf(&what, " (%.3g events in %.1f s)", float64(oc.Events), oc.Wall.Seconds())
	}
	fmt.Fprintln(w, what.String())
	if !oc.Complete {
		fmt.Fprintf(w, "%s holds %d of the experiment's %d runs; combine the shard folders with: hoplore merge OUT DIR...\n",
			oc.Out, oc.Total-oc.Missing, oc.Total)
		return
	}
	fmt.Fprintf(w, "results: %s\n\n", oc.Out)
	sweep.WriteSummary(w, oc.Summary)
	writeShortWarmups(w, oc.Out)
}

// writeShortWarmups warns, after the summary, about the cells whose warm-up
// is shorter than the initial transient detected in their runs in dir.
func writeShortWarmups(w io.Writer, dir string) {
	rows, err := results.ReadRuns(filepath.Join(dir, results.RunsFile))
	if err != nil {
		return
	}
	short := results.ShortWarmups(rows)
	if len(short) == 0 {
		return
	}
	fmt.Fprintf(w, "\nwarning: warm-up too short for %s (MSER-5 over each run's binned delivery times; `hoplore report` draws the learning curves):\n", checkPlural(len(short), "cell"))
	for i, s := range short {
		if i == 5 {
			fmt.Fprintf(w, "  … and %d more\n", len(short)-i)
			break
		}
		fmt.Fprintf(w, "  %s\n", s)
	}
}
