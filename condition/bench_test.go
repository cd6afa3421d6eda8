package condition

import (
	"context"
	"math/rand/v2"
	"testing"
)

// q6 is an invented 6-state deterioration generator per year.
var q6 = [][]float64{
	{-0.30, 0.25, 0.05, 0, 0, 0},
	{0, -0.35, 0.28, 0.07, 0, 0},
	{0, 0, -0.45, 0.35, 0.10, 0},
	{0, 0, 0, -0.60, 0.45, 0.15},
	{0, 0, 0, 0, -0.90, 0.90},
	{0, 0, 0, 0, 0, 0},
}

// BenchmarkEstimate times a fit of 100,000 records of 10,000 units (ten
// inspections each, irregular intervals of 6 to 18 months, 6 states)
// with a 200-replicate bootstrap on two workers, and the same data by the
// counting method.
func BenchmarkEstimate(b *testing.B) {
	rng := rand.New(rand.NewPCG(7, 7))
	p := simulatePanel(rng, q6, 10000, 10, func() int { return 183 + rng.IntN(365) })
	for _, tc := range []struct {
		name   string
		method FitMethod
	}{{"generator", Generator}, {"counting", Counting}} {
		b.Run(tc.name, func(b *testing.B) {
			o := FitOptions{States: 6, PeriodYears: 1, Actions: []string{"leave"}, Method: tc.method,
				Structure: DeteriorationOnly, Bootstrap: 200, Seed: 1, Workers: 2}
			for b.Loop() {
				if _, err := Estimate(context.Background(), p, o); err != nil && tc.method == Generator {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(len(p.Transitions)+len(p.Units)), "records")
		})
	}
}
