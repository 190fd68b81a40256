package main

import "github.com/spf13/cobra"

// TEMPORARY scaffold: replaced by the owner's slurm.go.
func newSlurmCmd(d *deps) *cobra.Command {
	return &cobra.Command{Use: "slurm", Hidden: true}
}
