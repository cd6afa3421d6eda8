package robust

import (
	"context"
	"math/rand/v2"
	"testing"

	"fixpoint/optimize"
)

// benchFixtures are the demo pumps model (configs/pumps.yaml, invented
// data) and two 200-state models from a fixed seed: "random" (4 actions,
// rows of up to 20 entries, fast mixing) and "banded" (a long
// deterioration scale, slow mixing), the shapes of optimize's
// BenchmarkSolve.
func benchFixtures(b *testing.B) []fixture {
	return []fixture{
		{"pumps", pumps(b)},
		{"random-200", randomProblem(rand.New(rand.NewPCG(200, 1)), 200, 4, 20, 0.96, 1000)},
		{"banded-200", bandedProblem(200, 0.96)},
	}
}

// BenchmarkSolve times a certified solve (tolerance 1e-6) of each fixture:
// nominal (optimize.Solve, its default method) against robust with L1 sets
// of radius 0.1 (and KL sets of radius 0.01, for reference) by method.
// The ratio robust/nominal is the figure of the target (<= ~3).
func BenchmarkSolve(b *testing.B) {
	ctx := context.Background()
	for _, f := range benchFixtures(b) {
		p := f.p
		b.Run(f.name+"/nominal", func(b *testing.B) {
			b.ReportAllocs()
			var iters int
			for b.Loop() {
				r, err := optimize.Solve(ctx, p, &optimize.Settings{Tol: 1e-6})
				if err != nil || r.Status != optimize.Certified {
					b.Fatal(err, r.Status)
				}
				iters = r.Iterations
			}
			b.ReportMetric(float64(iters), "iterations/op")
		})
		for _, kind := range []Kind{L1, KL} {
			sets := mustUniform(b, p, kind, map[Kind]float64{L1: 0.1, KL: 0.01}[kind])
			for _, m := range robustMethods {
				b.Run(f.name+"/"+kind.String()+"-"+m.String(), func(b *testing.B) {
					b.ReportAllocs()
					var r *Result
					for b.Loop() {
						var err error
						if r, err = Solve(ctx, p, sets, &optimize.Settings{Method: m, Tol: 1e-6}); err != nil || r.Status != optimize.Certified {
							b.Fatal(err, r.Status)
						}
					}
					b.ReportMetric(float64(r.Iterations), "iterations/op")
					b.ReportMetric(float64(r.Evaluations), "evaluations/op")
				})
			}
		}
	}
}

// BenchmarkAnalyze times the full analysis (nominal and robust solves, the
// nominal advice's worst case, and Settle: one warm-started robust solve
// per row) with L1 sets of radius 0.1.
func BenchmarkAnalyze(b *testing.B) {
	for _, f := range benchFixtures(b) {
		sets := mustUniform(b, f.p, L1, 0.1)
		b.Run(f.name, func(b *testing.B) {
			b.ReportAllocs()
			var a *Analysis
			for b.Loop() {
				var err error
				if a, err = Analyze(context.Background(), f.p, sets, &optimize.Settings{Tol: 1e-6}); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(len(a.Settle)), "rows")
		})
	}
}
