//go:build !race

package condition

const raceEnabled = false
