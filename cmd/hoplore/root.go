package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"runtime/debug"
	"syscall"

	"github.com/spf13/cobra"

	"hoplore/internal/yamlx"
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

// inputError marks an error caused by bad input (exit status 2).
type inputError struct{ err error }

func (e *inputError) Error() string { return e.err.Error() }
func (e *inputError) Unwrap() error { return e.err }

// badInput wraps err as bad input.
func badInput(err error) error {
	if err == nil {
		return nil
	}
	return &inputError{err}
}

// isInput reports whether err was caused by bad input: a file position
// error, or anything marked with badInput or an InputError method.
func isInput(err error) bool {
	var ie *inputError
	var ye *yamlx.Error
	var marked interface{ InputError() bool }
	return errors.As(err, &ie) || errors.As(err, &ye) || (errors.As(err, &marked) && marked.InputError())
}

func newRootCmd(d *deps) *cobra.Command {
	root := &cobra.Command{
		Use:           "hoplore",
		Short:         "Packet-level experiments: do learning routers beat shortest path and central control?",
		Long:          "hoplore simulates networks packet by packet with a routing agent at every node (shortest path,\nQ-routing and its variants, a small neural Q function, central controllers), sweeps offered load\nand failures, and writes Parquet tables, plots and a report.",
		Version:       d.version,
		SilenceUsage:  true,
		SilenceErrors: true,
	}
	root.SetOut(d.stdout)
	root.SetErr(d.stderr)
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
	return root
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
	if isInput(err) || isUsage(err) {
		return 2
	}
	return 1
}

// isUsage reports errors cobra raises for bad flags or arguments.
func isUsage(err error) bool {
	var ue interface{ UsageError() bool }
	if errors.As(err, &ue) {
		return ue.UsageError()
	}
	s := err.Error()
	for _, p := range []string{"unknown command", "unknown flag", "unknown shorthand flag", "accepts ", "requires at least", "invalid argument", "flag needs an argument", "required flag"} {
		if len(s) >= len(p) && containsWord(s, p) {
			return true
		}
	}
	return false
}

func containsWord(s, sub string) bool {
	for i := 0; i+len(sub) <= len(s); i++ {
		if s[i:i+len(sub)] == sub {
			return true
		}
	}
	return false
}
