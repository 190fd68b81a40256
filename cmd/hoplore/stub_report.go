package main

import "github.com/spf13/cobra"

// TEMPORARY scaffold: replaced by the owner's report.go.
func newReportCmd(d *deps) *cobra.Command {
	return &cobra.Command{Use: "report", Hidden: true}
}
