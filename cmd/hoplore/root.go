package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"runtime/debug"
	"strings"
	"syscall"

	"github.com/spf13/cobra"

	"hoplore/internal/inputerr"
)

// deps is what commands need from the outside world; tests replace it.
type deps struct {
	stdout, stderr io.Writer
	version        string
	ctx            context.Context
}

func defaultDeps() *deps {
	return &deps{stdout: os.Stdout, stderr: os.Stderr, version: toolVersion(), ctx: context.Background()}
}

// toolVersion returns the module version recorded at build time, or "devel".
func toolVersion() string {
	if bi, ok := debug.ReadBuildInfo(); ok && bi.Main.Version != "" && bi.Main.Version != "(devel)" {
		return bi.Main.Version
	}
	return "0.1.0-devel"
}

// badInput marks err as bad input (exit status 2); nil stays nil.
func badInput(err error) error { return inputerr.Wrap(err) }

func newRootCmd(d *deps) *cobra.Command {
	root := &cobra.Command{
		Use:           "hoplore",
		Short:         "Packet-level experiments: do learning routers beat shortest path and central control?",
		Long:          "hoplore simulates networks packet by packet with a routing agent at every node (shortest path,\nQ-routing and its variants, a small neural Q function, central controllers), sweeps offered load\nand failures, and writes Parquet tables, plots and a report. Traffic is packets, flows (mice and\nelephants: completion time, slowdown, reordering) or both; agents decide per packet or per flow\n(pin), and learners optimise what the file asks for (objective: delay, loss, utilisation or a mix).\n`hoplore experiments show demo` prints a commented experiment file to start from; README.md documents\nevery field.",
		Version:       d.version,
		SilenceUsage:  true,
		SilenceErrors: true,
	}
	// hoplore alone prints its help; a word that names no command is bad
	// input, with cobra's suggestions
	root.RunE = func(cmd *cobra.Command, _ []string) error { return cmd.Help() }
	root.SuggestionsMinimumDistance = 2
	root.Args = func(cmd *cobra.Command, args []string) error {
		if len(args) == 0 {
			return nil
		}
		msg := fmt.Sprintf("unknown command %q for %q", args[0], cmd.CommandPath())
		if s := cmd.SuggestionsFor(args[0]); len(s) > 0 {
			msg += "; did you mean " + strings.Join(s, " or ") + "?"
		}
		return inputerr.Errorf("%s", msg)
	}
	root.SetOut(d.stdout)
	root.SetErr(d.stderr)
	// flag errors (unknown flag, bad value, missing value) are bad input
	root.SetFlagErrorFunc(func(_ *cobra.Command, err error) error { return inputerr.Wrap(err) })
	root.AddCommand(
		newRunCmd(d),
		newCheckCmd(d),
		newExperimentsCmd(d),
		newTopologiesCmd(d),
		newMergeCmd(d),
		newSlurmCmd(d),
		newReportCmd(d),
		newCompareCmd(d),
	)
	// the commands cobra adds itself (help, completion) get the same marking
	root.InitDefaultHelpCmd()
	root.InitDefaultCompletionCmd()
	markInputErrors(root)
	return root
}

// markInputErrors marks as bad input, in c and every command below it, the
// errors of the argument validators and of the checks of required and
// grouped flags (cobra returns them unmarked): the validators are wrapped,
// and the flag checks run first in PreRunE, so that cobra's own later
// call finds nothing wrong.
func markInputErrors(c *cobra.Command) {
	if v := c.Args; v != nil {
		c.Args = func(cmd *cobra.Command, args []string) error { return inputerr.Wrap(v(cmd, args)) }
	}
	if c.Runnable() {
		pre, preE := c.PreRun, c.PreRunE
		c.PreRun = nil
		c.PreRunE = func(cmd *cobra.Command, args []string) error {
			if err := cmd.ValidateRequiredFlags(); err != nil {
				return inputerr.Wrap(err)
			}
			if err := cmd.ValidateFlagGroups(); err != nil {
				return inputerr.Wrap(err)
			}
			switch {
			case preE != nil:
				return preE(cmd, args)
			case pre != nil:
				pre(cmd, args)
			}
			return nil
		}
	}
	for _, sub := range c.Commands() {
		markInputErrors(sub)
	}
}

// run executes the command line args and returns the exit status: 0 on
// success, 2 on bad input, 1 on a failure while running.
func run(args []string, d *deps) int {
	ctx, stop := signal.NotifyContext(d.ctx, os.Interrupt, syscall.SIGTERM)
	defer stop()
	d.ctx = ctx
	root := newRootCmd(d)
	root.SetArgs(args)
	err := root.ExecuteContext(ctx)
	if err == nil {
		return 0
	}
	fmt.Fprintln(d.stderr, "hoplore:", err)
	if errors.Is(err, inputerr.ErrBadInput) {
		return 2
	}
	return 1
}
