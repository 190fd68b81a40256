package main

import "github.com/spf13/cobra"

// TEMPORARY scaffold: replaced by the owner's check.go.
func newCheckCmd(d *deps) *cobra.Command {
	return &cobra.Command{Use: "check", Hidden: true}
}
