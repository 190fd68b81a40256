package main

import (
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"text/tabwriter"
	"time"

	"github.com/spf13/cobra"

	"hoplore/agents"
	"hoplore/experiments"
	"hoplore/results"
	"hoplore/sim"
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
	arg         string
	workers     int
	out         string // results of an earlier run, to check the warm-up against
	memoryLimit string
}

func newCheckCmd(d *deps) *cobra.Command {
	o := &checkOptions{}
	cmd := &cobra.Command{
		Use:   "check FILE",
		Short: "Parse and validate an experiment without running it; print the grid size and an estimate of the work",
		Long: "check reads an experiment file (or a bundled experiment by name), checks everything that can be\n" +
			"checked before a run starts, and prints the grid: cells, runs, simulated time, an estimate of engine\n" +
			"events and of wall time. A problem is reported as FILE:LINE:COL: what is wrong, with exit status 2.\n" +
			"When the results folder of an earlier run exists (--out, default results/<name>), check also warns\n" +
			"about cells whose warm-up is shorter than the initial transient detected in those runs (MSER-5).",
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
	cmd.Flags().IntVar(&o.workers, "workers", runtime.NumCPU(), "workers to estimate the wall time and memory for")
	cmd.Flags().StringVar(&o.out, "out", "", "results of an earlier run to check the warm-up against (default results/<name>)")
	cmd.Flags().StringVar(&o.memoryLimit, "memory-limit", "", memoryFlagHelp)
	return cmd
}

// runCheck parses and checks o.arg and prints its grid summary to w. Bad
// input comes back as an error the caller maps to exit status 2; nothing is
// written then.
func runCheck(w io.Writer, o *checkOptions) error {
	if o.workers < 1 || o.workers > maxWorkers {
		return badInput(fmt.Errorf("check: --workers %d: want 1 to %d", o.workers, maxWorkers))
	}
	e, err := experiments.Resolve(o.arg)
	if err != nil {
		return err
	}
	out := o.out
	if out == "" {
		out = filepath.Join("results", e.Name)
	}
	mb, err := checkMemory("check", e, o.workers, o.memoryLimit)
	if err != nil {
		return err
	}
	var b strings.Builder
	writeCheck(&b, e, o.workers, out, mb)
	_, err = io.WriteString(w, b.String())
	return err
}

// writeWarmupCheck warns about the cells whose warm-up, as e now sets it,
// is shorter than the initial transient detected in the runs.parquet of an
// earlier run in dir, or whose runs there never settled. It writes nothing
// when dir holds no runs of an experiment of that name.
func writeWarmupCheck(w io.Writer, e *experiments.Experiment, dir string) {
	path := filepath.Join(dir, results.RunsFile)
	rows, err := results.ReadRuns(path)
	if err != nil {
		if !errors.Is(err, fs.ErrNotExist) {
			fmt.Fprintf(w, "warm-up\tnot checked: %v\n", err)
		}
		return
	}
	var mine []results.RunRow
	tried := 0
	for _, r := range rows {
		if r.Experiment == e.Name {
			r.WarmupS = e.Warmup.Seconds()
			mine = append(mine, r)
			if r.WarmupDetection != results.WarmupTooFewBins && r.WarmupDetection != "" {
				tried++
			}
		}
	}
	if len(mine) == 0 {
		return
	}
	if tried == 0 {
		fmt.Fprintf(w, "warm-up\tnot checked: the runs in %s have fewer than %d bins with a delivery time, too few to detect a transient (MSER)\n", path, results.WarmupMinBins)
		return
	}
	short := results.ShortWarmups(mine)
	if len(short) == 0 {
		fmt.Fprintf(w, "warm-up\t%v covers the initial transient detected in every run of %s\n", time.Duration(e.Warmup), path)
		return
	}
	fmt.Fprintf(w, "warning\twarm-up too short for %s run in %s (MSER-5 over each run's binned delivery times):\n", checkPlural(len(short), "cell"), path)
	for i, s := range short {
		if i == 5 {
			fmt.Fprintf(w, "\t… and %d more\n", len(short)-i)
			break
		}
		fmt.Fprintf(w, "\t%s\n", s)
	}
}

// writeCheck writes the grid summary of e, with the warm-up checked
// against the results of an earlier run in out.
func writeCheck(w io.Writer, e *experiments.Experiment, workers int, out string, mb memoryBudget) {
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
	// a family of failures (each) has one schedule per element of each
	// topology
	sched := checkPlural(e.Schedules(0), "failure schedule")
	for i := range e.Topologies {
		if e.Schedules(i) != e.Schedules(0) {
			sched = "failure schedules (per topology)"
		}
	}
	fmt.Fprintf(tw, "grid\t%s × %s × %s × %s = %s\n",
		checkPlural(len(e.Topologies), "topology"), loads, sched,
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
	if tr := e.Traffic; tr.Matrix == "file" {
		demands := 0
		for _, p := range tr.Periods {
			demands += len(p.Demands)
		}
		if tr.Replay {
			matrices := 0
			for _, p := range tr.Periods {
				if len(p.Demands) > 0 {
					matrices++
				}
			}
			end := tr.Periods[len(tr.Periods)-1]
			fmt.Fprintf(tw, "traffic\ta replay of %s (%s) from %v", checkPlural(matrices, "matrix"), checkPlural(demands, "demand"), time.Duration(tr.Periods[0].At))
			switch {
			case len(end.Demands) > 0:
				fmt.Fprintf(tw, ", the last from %v until the run ends", time.Duration(end.At))
			case end.At < e.Duration:
				fmt.Fprintf(tw, " to %v; nothing is sent from then to the end of the run (%v)", time.Duration(end.At), time.Duration(e.Duration))
			case end.At > e.Duration:
				fmt.Fprintf(tw, " to %v; the run ends at %v, before the replay does", time.Duration(end.At), time.Duration(e.Duration))
			default:
				fmt.Fprintf(tw, " to %v, the end of the run", time.Duration(end.At))
			}
			fmt.Fprintln(tw)
		} else {
			fmt.Fprintf(tw, "traffic\ta matrix file of %s\n", checkPlural(demands, "demand"))
		}
	}
	if g := e.Traffic.FlowGen; g != nil {
		writeCheckFlows(tw, g, e.Agents)
	}
	if n := len(e.Conditions); n > 0 {
		fmt.Fprintf(tw, "conditions\t%s changing links over time\n", checkPlural(n, "row"))
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
	fmt.Fprintf(tw, "memory\tabout %s at peak with %s (rough upper estimate)",
		checkBytes(mb.est.Total), checkPlural(workers, "worker"))
	if !math.IsInf(mb.limit, 1) {
		fmt.Fprintf(tw, "; %s may be used (%s)", checkBytes(mb.limit), mb.source)
	}
	fmt.Fprintln(tw)
	for i, p := range mb.est.Parts {
		if i == 3 {
			break
		}
		fmt.Fprintf(tw, "	  %s: %s\n", checkBytes(p.Bytes), p.Setting)
	}
	fmt.Fprintf(tw, "hash\t%s\n", e.Hash)
	writeWarmupCheck(tw, e, out)
	tw.Flush()
}

func checkPlural(n int, word string) string {
	if n == 1 {
		return "1 " + word
	}
	switch {
	case strings.HasSuffix(word, "y"):
		word = strings.TrimSuffix(word, "y") + "ies"
	case strings.HasSuffix(word, "x"):
		word = strings.TrimSuffix(word, "x") + "ces" // matrix
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

// writeCheckFlows prints the flow traffic line: how much, the mean size, the
// class bounds, and how many agents pin flows.
func writeCheckFlows(w io.Writer, g *experiments.FlowTraffic, ags []agents.Params) {
	how := fmt.Sprintf("%g of each cell's load", g.Share)
	switch {
	case g.Share == 1:
		how = "all of each cell's load (no packets)"
	case g.Arrivals > 0:
		how = fmt.Sprintf("%g/s per source on top of the packets", g.Arrivals)
	}
	mice, el := g.MiceBytes, g.ElephantBytes
	if mice == 0 {
		mice = sim.DefaultMiceBytes
	}
	if el == 0 {
		el = math.Max(sim.DefaultElephantBytes, mice)
	}
	pinned := 0
	for i := range ags {
		if ags[i].Pin == agents.PinFlow {
			pinned++
		}
	}
	fmt.Fprintf(w, "flows\t%s, mean size %s; mice up to %s, elephants from %s; %d of %s pin flows\n",
		how, checkSize(g.Size.Mean()), checkSize(mice), checkSize(el), pinned, checkPlural(len(ags), "agent"))
}

// checkSize formats a size in bytes with an SI prefix.
func checkSize(b float64) string {
	switch {
	case b >= 1e9:
		return fmt.Sprintf("%.3g GB", b/1e9)
	case b >= 1e6:
		return fmt.Sprintf("%.3g MB", b/1e6)
	case b >= 1e3:
		return fmt.Sprintf("%.3g kB", b/1e3)
	}
	return fmt.Sprintf("%.3g B", b)
}
