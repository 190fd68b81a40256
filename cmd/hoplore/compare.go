package main

import (
	"fmt"
	"path/filepath"
	"strings"

	"github.com/spf13/cobra"

	"hoplore/report"
	"hoplore/results"
)

type compareOptions struct {
	dir, a, b string
	out       string
	metrics   []string
}

func newCompareCmd(d *deps) *cobra.Command {
	o := &compareOptions{}
	cmd := &cobra.Command{
		Use:   "compare DIR --a LABEL --b LABEL",
		Short: "Paired comparison of two agents across replicates, per cell: mean difference, 95% CI, p-values",
		Long: wrapWords(100, "compare pairs the runs of agents A and B that share a cell (topology, load, failure schedule) and a "+
			"replicate index, and so the same seeds, and tests the differences A − B of "+strings.Join(report.CompareMetrics, ", ")+
			" and, when the runs have flow traffic, "+strings.Join(report.FlowCompareMetrics, ", ")+
			" (or the runs.parquet columns given with --metric): mean difference with its 95% confidence interval (Student t), the paired "+
			"t test and the Wilcoxon signed-rank test (exact for up to 50 pairs), the difference relative to B, and "+
			"both p-values adjusted by Holm's step-down method (1979) across the cells compared on the same metric; "+
			"verdicts use the adjusted t-test p at 0.05. No interval or p-value comes from fewer than 3 pairs or from "+
			"differences without spread (the table says why). It prints a table and writes DIR/compare.parquet, one "+
			"row per cell and metric, with null where a statistic does not exist."),
		Example: "  hoplore compare results/load-sweep --a q-routing --b shortest-path",
		Args:    cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			o.dir = args[0]
			return runCompare(d, o)
		},
	}
	f := cmd.Flags()
	f.StringVar(&o.a, "a", "", "label of agent A (the agent column)")
	f.StringVar(&o.b, "b", "", "label of agent B")
	f.StringVar(&o.out, "out", "", "Parquet file to write (default DIR/compare.parquet)")
	f.StringSliceVar(&o.metrics, "metric", nil, "numeric runs.parquet column to test, repeatable (default: the metrics named above)")
	_ = cmd.MarkFlagRequired("a")
	_ = cmd.MarkFlagRequired("b")
	cmd.ValidArgsFunction = completeDirs
	return cmd
}

// completeDirs completes a result folder argument.
func completeDirs(_ *cobra.Command, args []string, _ string) ([]string, cobra.ShellCompDirective) {
	if len(args) > 0 {
		return nil, cobra.ShellCompDirectiveNoFileComp
	}
	return nil, cobra.ShellCompDirectiveFilterDirs
}

// runCompare compares o.a with o.b in o.dir, prints the table and writes
// the Parquet file.
func runCompare(d *deps, o *compareOptions) error {
	lock, err := lockOut(o.dir, "compare", false)
	if err != nil {
		return err
	}
	defer lock.Unlock()
	m, err := results.CheckTables(o.dir)
	if err != nil {
		return fmt.Errorf("compare: %w", err)
	}
	if m.Missing() > 0 {
		fmt.Fprintf(d.stderr, "hoplore: compare: warning: %s holds %d of the experiment's %d runs (%d missing)\n", o.dir, m.Runs, m.ExpectedRuns, m.Missing())
	}
	data, err := report.Load(o.dir)
	if err != nil {
		return err
	}
	rows, err := report.Compare(data, o.a, o.b, o.metrics...)
	if err != nil {
		return err
	}
	out := o.out
	if out == "" {
		out = filepath.Join(o.dir, "compare.parquet")
	}
	meta := data.Meta
	meta.Version = d.version
	if err := report.WriteComparisons(out, rows, meta); err != nil {
		return err
	}
	if err := report.PrintComparisons(d.stdout, rows); err != nil {
		return err
	}
	_, err = fmt.Fprintf(d.stdout, "wrote %s\n", out)
	return err
}

// wrapWords breaks text into lines of at most width bytes at spaces (a
// longer word stands on its own line).
func wrapWords(width int, text string) string {
	var b strings.Builder
	line := 0
	for _, w := range strings.Fields(text) {
		switch {
		case line == 0:
		case line+1+len(w) > width:
			b.WriteByte('\n')
			line = 0
		default:
			b.WriteByte(' ')
			line++
		}
		b.WriteString(w)
		line += len(w)
	}
	return b.String()
}
