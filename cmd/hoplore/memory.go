package main

import (
	"fmt"
	"math"
	"strings"

	"hoplore/experiments"
	"hoplore/internal/memguard"
)

// memoryBudget is what a sweep may use: its limit, where it comes from, and
// the estimate it was compared with.
type memoryBudget struct {
	limit  float64 // bytes; +Inf when unknown or not checked
	source string
	est    experiments.MemoryEstimate
}

// memoryFlagHelp documents --memory-limit for check and run.
const memoryFlagHelp = "memory the sweep may use, e.g. 8GB or 16GiB (default: what the machine or cgroup has available); none: do not check"

// checkMemory compares the peak-memory estimate of running e with workers
// with the memory this process may use (--memory-limit, else the cgroup
// limit or MemAvailable) and refuses, as bad input, an experiment whose
// estimate exceeds it, naming the setting that drives most of the estimate.
func checkMemory(command string, e *experiments.Experiment, workers int, flag string) (memoryBudget, error) {
	b := memoryBudget{limit: math.Inf(1), est: e.EstimateMemory(workers)}
	switch f := strings.TrimSpace(flag); {
	case strings.EqualFold(f, "none"):
		return b, nil
	case f != "":
		v, err := memguard.ParseSize(f)
		if err != nil {
			return b, badInput(fmt.Errorf("%s: --memory-limit: %w", command, err))
		}
		b.limit, b.source = v, "--memory-limit"
	default:
		v, src, ok := memguard.Available()
		if !ok {
			return b, nil
		}
		b.limit, b.source = v, src
	}
	if b.est.Total <= b.limit {
		return b, nil
	}
	top := b.est.Largest()
	return b, badInput(fmt.Errorf("%s: %s: estimated peak memory %s with %s exceeds the %s this process may use (%s); "+
		"most of it, %s, is driven by %s: change that setting or use fewer --workers, or set --memory-limit if the estimate is too cautious",
		command, e.Path, memguard.Format(b.est.Total), checkPlural(workers, "worker"), memguard.Format(b.limit), b.source,
		memguard.Format(top.Bytes), top.Setting))
}
