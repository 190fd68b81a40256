package main

import (
	"fmt"
	"io"
	"math"
	"runtime"
	"strconv"
	"strings"
	"text/tabwriter"
	"time"

	"github.com/spf13/cobra"

	"hoplore/experiments"
)

// nominalEventsPerSecond is the engine speed check assumes per worker to
// turn an event estimate into a wall-time estimate. Measured with the bundled
// demo (18 runs, 1.33e8 events, 21.7 s of CPU time for `hoplore run demo
// --workers 2` on a 2-vCPU VM): 6.1e6 events per CPU second on average, from
// about 2.5e6 (central control under overload) to 9e6 (shortest path at light
// load). The nominal value is a little lower, for a machine shared with other
// work.
const nominalEventsPerSecond = 5e6

type checkOptions struct {
	arg     string
	workers int
}

func newCheckCmd(d *deps) *cobra.Command {
	o := &checkOptions{}
	cmd := &cobra.Command{
		Use:   "check FILE",
		Short: "Parse and validate an experiment without running it; print the grid size and an estimate of the work",
		Long: "check reads an experiment file (or a bundled experiment by name), checks everything that can be\n" +
			"checked before a run starts, and prints the grid: cells, runs, simulated time, an estimate of engine\n" +
			"events and of wall time. A problem is reported as FILE:LINE:COL: what is wrong, with exit status 2.",
		Example: "  hoplore check sweep.yaml\n  hoplore check demo --workers 8",
		Args:    cobra.ExactArgs(1),
		ValidArgsFunction: func(*cobra.Command, []string, string) ([]string, cobra.ShellCompDirective) {
			return []string{"yaml", "yml"}, cobra.ShellCompDirectiveFilterFileExt
		},
		RunE: func(cmd *cobra.Command, args []string) error {
			o.arg = args[0]
			return runCheck(d.stdout, o)
		},
	}
	cmd.Flags().IntVar(&o.workers, "workers", runtime.NumCPU(), "workers to estimate the wall time for")
	return cmd
}

// runCheck parses and checks o.arg and prints its grid summary to w. Bad
// input comes back as an error the caller maps to exit status 2; nothing is
// written then.
func runCheck(w io.Writer, o *checkOptions) error {
	if o.workers < 1 {
		return badInput(fmt.Errorf("check: --workers must be at least 1, got %d", o.workers))
	}
	e, err := experiments.Resolve(o.arg)
	if err != nil {
		return err
	}
	var b strings.Builder
	writeCheck(&b, e, o.workers)
	_, err = io.WriteString(w, b.String())
	return err
}

// writeCheck writes the grid summary of e.
func writeCheck(w io.Writer, e *experiments.Experiment, workers int) {
	tw := tabwriter.NewWriter(w, 0, 4, 2, ' ', 0)
	loads := "absolute rates"
	if e.Loads != nil {
		loads = checkPlural(len(e.Loads), "load")
	}
	runs := e.Runs()
	fmt.Fprintf(tw, "experiment\t%s (%s)\n", e.Name, e.Path)
	if e.Description != "" {
		fmt.Fprintf(tw, "\t%s\n", e.Description)
	}
	fmt.Fprintf(tw, "grid\t%s × %s × %s × %s = %s\n",
		checkPlural(len(e.Topologies), "topology"), loads, checkPlural(len(e.Failures), "failure schedule"),
		checkPlural(len(e.Agents), "agent"), checkPlural(e.Cells(), "cell"))
	fmt.Fprintf(tw, "runs\t%s × %s = %s\n", checkPlural(e.Cells(), "cell"), checkPlural(e.Replicates, "replicate"), checkPlural(len(runs), "run"))
	fmt.Fprintf(tw, "simulated\t%v per run (warm-up %v, bins of %v)\n",
		time.Duration(e.Duration), time.Duration(e.Warmup), time.Duration(e.Bin))
	for i, t := range e.Topologies {
		head := ""
		if i == 0 {
			head = "topologies"
		}
		fmt.Fprintf(tw, "%s\t%s: %s, %s, diameter %d\n", head, t.Label,
			checkPlural(len(t.Graph.Nodes), "node"), checkPlural(len(t.Graph.Links), "link"), t.Net.Diameter())
	}
	for i, a := range e.Agents {
		head := ""
		if i == 0 {
			head = "agents"
		}
		fmt.Fprintf(tw, "%s\t%s\n", head, a.Canonical())
	}
	events := e.EstimateEvents()
	fmt.Fprintf(tw, "events\tabout %s in all, %s per run on average\n", checkSci(events), checkSci(events/float64(len(runs))))
	single := events / nominalEventsPerSecond
	par := single / float64(min(workers, len(runs)))
	fmt.Fprintf(tw, "wall time\tabout %s with %s (%s on one), at a nominal %s events/s per worker\n",
		checkRoughDuration(par), checkPlural(workers, "worker"), checkRoughDuration(single), checkSci(nominalEventsPerSecond))
	fmt.Fprintf(tw, "memory\tabout %s at peak with %s (rough upper estimate)\n",
		checkBytes(e.EstimatePeakBytes(workers)), checkPlural(workers, "worker"))
	fmt.Fprintf(tw, "hash\t%s\n", e.Hash)
	tw.Flush()
}

func checkPlural(n int, word string) string {
	if n == 1 {
		return "1 " + word
	}
	switch {
	case strings.HasSuffix(word, "y"):
		word = strings.TrimSuffix(word, "y") + "ies"
	default:
		word += "s"
	}
	return fmt.Sprintf("%d %s", n, word)
}

// roughDuration rounds seconds to a readable duration.
// checkBytes formats a byte count in MB or GB.
func checkBytes(b float64) string {
	if b >= 1e9 {
		return fmt.Sprintf("%.1f GB", b/1e9)
	}
	return fmt.Sprintf("%.0f MB", math.Ceil(b/1e6))
}

func checkRoughDuration(s float64) string {
	switch {
	case s < 1:
		return "a second"
	case s < 120:
		return fmt.Sprintf("%.0fs", math.Ceil(s))
	case s < 2*3600:
		return fmt.Sprintf("%.0fm", math.Ceil(s/60))
	default:
		return fmt.Sprintf("%.1fh", s/3600)
	}
}

// checkSci formats x with two significant digits, as 1.3e8 rather than
// 1.3e+08.
func checkSci(x float64) string {
	s := strconv.FormatFloat(x, 'g', 2, 64)
	return strings.NewReplacer("e+0", "e", "e+", "e").Replace(s)
}
