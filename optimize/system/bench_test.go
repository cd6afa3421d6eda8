package system

import (
	"context"
	"fmt"
	"math/rand/v2"
	"runtime"
	"slices"
	"testing"

	"fixpoint/condition"
	"fixpoint/costs"
	"fixpoint/optimize"
	"fixpoint/optimize/internal/mdptest"
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
				start := separate(b, sys).start
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

// stairMachine is an invented machine of k identical components with n
// condition states (the last unsafe, running cost 10(x+1)^2) and m
// actions: leave (passive: stay 0.7, one state worse 0.3) and a = 1..m-1
// at cost 100a, moving a states better with probability 0.9; shutdown 500,
// down 1000, 5% a year over one-year periods. It has the shape of the
// system files of the size-guard study.
func stairMachine(k, n, m int) *Machine {
	sys := &Machine{Shutdown: 500, Down: 1000, DownOnUnsafe: true, Discount: mdptest.Rate(0.05, 1)}
	for c := range k {
		model := &condition.Model{PeriodYears: 1}
		sched := &costs.Schedule{Running: make([]float64, n), Action: make([][]float64, m)}
		for x := range n {
			model.States = append(model.States, condition.State{Name: fmt.Sprint("s", x), Unsafe: x == n-1})
			sched.Running[x] = 10 * float64((x+1)*(x+1))
		}
		for a := range m {
			act := condition.Action{Name: fmt.Sprint("a", a), Passive: a == 0, Rows: make([][]condition.Entry, n)}
			sched.Action[a] = make([]float64, n)
			for x := range n {
				switch to := max(0, x-a); {
				case a == 0 && x == n-1:
				case a == 0:
					act.Rows[x] = []condition.Entry{{To: x, P: 0.7}, {To: x + 1, P: 0.3}}
				case to == x:
					act.Rows[x] = []condition.Entry{{To: x, P: 1}}
				default:
					act.Rows[x] = []condition.Entry{{To: to, P: 0.9}, {To: x, P: 0.1}}
				}
				sched.Action[a][x] = 100 * float64(a)
			}
			model.Actions = append(model.Actions, act)
		}
		sys.Components = append(sys.Components, Component{Name: fmt.Sprint("c", c), Model: model, Costs: sched})
	}
	return sys
}

// BenchmarkSweep times single sweeps of stair machines from cache-sized to
// memory-sized joint models, on one worker and on all, and reports the
// throughput in Estimate's element operations: the figures behind
// SweepOpsPerSecond and ParallelEfficiency.
func BenchmarkSweep(b *testing.B) {
	for _, size := range []struct{ k, n, m int }{{4, 8, 2}, {6, 6, 2}, {5, 12, 2}, {8, 5, 2}, {10, 4, 2}, {6, 12, 2}} {
		sys := stairMachine(size.k, size.n, size.m)
		for _, workers := range []int{1, runtime.GOMAXPROCS(0)} {
			b.Run(fmt.Sprintf("%dx%dx%d/workers=%d", size.k, size.n, size.m, workers), func(b *testing.B) {
				est, err := sys.Estimate(&Settings{Workers: workers})
				if err != nil {
					b.Fatal(err)
				}
				j, err := newJoint(context.Background(), sys)
				if err != nil {
					b.Fatal(err)
				}
				states := make([]*sweepState, est.Workers)
				for w := range states {
					states[w] = j.newSweepState()
				}
				v := make([]float64, j.n)
				b.ResetTimer()
				for b.Loop() {
					if err := j.sweep(context.Background(), v, states); err != nil {
						b.Fatal(err)
					}
				}
				sec := b.Elapsed().Seconds() / float64(b.N)
				b.ReportMetric(est.States, "states")
				b.ReportMetric(est.OpsPerSweep/sec/1e6, "Mops/s")
				b.ReportMetric(est.OpsPerSweep/SweepOpsPerSecond/(1+float64(est.Workers-1)*ParallelEfficiency)/sec, "estimate/actual")
			})
		}
	}
}
