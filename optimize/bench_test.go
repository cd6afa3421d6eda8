package optimize

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"slices"
	"strconv"
	"testing"

	"fixpoint/condition"
)

// BenchmarkSolve times a certified solve (tolerance 1e-6) by size, model
// shape and method: "random" models (seeded) have 4 actions and rows of up
// to 20 non-zero entries, and mix fast; "banded" models are long
// deterioration scales that mix slowly, the hard case for value iteration.
func BenchmarkSolve(b *testing.B) {
	type fixture struct {
		name string
		p    *Problem
	}
	var fixtures []fixture
	for _, size := range []int{5, 50, 200} {
		fixtures = append(fixtures,
			fixture{"random-" + strconv.Itoa(size), randomProblem(rand.New(rand.NewPCG(uint64(size), 1)), size, 4, min(size, 20), 0.96, 1000)},
			fixture{"banded-" + strconv.Itoa(size), bandedProblem(size, 0.96)})
	}
	for _, f := range fixtures {
		p := f.p
		for _, m := range methods {
			b.Run(f.name+"/"+m.String(), func(b *testing.B) {
				b.ReportAllocs()
				var iters int
				for b.Loop() {
					r, err := Solve(context.Background(), p, &Settings{Method: m, Tol: 1e-6})
					if err != nil {
						b.Fatal(err)
					}
					iters = r.Iterations
				}
				b.ReportMetric(float64(iters), "iterations/op")
			})
		}
	}
}

// bandedProblem is a deterioration scale of n states: left alone a unit
// stays or slips one or two states (running cost rising with the state);
// a repair moves it back a quarter of the scale, a replacement to the top.
func bandedProblem(n int, gamma float64) *Problem {
	p := &Problem{Discount: gamma, Actions: []string{"leave", "repair", "replace"}, Choices: make([][]Choice, n)}
	for s := range n {
		p.States = append(p.States, "s"+strconv.Itoa(s))
		run := 10 * float64(s*s) / float64(n)
		if s < n-1 {
			next := []condition.Entry{{To: s, P: 0.7}, {To: min(s+1, n-1), P: 0.2}, {To: min(s+2, n-1), P: 0.1}}
			if s == n-2 {
				next = []condition.Entry{{To: s, P: 0.7}, {To: n - 1, P: 0.3}}
			}
			p.Choices[s] = append(p.Choices[s], Choice{Action: 0, Cost: run, Next: next})
		}
		if s > 0 {
			p.Choices[s] = append(p.Choices[s], Choice{Action: 1, Cost: run + 50 + float64(s), Next: []condition.Entry{{To: s - (s+3)/4, P: 1}}})
		}
		p.Choices[s] = append(p.Choices[s], Choice{Action: 2, Cost: run + 40*float64(n), Next: []condition.Entry{{To: 0, P: 1}}})
	}
	return p
}

// BenchmarkDiscountPath times the search for every switch point between
// rates 0% and 12% a year (γ from 1/1.12 to 1) on banded deterioration
// models.
func BenchmarkDiscountPath(b *testing.B) {
	for _, n := range []int{10, 50} {
		p := bandedProblem(n, 0.9)
		b.Run(strconv.Itoa(n), func(b *testing.B) {
			b.ReportAllocs()
			var switches int
			for b.Loop() {
				_, sw, err := DiscountPath(context.Background(), p, 1/1.12, 1, nil)
				if err != nil {
					b.Fatal(err)
				}
				switches = len(sw)
			}
			b.ReportMetric(float64(switches), "switches")
		})
	}
}

// BenchmarkSolveSystem times a certified joint solve (gap at most 1e-6 of
// the largest value) of machines of K components with n states and m
// actions each (invented random components, half-year periods at 5% a
// year), warm-started from the separate components' values, on all cores.
func BenchmarkSolveSystem(b *testing.B) {
	for _, size := range []struct{ k, n, m int }{{3, 5, 3}, {6, 5, 3}, {8, 4, 2}} {
		rng := rand.New(rand.NewPCG(uint64(size.k), uint64(size.n)))
		sys := randomSystem(rng, size.k, size.n, size.m, 3000, 20000)
		sys.Discount = math.Pow(1.05, -0.5)
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
				start := sys.SeparateStart(sep)
				tol := 1e-6 * slices.Max(start)
				r, err := SolveSystem(context.Background(), sys, &SystemSettings{Tol: tol, Start: start})
				if err != nil {
					b.Fatal(err)
				}
				if r.Status != Certified {
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
func sweepBytes(sys *System) float64 {
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

// benchFleet is 20 invented classes of 6 states and 4 actions with 2,500
// units each (50,000 in all), over 20 years, with a budget of 60% of what
// the unconstrained advice spends in an average year.
func benchFleet() *Fleet {
	rng := rand.New(rand.NewPCG(2026, 5))
	f := &Fleet{Discount: 1 / 1.04}
	for i := range 20 {
		c := randomComponent(rng, fmt.Sprintf("class%02d", i), 6, 4)
		// 2,500 units, spread over the five safe conditions with a few
		// failed ones.
		counts := make([]float64, 6)
		counts[5] = float64(rng.IntN(20))
		left := 2500 - int(counts[5])
		for s := range 4 {
			counts[s] = float64(rng.IntN(left/2 + 1))
			left -= int(counts[s])
		}
		counts[4] = float64(left)
		f.Classes = append(f.Classes, FleetClass{Name: c.Name, Model: c.Model, Costs: c.Costs, Counts: counts})
	}
	// The unconstrained advice's mean action spend per year over the
	// horizon, from an expected-count forecast.
	free := 0.0
	for _, fc := range f.Classes {
		p, _ := Build(fc.Model, fc.Costs, f.Discount)
		r, _ := Solve(context.Background(), p, nil)
		fc2, _ := NewForecast(fc.Model, fc.Costs, f.Discount, r.Policy, fc.Counts, 20)
		for _, per := range fc2.Periods {
			for _, x := range per.ActionSpend {
				free += x / 20
			}
		}
	}
	for range 20 {
		f.Budget = append(f.Budget, 0.6*free)
	}
	return f
}

// BenchmarkPlanFleet times a plan of the bench fleet to a gap of 0.5%.
func BenchmarkPlanFleet(b *testing.B) {
	f := benchFleet()
	b.ReportAllocs()
	var plan *Plan
	for b.Loop() {
		var err error
		if plan, err = PlanFleet(context.Background(), f, &PlanSettings{Gap: 0.005}); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(100*plan.Gap, "gap%")
	b.ReportMetric(float64(plan.Iterations), "rounds")
}

// BenchmarkSimulatePlan times 1,000 Monte-Carlo runs of the bench fleet's
// plan on all cores.
func BenchmarkSimulatePlan(b *testing.B) {
	f := benchFleet()
	plan, err := PlanFleet(context.Background(), f, &PlanSettings{Gap: 0.005})
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	for b.Loop() {
		if _, err := SimulatePlan(context.Background(), f, plan, false, 1000, 7, runtime.GOMAXPROCS(0), nil); err != nil {
			b.Fatal(err)
		}
	}
}
