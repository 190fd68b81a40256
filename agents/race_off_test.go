//go:build !race

package agents_test

// raceEnabled reports a -race build, whose instrumentation makes timings
// meaningless.
const raceEnabled = false
