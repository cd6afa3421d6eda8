package optimize

import (
	"context"
	"math/rand/v2"
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
				var iters, pivots int
				for b.Loop() {
					r, err := Solve(context.Background(), p, &Settings{Method: m, Tol: 1e-6})
					if err != nil {
						b.Fatal(err)
					}
					iters, pivots = r.Iterations, r.Pivots
				}
				b.ReportMetric(float64(iters), "iterations/op")
				if m == LinearProgram {
					b.ReportMetric(float64(pivots), "pivots/op")
				}
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
