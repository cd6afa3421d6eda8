//go:build race

package condition

// raceEnabled is true under the race detector, which slows the
// arithmetic-heavy studies tenfold; they then run in a reduced form (the
// full form runs in the plain test run).
const raceEnabled = true
