//go:build unix

package experiments

import "syscall"

// cpuSeconds returns the processor time (user and system) this process has
// used so far, in seconds: unlike wall time it does not count the time the
// process waits for a processor on a shared machine.
func cpuSeconds() float64 {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return float64(ru.Utime.Sec+ru.Stime.Sec) + float64(ru.Utime.Usec+ru.Stime.Usec)/1e6
}
