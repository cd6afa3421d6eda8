package main

import (
	"bytes"
	"context"
	"io"
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

// BenchmarkProgressBar times a fleet Monte-Carlo with the progress bar
// drawn (to a discarded stream) and without it: the bar redraws at most
// ten times a second, so the two differ by well under 5%.
func BenchmarkProgressBar(b *testing.B) {
	for _, mode := range []string{"never", "always"} {
		b.Run(mode, func(b *testing.B) {
			args := []string{"forecast", demoFleet, "--simulate", "20000", "--progress", mode, "--format", "json"}
			for b.Loop() {
				if code := run(args, bytes.NewReader(nil), io.Discard, io.Discard); code != 0 {
					b.Fatalf("exit %d", code)
				}
			}
		})
	}
}
