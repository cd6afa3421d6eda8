package system

import (
	"context"
	"fixpoint/optimize"
	"fixpoint/optimize/internal/mdptest"
	"fmt"
	"math/rand/v2"
	"slices"
	"testing"
)

// BenchmarkSolveSystem times a certified joint solve (gap at most 1e-6 of
// the largest value) of machines of K components with n states and m
// actions each (invented random components, half-year periods at 5% a
// year), warm-started from the separate components' values, on all cores.
func BenchmarkSolveSystem(b *testing.B) {
	for _, size := range []struct{ k, n, m int }{{3, 5, 3}, {6, 5, 3}, {8, 4, 2}} {
		rng := rand.New(rand.NewPCG(uint64(size.k), uint64(size.n)))
		sys := randomMachine(rng, size.k, size.n, size.m, 3000, 20000)
		sys.Discount = mdptest.Rate(0.05, 0.5)
		name := fmt.Sprintf("%dx%dx%d", size.k, size.n, size.m)
		b.Run(name, func(b *testing.B) {
			b.ReportAllocs()
			states, actions := sys.Size()
			var sweeps int
			for b.Loop() {
				sep, err := sys.Separate(context.Background())
				if err != nil {
					b.Fatal(err)
				}
				start, err := sys.SeparateStart(context.Background(), sep)
				if err != nil {
					b.Fatal(err)
				}
				tol := 1e-6 * slices.Max(start)
				r, err := Solve(context.Background(), sys, &Settings{Tol: tol, Start: start})
				if err != nil {
					b.Fatal(err)
				}
				if r.Status != optimize.Certified {
					b.Fatalf("not certified: gap %g > %g", r.Gap, tol)
				}
				sweeps = r.Sweeps
			}
			b.ReportMetric(states, "states")
			b.ReportMetric(actions, "joint-actions")
			b.ReportMetric(float64(sweeps), "sweeps")
			msPerSweep := float64(b.Elapsed().Nanoseconds()) / float64(b.N) / float64(sweeps) / 1e6
			b.ReportMetric(msPerSweep, "ms/sweep")
			b.ReportMetric(sweepBytes(sys)/msPerSweep/1e6, "GB/s")
		})
	}
}

// sweepBytes estimates the memory traffic of one structured sweep: each
// node of the action tree reads its input (about twice, for rows of two
// entries) and writes its output, and reads and writes a cost vector; each
// leaf reads two vectors.
func sweepBytes(sys *Machine) float64 {
	n, acts := sys.Size()
	nodes, prefix := 0.0, 1.0
	for _, c := range sys.Components {
		prefix *= float64(len(c.Model.Actions))
		nodes += prefix
	}
	return n * 8 * (5*nodes + 2*acts)
}

// BenchmarkMemoryBandwidth copies 128 MiB, for comparing the sweep's
// traffic with what the machine's memory delivers.
func BenchmarkMemoryBandwidth(b *testing.B) {
	src := make([]float64, 16<<20)
	dst := make([]float64, len(src))
	for i := range src {
		src[i] = float64(i)
	}
	b.SetBytes(int64(2 * 8 * len(src)))
	for b.Loop() {
		copy(dst, src)
	}
}
