package main

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"

	"github.com/spf13/cobra"

	"hoplore/experiments"
	"hoplore/internal/atomicfile"
	"hoplore/results"
	"hoplore/sweep"
)

// slurmOptions are the flags of hoplore slurm.
type slurmOptions struct {
	tasks     int
	partition string
	time      string
	cpus      int
	out       string
	script    string
	binary    string
}

func newSlurmCmd(d *deps) *cobra.Command {
	o := &slurmOptions{}
	cmd := &cobra.Command{
		Use:   "slurm FILE --tasks N",
		Short: "Write a Slurm script that runs an experiment as a job array of N shards plus a merge job",
		Long: `Write a batch script that runs the experiment as a Slurm job array of N
tasks (--array=0-N-1, one deterministic share of the runs each, logs named
%A_%a) and a merge job that starts when every task has succeeded
(--dependency=afterok) and merges the shard folders into --out.

Run the script with bash to submit both jobs. A failed task can be
resubmitted alone with sbatch --array=I SCRIPT (its finished runs are kept);
bash SCRIPT merge merges by hand. Paths in the script are absolute: the
experiment file, the results folder and this hoplore executable (--hoplore
to name another path on the cluster).`,
		Example: `  hoplore slurm sweep.yaml --tasks 16 --partition compute --time 2:00:00 --cpus-per-task 8 --out /scratch/sweep
  bash /scratch/sweep/slurm/NAME.sbatch    # the path it printed: submits the array and the merge job`,
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			return runSlurm(d, args[0], o)
		},
	}
	f := cmd.Flags()
	f.IntVar(&o.tasks, "tasks", 0, "array tasks (shards), at least 1")
	f.StringVar(&o.partition, "partition", "", "Slurm partition (default: the cluster's default)")
	f.StringVar(&o.time, "time", "", "wall-time limit per task, Slurm syntax such as 2:00:00 (default: the partition's)")
	f.IntVar(&o.cpus, "cpus-per-task", 1, "CPUs per task, also the workers of each shard")
	f.StringVar(&o.out, "out", "", "results folder (default results/<name>); shards go to OUT/shards/I")
	f.StringVar(&o.script, "script", "", "where to write the script (default OUT/slurm/<name>.sbatch)")
	f.StringVar(&o.binary, "hoplore", "", "path of the hoplore executable on the cluster (default: this one)")
	_ = cmd.MarkFlagRequired("tasks")
	return cmd
}

func runSlurm(d *deps, arg string, o *slurmOptions) error {
	if o.tasks < 1 {
		return badInput(fmt.Errorf("slurm: --tasks %d: want at least 1", o.tasks))
	}
	if o.cpus < 1 || o.cpus > maxWorkers {
		return badInput(fmt.Errorf("slurm: --cpus-per-task %d: want 1 to %d", o.cpus, maxWorkers))
	}
	if strings.ContainsAny(o.partition+o.time, " \t\n'\"$`\\") {
		return badInput(errors.New("slurm: --partition and --time take a single word"))
	}
	e, err := experiments.Resolve(arg)
	if err != nil {
		return err
	}
	runs := e.Runs()
	if o.tasks > len(runs) {
		return badInput(fmt.Errorf("slurm: --tasks %d is more than the %d runs of %s", o.tasks, len(runs), e.Name))
	}
	expArg := arg
	if _, err := os.Stat(arg); err == nil {
		if expArg, err = filepath.Abs(arg); err != nil {
			return fmt.Errorf("slurm: %w", err)
		}
	}
	out := o.out
	if out == "" {
		out = filepath.Join("results", e.Name)
	}
	if out, err = filepath.Abs(out); err != nil {
		return fmt.Errorf("slurm: %w", err)
	}
	if err := results.CheckDir(out, e.Hash); err != nil {
		return badInput(fmt.Errorf("slurm: %w", err))
	}
	for _, p := range []string{out, expArg} {
		if !sweep.ScriptPathOK(p) {
			return badInput(fmt.Errorf("slurm: %q: paths in a Slurm script must not contain white space or quotes", p))
		}
	}
	bin := o.binary
	if bin == "" {
		if bin, err = os.Executable(); err != nil {
			return fmt.Errorf("slurm: %w (give --hoplore PATH)", err)
		}
		if r, err := filepath.EvalSymlinks(bin); err == nil {
			bin = r
		}
		if strings.Contains(bin, string(filepath.Separator)+"go-build") {
			fmt.Fprintf(d.stderr, "hoplore: warning: %s is a temporary build (go run); build hoplore and give --hoplore PATH\n", bin)
		}
	} else if bin, err = filepath.Abs(bin); err != nil {
		return fmt.Errorf("slurm: %w", err)
	}
	path := o.script
	if path == "" {
		path = filepath.Join(out, "slurm", e.Name+".sbatch")
	}
	if path, err = filepath.Abs(path); err != nil {
		return fmt.Errorf("slurm: %w", err)
	}
	if !sweep.ScriptPathOK(path) || !sweep.ScriptPathOK(bin) {
		return badInput(fmt.Errorf("slurm: %q, %q: paths in a Slurm script must not contain white space or quotes", path, bin))
	}
	text := sweep.Script(sweep.ScriptOptions{
		Name: e.Name, Experiment: expArg, Binary: bin, Out: out, Path: path,
		Tasks: o.tasks, Partition: o.partition, Time: o.time, CPUs: o.cpus,
	})
	if err := os.MkdirAll(sweep.LogDir(out), 0o755); err != nil {
		return fmt.Errorf("slurm: %w", err)
	}
	if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		return fmt.Errorf("slurm: %w", err)
	}
	if err := atomicfile.WriteBytes(path, []byte(text), 0o755); err != nil {
		return fmt.Errorf("slurm: %w", err)
	}

	costs := make([]float64, len(runs))
	for i, r := range runs {
		costs[i] = r.EstimateEvents()
	}
	var per []float64
	var counts []int
	for _, share := range sweep.Assign(costs, o.tasks) {
		s := 0.0
		for _, i := range share {
			s += costs[i]
		}
		per = append(per, s)
		counts = append(counts, len(share))
	}
	fmt.Fprintf(d.stdout, "wrote %s\n", path)
	fmt.Fprintf(d.stdout, "%s: %d runs in %d tasks of %d-%d runs (estimated %.3g-%.3g events each), %d CPUs per task\n",
		e.Name, len(runs), o.tasks, slices.Min(counts), slices.Max(counts), slices.Min(per), slices.Max(per), o.cpus)
	fmt.Fprintf(d.stdout, "submit: bash %s\n", path)
	return nil
}

// writeAtomic writes data to path through a temporary file and a rename.
