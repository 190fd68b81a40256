package main

import (
	"bytes"
	"fmt"
	"io"
	"os"
	"strconv"
	"strings"
	"text/tabwriter"

	"github.com/spf13/cobra"

	"hoplore/sim"
	"hoplore/topologies"
)

type topologiesOptions struct {
	params bool // list every generator's parameters too
}

func newTopologiesCmd(d *deps) *cobra.Command {
	o := &topologiesOptions{}
	cmd := &cobra.Command{
		Use:   "topologies",
		Short: "List the bundled topology generators with nodes, links and diameter at their defaults",
		Long: "topologies lists the bundled topology generators with the size of what each builds at its default\n" +
			"parameters; --params lists the parameters too. `hoplore topologies show NAME` prints one as a\n" +
			"topology file to start from.",
		Example: "  hoplore topologies --params\n  hoplore topologies show two-region rows=4 bridges=1",
		Args:    cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			return listTopologies(d.stdout, o)
		},
	}
	cmd.Flags().BoolVar(&o.params, "params", false, "list each generator's parameters with defaults")
	cmd.AddCommand(newTopologiesShowCmd(d))
	return cmd
}

type showTopologyOptions struct {
	name   string
	params []string // param=value
	format string   // yaml or graphml
	// for a file:
	keep         string
	scale        float64
	capacityUnit string
	attributes   []string // field=KEY
}

func newTopologiesShowCmd(d *deps) *cobra.Command {
	o := &showTopologyOptions{}
	cmd := &cobra.Command{
		Use:   "show NAME [param=value ...]",
		Short: "Print a bundled topology (or convert a topology file) as a topology file or GraphML",
		Long: "show builds the bundled topology NAME with the given parameters (the others take their defaults)\n" +
			"and prints it as a topology file, or as GraphML with --format graphml. NAME may also be a topology\n" +
			"file (YAML, GraphML or network-design XML), which is converted; the output then starts with comments\n" +
			"saying what each field was read from, what took a default, what the file held that is not used and\n" +
			"what was merged or dropped. --keep, --bandwidth-scale, --capacity-unit and --attr read a file as the\n" +
			"same fields of an experiment's topology entry do.",
		Example: "  hoplore topologies show waxman nodes=30 seed=7\n  hoplore topologies show fat-tree k=4 --format graphml > ft.graphml\n" +
			"  hoplore topologies show backbone.graphml --keep largest-component --bandwidth-scale 1e-4\n" +
			"  hoplore topologies show other.graphml --attr bandwidth=capacity --attr lat=y --attr lon=x",
		Args: cobra.MinimumNArgs(1),
		ValidArgsFunction: func(_ *cobra.Command, args []string, _ string) ([]string, cobra.ShellCompDirective) {
			if len(args) > 0 {
				return nil, cobra.ShellCompDirectiveNoFileComp
			}
			return topologies.Names(), cobra.ShellCompDirectiveDefault
		},
		RunE: func(cmd *cobra.Command, args []string) error {
			o.name, o.params = args[0], args[1:]
			return showTopology(d.stdout, o)
		},
	}
	cmd.Flags().StringVar(&o.format, "format", "yaml", "output format: yaml or graphml")
	cmd.Flags().StringVar(&o.keep, "keep", "", "for a file: largest-component keeps a disconnected file's largest component")
	cmd.Flags().Float64Var(&o.scale, "bandwidth-scale", 0, "for a file: multiply link speeds by this (default 0.001 for measured speeds, 1 for hoplore's bandwidth key)")
	cmd.Flags().StringVar(&o.capacityUnit, "capacity-unit", "", "for a network-design XML file: the unit of its capacities (default Mbps)")
	cmd.Flags().StringArrayVar(&o.attributes, "attr", nil, "for a GraphML file: FIELD=KEY reads FIELD (label, lat, lon, x_km, y_km, processing, bandwidth, delay, buffer) from the attribute KEY")
	cmd.RegisterFlagCompletionFunc("format", cobra.FixedCompletions([]string{"yaml", "graphml"}, cobra.ShellCompDirectiveNoFileComp))
	return cmd
}

// listTopologies writes one line per generator: name, nodes, links and
// diameter at default parameters, and what it builds.
func listTopologies(w io.Writer, o *topologiesOptions) error {
	var b bytes.Buffer
	tw := tabwriter.NewWriter(&b, 0, 4, 2, ' ', 0)
	fmt.Fprintln(tw, "NAME\tNODES\tLINKS\tDIAMETER\tDESCRIPTION")
	for _, info := range topologies.List() {
		g, err := topologies.Generate(info.Name, nil)
		if err != nil {
			return fmt.Errorf("topologies: %s at its defaults: %w", info.Name, err)
		}
		net := sim.Compile(g)
		fmt.Fprintf(tw, "%s\t%d\t%d\t%d\t%s\n", info.Name, len(g.Nodes), len(g.Links), net.Diameter(), info.Doc)
		if o.params {
			for _, p := range info.Params {
				kind := "number"
				if p.Integer {
					kind = "whole number"
				}
				fmt.Fprintf(tw, "  %s\t%s\t\t\t%s (%s)\n", p.Name, strconv.FormatFloat(p.Default, 'g', -1, 64), p.Doc, kind)
			}
		}
	}
	tw.Flush()
	_, err := w.Write(b.Bytes())
	return err
}

// showTopology writes the topology o names in o.format. The whole output is
// built first, so nothing is written on an error.
func showTopology(w io.Writer, o *showTopologyOptions) error {
	write := topologies.WriteYAML
	switch o.format {
	case "yaml", "yml":
	case "graphml":
		write = topologies.WriteGraphML
	default:
		return badInput(fmt.Errorf("topologies: --format %q is not yaml or graphml", o.format))
	}
	g, pv, err := buildShown(o)
	if err != nil {
		return err
	}
	var b bytes.Buffer
	if err := write(&b, g); err != nil {
		return err
	}
	if pv != nil {
		b = withProvenance(b, o, pv)
	}
	_, err = w.Write(b.Bytes())
	return err
}

// withProvenance puts the lines of pv before the topology in b, as comments
// of the output format.
func withProvenance(b bytes.Buffer, o *showTopologyOptions, pv *topologies.Provenance) bytes.Buffer {
	var out bytes.Buffer
	lines := append([]string{"read from " + o.name + ":"}, pv.Lines()...)
	if o.format == "graphml" {
		head, rest, _ := bytes.Cut(b.Bytes(), []byte("\n"))
		out.Write(head)
		out.WriteString("\n<!--\n")
		for _, l := range lines {
			out.WriteString("  " + strings.ReplaceAll(l, "--", "- -") + "\n")
		}
		out.WriteString("-->\n")
		out.Write(rest)
		return out
	}
	for _, l := range lines {
		out.WriteString("# " + l + "\n")
	}
	out.Write(b.Bytes())
	return out
}

func buildShown(o *showTopologyOptions) (*sim.Graph, *topologies.Provenance, error) {
	known := false
	for _, n := range topologies.Names() {
		known = known || n == o.name
	}
	fileOnly := o.keep != "" || o.scale != 0 || o.capacityUnit != "" || len(o.attributes) > 0
	if !known {
		if _, err := os.Stat(o.name); err == nil {
			if len(o.params) > 0 {
				return nil, nil, badInput(fmt.Errorf("topologies: %s is a file; parameters apply to bundled generators only", o.name))
			}
			ro := topologies.ReadOptions{Keep: o.keep, BandwidthScale: o.scale, CapacityUnit: o.capacityUnit}
			if o.scale < 0 || o.scale != o.scale {
				return nil, nil, badInput(fmt.Errorf("topologies: --bandwidth-scale must be positive, got %g", o.scale))
			}
			for _, kv := range o.attributes {
				k, v, ok := strings.Cut(kv, "=")
				if !ok || k == "" || v == "" {
					return nil, nil, badInput(fmt.Errorf("topologies: --attr %q is not FIELD=KEY", kv))
				}
				if ro.Attributes == nil {
					ro.Attributes = map[string]string{}
				}
				if _, dup := ro.Attributes[k]; dup {
					return nil, nil, badInput(fmt.Errorf("topologies: --attr %s is given twice", k))
				}
				ro.Attributes[k] = v
			}
			g, pv, err := topologies.LoadWith(o.name, ro)
			if err != nil {
				return nil, nil, badInput(err)
			}
			return g, pv, nil
		}
		return nil, nil, badInput(fmt.Errorf("topologies: unknown topology %q (bundled: %s)", o.name, strings.Join(topologies.Names(), ", ")))
	}
	if fileOnly {
		return nil, nil, badInput(fmt.Errorf("topologies: --keep, --bandwidth-scale, --capacity-unit and --attr apply to topology files, not to the bundled %s", o.name))
	}
	params := make(map[string]float64, len(o.params))
	for _, kv := range o.params {
		k, v, ok := strings.Cut(kv, "=")
		if !ok || k == "" {
			return nil, nil, badInput(fmt.Errorf("topologies: %q is not param=value", kv))
		}
		x, err := strconv.ParseFloat(v, 64)
		if err != nil {
			return nil, nil, badInput(fmt.Errorf("topologies: %s: %q is not a number", k, v))
		}
		if _, dup := params[k]; dup {
			return nil, nil, badInput(fmt.Errorf("topologies: %s is given twice", k))
		}
		params[k] = x
	}
	g, err := topologies.Generate(o.name, params)
	if err != nil {
		// An unknown or out-of-range parameter (*topologies.ParamError).
		return nil, nil, badInput(err)
	}
	return g, nil, nil
}
