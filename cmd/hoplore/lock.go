package main

import (
	"fmt"
	"os"
	"strings"

	"hoplore/results"
)

// lockOut takes the exclusive lock of result folder dir for the command
// that writes it, creating the folder when create is set; the caller defers
// Unlock. A folder in use by another process is refused (exit status 2)
// naming the holder; so is a missing folder when create is not set.
func lockOut(dir, command string, create bool) (*results.Lock, error) {
	if create {
		if err := os.MkdirAll(dir, 0o755); err != nil {
			return nil, fmt.Errorf("%s: %w", command, err)
		}
	} else if st, err := os.Stat(dir); err != nil || !st.IsDir() {
		return nil, badInput(fmt.Errorf("%s: %s is not a result folder (no such folder)", command, dir))
	}
	what := "hoplore " + command
	if len(os.Args) > 1 {
		what = "hoplore " + strings.Join(os.Args[1:], " ")
		if len(what) > 200 {
			what = what[:200] + "…"
		}
	}
	l, err := results.LockDir(dir, what)
	if err != nil {
		return nil, badInput(fmt.Errorf("%s: %w", command, err))
	}
	return l, nil
}
