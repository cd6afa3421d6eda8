package main

import (
	"bytes"
	"context"
	"io"
	"path/filepath"
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

// BenchmarkBrief writes the briefs end to end (load, solve or plan,
// layout, PDF): a fleet, the twenty-class fleet with ten rates, a class
// with an inspection block and a robust class brief.
func BenchmarkBrief(b *testing.B) {
	out := filepath.Join(b.TempDir(), "b.pdf")
	for _, tc := range []struct {
		name string
		args []string
	}{
		{"fleet", []string{demoFleet}},
		{"fleet20-rates10", []string{hostileFleet, "--rates", "1%:10%:1%"}},
		{"inspection", []string{"../../configs/relief-valves.yaml"}},
		{"robust", []string{demo, "--robust-radius", "0.1"}},
	} {
		b.Run(tc.name, func(b *testing.B) {
			args := append([]string{"brief", tc.args[0], "-o", out, "--force", "--date", "2026-12-01"}, tc.args[1:]...)
			b.ReportAllocs()
			for b.Loop() {
				if code := run(args, bytes.NewReader(nil), io.Discard, io.Discard); code != 0 {
					b.Fatalf("exit %d", code)
				}
			}
		})
	}
}
