package main

import (
	"fmt"
	"path/filepath"
	"strconv"

	"github.com/spf13/cobra"

	"hoplore/report"
	"hoplore/results"
)

type reportOptions struct {
	dir                       string
	out                       string
	linkTopology, linkFailure string
	linkLoad, eventLoad       string
	maxEvents, maxChannels    int
	embedFonts                bool
	dpi                       float64
}

func newReportCmd(d *deps) *cobra.Command {
	o := &reportOptions{}
	cmd := &cobra.Command{
		Use:   "report DIR",
		Short: "Write DIR/report/index.html: charts and tables of an experiment's results",
		Long: "report reads the Parquet tables in DIR and writes a self-contained HTML page (no network needed to\n" +
			"view it; it follows the viewer's light or dark colour scheme) with delivery time and loss against\n" +
			"load per agent (95% confidence bands), delivery time and loss around each failure event with the\n" +
			"recovery times, the distributions over every single failure, link utilisation of one cell, learning\n" +
			"curves and route changes over the run, an at-a-glance table of the fastest agent per cell against\n" +
			"its runner-up and the model optimum, and tables of every cell with the best agent marked. With flow\n" +
			"traffic it adds completion time, slowdown and reordering against load (all flows, mice, elephants)\n" +
			"and a flows-at-a-glance table. Each chart is also written beside the page as SVG and PNG.",
		Example: "  hoplore report results/load-sweep\n" +
			"  hoplore report results/link-failure --event-load 0.6\n" +
			"  hoplore report results/load-sweep --links-topology two-region --links-load 1.4",
		Args: cobra.ExactArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			o.dir = args[0]
			return runReport(d, o)
		},
	}
	cmd.ValidArgsFunction = completeDirs
	f := cmd.Flags()
	f.StringVar(&o.out, "out", "", "folder to write (default DIR/report)")
	f.StringVar(&o.linkTopology, "links-topology", "", "topology of the cell whose link utilisation is drawn (default: the busiest cell)")
	f.StringVar(&o.linkLoad, "links-load", "", "load of that cell (default: the busiest)")
	f.StringVar(&o.linkFailure, "links-failure", "", "failure schedule of that cell (default: the busiest)")
	f.StringVar(&o.eventLoad, "event-load", "", "load whose runs the failure-event charts show (default: the highest load not above 1)")
	f.IntVar(&o.maxEvents, "max-events", 4, "failure events drawn per topology and schedule")
	f.IntVar(&o.maxChannels, "max-channels", 48, "channels in the utilisation chart (the busiest)")
	f.BoolVar(&o.embedFonts, "embed-fonts", false, "embed the fonts in the SVG files (about 0.5 MB each)")
	f.Float64Var(&o.dpi, "dpi", 144, "resolution of the PNG files")
	return cmd
}

// Bounds of --dpi: below 10 a chart is unreadable; above 1200 a PNG of a
// full-width chart passes 100 megapixels.
const (
	minDPI = 10
	maxDPI = 1200
)

// runReport writes the report of o.dir and prints where it went.
func runReport(d *deps, o *reportOptions) error {
	opts := report.Options{Out: o.out, LinkTopology: o.linkTopology, LinkFailure: o.linkFailure,
		MaxEvents: o.maxEvents, MaxChannels: o.maxChannels, EmbedFonts: o.embedFonts, DPI: o.dpi}
	for _, v := range []struct {
		flag, s string
		dst     **float64
	}{{"--links-load", o.linkLoad, &opts.LinkLoad}, {"--event-load", o.eventLoad, &opts.EventLoad}} {
		if v.s == "" {
			continue
		}
		x, err := strconv.ParseFloat(v.s, 64)
		if err != nil {
			return badInput(fmt.Errorf("report: %s: not a number: %q", v.flag, v.s))
		}
		*v.dst = &x
	}
	if !(o.dpi >= minDPI && o.dpi <= maxDPI) { // also refuses NaN
		return badInput(fmt.Errorf("report: --dpi %g: want %g to %g", o.dpi, float64(minDPI), float64(maxDPI)))
	}
	if o.maxEvents < 1 || o.maxEvents > 1000 {
		return badInput(fmt.Errorf("report: --max-events %d: want 1 to 1000", o.maxEvents))
	}
	if o.maxChannels < 1 || o.maxChannels > 10000 {
		return badInput(fmt.Errorf("report: --max-channels %d: want 1 to 10000", o.maxChannels))
	}
	lock, err := lockOut(o.dir, "report", false)
	if err != nil {
		return err
	}
	defer lock.Unlock()
	m, err := results.CheckTables(o.dir)
	if err != nil {
		return fmt.Errorf("report: %w", err)
	}
	opts.ExpectedRuns = m.ExpectedRuns
	if m.Missing() > 0 {
		fmt.Fprintf(d.stderr, "hoplore: report: warning: %s holds %d of the experiment's %d runs (%d missing)\n", o.dir, m.Runs, m.ExpectedRuns, m.Missing())
	}
	if err := report.Write(o.dir, opts); err != nil {
		return err
	}
	out := o.out
	if out == "" {
		out = filepath.Join(o.dir, "report")
	}
	_, err = fmt.Fprintf(d.stdout, "wrote %s\n", filepath.Join(out, "index.html"))
	return err
}
