//go:build !unix

package sim_test

// cpuSeconds is unknown here: the events/cpu-s metric is left out.
func cpuSeconds() float64 { return 0 }
