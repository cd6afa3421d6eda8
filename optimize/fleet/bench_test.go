package fleet

import (
	"context"
	"fmt"
	"math/rand/v2"
	"runtime"
	"testing"

	"fixpoint/optimize"
	"fixpoint/optimize/internal/mdptest"
)

// benchFleet is 20 invented classes of 6 states and 4 actions with 2,500
// units each (50,000 in all), over 20 years of one-year periods, with a
// budget of 60% of what the unconstrained advice spends in an average
// year.
func benchFleet() *Problem {
	rng := rand.New(rand.NewPCG(2026, 5))
	f := &Problem{Discount: mdptest.Factor(1/1.04, 1)}
	for i := range 20 {
		model, sched := mdptest.RandomClass(rng, 6, 4)
		model.PeriodYears = 1
		name := fmt.Sprintf("class%02d", i)
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
		f.Classes = append(f.Classes, Class{Name: name, Model: model, Costs: sched, Counts: counts})
	}
	// The unconstrained advice's mean action spend per year over the
	// horizon, from an expected-count forecast.
	free := 0.0
	for _, fc := range f.Classes {
		p, _ := optimize.Build(fc.Model, fc.Costs, f.Discount.Factor())
		r, _ := optimize.Solve(context.Background(), p, nil)
		fc2, _ := optimize.NewForecast(fc.Model, fc.Costs, f.Discount.Factor(), r.Policy, fc.Counts, 20)
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

// BenchmarkPlanFleet times a plan of the bench fleet to a gap of 0.5%,
// the excess programs included.
func BenchmarkPlanFleet(b *testing.B) {
	f := benchFleet()
	b.ReportAllocs()
	var plan *Plan
	for b.Loop() {
		var err error
		if plan, err = Solve(context.Background(), f, &Settings{Gap: 0.005}); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(100*plan.Gap, "gap%")
	b.ReportMetric(float64(plan.Iterations), "rounds")
	b.ReportMetric(float64(plan.Programs), "programs")
}

// BenchmarkSimulatePlan times 1,000 Monte-Carlo runs of the bench fleet's
// plan on all cores, following the plan's shares and the whole-unit
// practice.
func BenchmarkSimulatePlan(b *testing.B) {
	f := benchFleet()
	plan, err := Solve(context.Background(), f, &Settings{Gap: 0.005})
	if err != nil {
		b.Fatal(err)
	}
	for _, rule := range []Rule{FollowPlan, FollowPractice} {
		b.Run(rule.String(), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := Simulate(context.Background(), f, plan, rule, 1000, 7, runtime.GOMAXPROCS(0), nil); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
