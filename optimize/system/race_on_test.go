//go:build race

package system

// raceEnabled: the race detector's shadow bookkeeping adds allocations of
// its own to every goroutine the solve starts.
const raceEnabled = true
