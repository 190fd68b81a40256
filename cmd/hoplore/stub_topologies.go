package main

import "github.com/spf13/cobra"

// TEMPORARY scaffold: replaced by the owner's topologies.go.
func newTopologiesCmd(d *deps) *cobra.Command {
	return &cobra.Command{Use: "topologies", Hidden: true}
}
