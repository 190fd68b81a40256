package main

import (
	"errors"
	"fmt"
	"io/fs"
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
order, then print the per-cell summary. Folders of different experiments
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
	for _, dir := range dirs {
		if _, err := results.ReadMark(dir); errors.Is(err, fs.ErrNotExist) {
			return badInput(fmt.Errorf("merge: %s is not a result folder (no %s)", dir, results.MarkFile))
		} else if err != nil {
			return badInput(fmt.Errorf("merge: %w", err))
		}
	}
	err := results.Merge(out, dirs)
	if errors.Is(err, results.ErrOtherExperiment) {
		return badInput(fmt.Errorf("merge: %w", err))
	}
	if err != nil {
		return fmt.Errorf("merge: %w", err)
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
