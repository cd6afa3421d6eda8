package main

import (
	"context"
	"testing"

	"fixpoint/optimize"
)

// BenchmarkSolveDemo times reading, validating, building and solving the
// demo config, by method.
func BenchmarkSolveDemo(b *testing.B) {
	for _, m := range []optimize.Method{optimize.Auto, optimize.ValueIteration, optimize.PolicyIteration, optimize.LinearProgram} {
		b.Run(m.String(), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				c := readClass(b, demo)
				g, _ := c.DiscountFactor()
				p, err := optimize.Build(c.Model, c.Costs, g)
				if err != nil {
					b.Fatal(err)
				}
				if _, err := optimize.Solve(context.Background(), p, &optimize.Settings{Method: m}); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
