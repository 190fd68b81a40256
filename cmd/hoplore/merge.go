package main

import (
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"

	"github.com/spf13/cobra"

	"hoplore/results"
	"hoplore/sweep"
)

func newMergeCmd(d *deps) *cobra.Command {
	var quiet bool
	cmd := &cobra.Command{
		Use:   "merge OUT DIR...",
		Short: "Merge result folders (shards, or pieces of a resumed sweep) into one",
		Long: `Merge the runs of result folders of one experiment (the shards of a sharded
sweep, or pieces of a sweep resumed elsewhere) into OUT, which may already
hold runs of the same experiment, and write OUT's tables in the grid's run
order (optimum.parquet included, from the rows each run carries), then
print the per-cell summary. Folders of different experiments
are refused (exit status 2) and nothing is written.`,
		Example: `  hoplore merge results/sweep results/sweep/shards/0 results/sweep/shards/1`,
		Args:    cobra.MinimumNArgs(2),
		RunE: func(cmd *cobra.Command, args []string) error {
			return runMerge(d, args[0], args[1:], quiet)
		},
	}
	cmd.Flags().BoolVarP(&quiet, "quiet", "q", false, "print nothing but errors")
	return cmd
}

func runMerge(d *deps, out string, dirs []string, quiet bool) error {
	// Every folder must be marked with the same experiment. Folders that
	// hold no run (a shard with an empty share) are checked, then left out.
	var first results.Meta
	var full []string
	for i, dir := range dirs {
		m, err := results.ReadMark(dir)
		if errors.Is(err, fs.ErrNotExist) {
			return badInput(fmt.Errorf("merge: %s is not a result folder (no %s)", dir, results.MarkFile))
		} else if err != nil {
			return badInput(fmt.Errorf("merge: %w", err))
		}
		if i == 0 {
			first = m
		} else if m.ExperimentHash != first.ExperimentHash {
			return badInput(fmt.Errorf("merge: %s holds experiment %q, %s holds %q: %w",
				dirs[0], first.Experiment, dir, m.Experiment, results.ErrOtherExperiment))
		}
		if empty, err := holdsNoRun(dir); err != nil {
			return fmt.Errorf("merge: %w", err)
		} else if !empty {
			full = append(full, dir)
		}
	}
	if len(full) == 0 {
		return badInput(fmt.Errorf("merge: the folders hold no finished run"))
	}
	lock, err := lockOut(out, "merge", true)
	if err != nil {
		return err
	}
	defer lock.Unlock()
	err = results.Merge(out, full)
	if errors.Is(err, results.ErrOtherExperiment) {
		return badInput(fmt.Errorf("merge: %w", err))
	}
	if err != nil {
		return fmt.Errorf("merge: %w", err)
	}
	if m, err := results.CheckTables(out); err != nil {
		return fmt.Errorf("merge: %w", err)
	} else if m.Missing() > 0 {
		fmt.Fprintf(d.stderr, "hoplore: merge: warning: %s holds %d of the experiment's %d runs: %d missing (a shard folder not given, or not finished); the report will say so\n",
			out, m.Runs, m.ExpectedRuns, m.Missing())
	}
	if quiet {
		return nil
	}
	sum, err := results.ReadSummary(filepath.Join(out, results.SummaryFile))
	if err != nil {
		return fmt.Errorf("merge: %w", err)
	}
	runs, err := results.ListParts(out)
	if err != nil {
		return fmt.Errorf("merge: %w", err)
	}
	fmt.Fprintf(d.stdout, "merged %d folders into %s: %d runs, %d cells\n\n", len(dirs), out, len(runs), len(sum))
	return sweep.WriteSummary(d.stdout, sum)
}

// holdsNoRun reports whether a marked result folder holds neither parts nor
// tables.
func holdsNoRun(dir string) (bool, error) {
	ids, err := results.ListParts(dir)
	if err != nil || len(ids) > 0 {
		return false, err
	}
	_, err = os.Stat(filepath.Join(dir, results.RunsFile))
	if errors.Is(err, fs.ErrNotExist) {
		return true, nil
	}
	return false, err
}
