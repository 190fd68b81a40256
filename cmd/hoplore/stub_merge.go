package main

import "github.com/spf13/cobra"

// TEMPORARY scaffold: replaced by the owner's merge.go.
func newMergeCmd(d *deps) *cobra.Command {
	return &cobra.Command{Use: "merge", Hidden: true}
}
