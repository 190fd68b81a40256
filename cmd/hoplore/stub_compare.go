package main

import "github.com/spf13/cobra"

// TEMPORARY scaffold: replaced by the owner's compare.go.
func newCompareCmd(d *deps) *cobra.Command {
	return &cobra.Command{Use: "compare", Hidden: true}
}
