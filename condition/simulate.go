package condition

import "math/rand/v2"

// Step draws the next state from a row with the random source rng, by
// inversion of the cumulative distribution in row order. The row must be
// non-empty.
func Step(row []Entry, rng *rand.Rand) int {
	u := rng.Float64()
	for _, e := range row {
		if u < e.P {
			return e.To
		}
		u -= e.P
	}
	return row[len(row)-1].To
}
