package main

import "github.com/spf13/cobra"

// TEMPORARY scaffold: replaced by the owner's run.go.
func newRunCmd(d *deps) *cobra.Command {
	return &cobra.Command{Use: "run", Hidden: true}
}
