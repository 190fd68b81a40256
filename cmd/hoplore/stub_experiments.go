package main

import "github.com/spf13/cobra"

// TEMPORARY scaffold: replaced by the owner's experiments.go.
func newExperimentsCmd(d *deps) *cobra.Command {
	return &cobra.Command{Use: "experiments", Hidden: true}
}
