package main

import (
	"context"
	"testing"

	"fixpoint/cmd/internal/modelfile"
	"fixpoint/optimize"
)

// BenchmarkSolveDemo times reading, validating, building and solving the
// demo config, by method.
func BenchmarkSolveDemo(b *testing.B) {
	for _, m := range []optimize.Method{optimize.Auto, optimize.ValueIteration, optimize.PolicyIteration, optimize.LinearProgram} {
		b.Run(m.String(), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				f, err := modelfile.Load(context.Background(), demo, modelfile.Options{})
				if err != nil {
					b.Fatal(err)
				}
				c := f.Class
				p, err := optimize.Build(c.Model, c.Costs, c.Discount.Factor())
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
