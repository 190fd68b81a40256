package main

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"text/tabwriter"

	"github.com/spf13/cobra"

	"hoplore/experiments"
	"hoplore/internal/atomicfile"
)

func newExperimentsCmd(d *deps) *cobra.Command {
	cmd := &cobra.Command{
		Use:   "experiments",
		Short: "List the bundled experiments",
		Long: "experiments lists the experiments bundled with hoplore; `hoplore run NAME` runs one and\n" +
			"`hoplore experiments show NAME` prints its YAML to start your own from.",
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, args []string) error {
			return listExperiments(d.stdout)
		},
	}
	cmd.AddCommand(newExperimentsShowCmd(d))
	return cmd
}

type showExperimentOptions struct {
	name string
	out  string // directory to write the experiment and its topology files into
}

func newExperimentsShowCmd(d *deps) *cobra.Command {
	o := &showExperimentOptions{}
	cmd := &cobra.Command{
		Use:   "show NAME",
		Short: "Print a bundled experiment's YAML",
		Long: "show prints a bundled experiment's YAML. Some reference topology files beside them; --out DIR\n" +
			"writes the experiment and those files into DIR, ready to edit and run.",
		Example: "  hoplore experiments show demo > my-sweep.yaml\n  hoplore experiments show load-sweep --out mine/",
		Args:    cobra.ExactArgs(1),
		ValidArgsFunction: func(_ *cobra.Command, args []string, _ string) ([]string, cobra.ShellCompDirective) {
			if len(args) > 0 {
				return nil, cobra.ShellCompDirectiveNoFileComp
			}
			return experiments.Bundled(), cobra.ShellCompDirectiveNoFileComp
		},
		RunE: func(cmd *cobra.Command, args []string) error {
			o.name = args[0]
			return showExperiment(d.stdout, d.stderr, o)
		},
	}
	cmd.Flags().StringVar(&o.out, "out", "", "write NAME.yaml and the topology files it uses into this directory")
	return cmd
}

// listExperiments writes one line per bundled experiment: name, runs and
// description.
func listExperiments(w io.Writer) error {
	var b bytes.Buffer
	tw := tabwriter.NewWriter(&b, 0, 4, 2, ' ', 0)
	fmt.Fprintln(tw, "NAME\tRUNS\tDESCRIPTION")
	for _, name := range experiments.Bundled() {
		e, err := experiments.LoadBundled(name)
		if err != nil {
			return fmt.Errorf("experiments: bundled %s does not parse: %w", name, err)
		}
		fmt.Fprintf(tw, "%s\t%d\t%s\n", name, len(e.Runs()), e.Description)
	}
	tw.Flush()
	_, err := w.Write(b.Bytes())
	return err
}

// showExperiment prints a bundled experiment's YAML, or writes its files
// into o.out.
func showExperiment(stdout, stderr io.Writer, o *showExperimentOptions) error {
	files, err := experiments.BundledFiles(o.name)
	if err != nil {
		return badInput(err)
	}
	if o.out == "" {
		if _, err := stdout.Write(files[0].Data); err != nil {
			return err
		}
		if len(files) > 1 {
			fmt.Fprintf(stderr, "note: %s also uses", o.name)
			for _, f := range files[1:] {
				fmt.Fprintf(stderr, " %s", f.Name)
			}
			fmt.Fprintln(stderr, "; --out DIR writes them too")
		}
		return nil
	}
	// Refuse before writing anything if a file would be overwritten.
	for _, f := range files {
		p := filepath.Join(o.out, filepath.FromSlash(f.Name))
		if _, err := os.Stat(p); err == nil {
			return badInput(fmt.Errorf("experiments: %s exists; not overwriting it", p))
		} else if !errors.Is(err, fs.ErrNotExist) {
			return err
		}
	}
	for _, f := range files {
		p := filepath.Join(o.out, filepath.FromSlash(f.Name))
		if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
			return err
		}
		if err := atomicfile.WriteBytes(p, f.Data, 0o644); err != nil {
			return fmt.Errorf("experiments: %w", err)
		}
		fmt.Fprintln(stdout, p)
	}
	return nil
}
