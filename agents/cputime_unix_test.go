//go:build unix

package agents_test

import "syscall"

// processorSeconds returns the processor time (user and system) this
// process has used so far, in seconds: unlike wall time it does not count
// the time the process waits for a processor on a shared machine.
func processorSeconds() float64 {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return float64(ru.Utime.Nano()+ru.Stime.Nano()) * 1e-9
}
