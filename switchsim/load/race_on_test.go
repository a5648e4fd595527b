//go:build race

package load

// raceEnabled: the race detector's shadow memory and instrumentation make
// allocation figures meaningless, so tests that bound allocations skip it.
const raceEnabled = true
