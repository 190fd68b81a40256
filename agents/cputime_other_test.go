//go:build !unix

package agents_test

// processorSeconds is unknown here: the events/cpu-s metric is left out.
func processorSeconds() float64 { return 0 }
