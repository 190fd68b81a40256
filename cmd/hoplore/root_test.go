package main

import (
	"strings"
	"testing"
)

// Exit statuses of the command line (README, Commands): 2 for every
// mistake in the command line itself — unknown command or flag, bad flag
// value, wrong number of arguments, missing required flag — classified by
// error type, never by message text; 0 for help.
func TestExitStatusOfUsageErrors(t *testing.T) {
	tests := []struct {
		args []string
		code int
		msg  string // in stderr
	}{
		{[]string{"bogus"}, 2, `unknown command "bogus"`},
		{[]string{"rnu"}, 2, "did you mean run?"},
		{[]string{"run", "--nope"}, 2, "unknown flag: --nope"},
		{[]string{"run", "--workers", "x"}, 2, `invalid argument "x" for "--workers"`},
		{[]string{"run", "--workers"}, 2, "flag needs an argument"},
		{[]string{"check"}, 2, "accepts 1 arg(s), received 0"},
		{[]string{"check", "a.yaml", "b.yaml"}, 2, "accepts 1 arg(s), received 2"},
		{[]string{"merge", "out"}, 2, "requires at least 2 arg(s)"},
		{[]string{"compare", "results/x"}, 2, `required flag(s) "a", "b" not set`},
		{[]string{"slurm", "x.yaml"}, 2, `required flag(s) "tasks" not set`},
		{[]string{"experiments", "show"}, 2, "accepts 1 arg(s), received 0"},
		{[]string{"experiments", "extra"}, 2, `unknown command "extra"`},
		{[]string{}, 0, ""},
		{[]string{"run", "--help"}, 0, ""},
	}
	for _, tc := range tests {
		t.Run(strings.Join(tc.args, " "), func(t *testing.T) {
			d, _, errb := testDeps()
			if code := run(tc.args, d); code != tc.code {
				t.Errorf("exit status %d, want %d; stderr %q", code, tc.code, errb.String())
			}
			if !strings.Contains(errb.String(), tc.msg) {
				t.Errorf("stderr %q, want it to contain %q", errb.String(), tc.msg)
			}
		})
	}
}
