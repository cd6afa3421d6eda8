package fleet_test

import (
	"context"
	"fmt"

	"fixpoint/condition"
	"fixpoint/costs"
	"fixpoint/optimize/fleet"
)

// A class of 10 invented pumps, one of them failed, under a budget that
// cannot pay for its replacement: the plan states that it does mandatory
// work only, and the bounds are proven for that problem.
func Example() {
	m := &condition.Model{PeriodYears: 1, States: []condition.State{{Name: "good"}, {Name: "worn"}, {Name: "failed", Unsafe: true}}}
	m.Actions = []condition.Action{
		{Name: "leave", Passive: true, Rows: [][]condition.Entry{{{To: 0, P: 0.9}, {To: 1, P: 0.1}}, {{To: 1, P: 0.8}, {To: 2, P: 0.2}}, nil}},
		{Name: "replace", Rows: [][]condition.Entry{{{To: 0, P: 1}}, {{To: 0, P: 1}}, {{To: 0, P: 1}}}},
	}
	sched := &costs.Schedule{Currency: "EUR", Running: []float64{100, 400, 3000}, Action: [][]float64{{0, 0, 0}, {5000, 5000, 6000}}}
	per, _ := costs.NewPeriod(1)
	d, _ := costs.Rate(0.04, per)
	f := &fleet.Problem{Discount: d, Budget: []float64{2000, 2000, 2000},
		Classes: []fleet.Class{{Name: "pumps", Model: m, Costs: sched, Counts: []float64{6, 3, 1}}}}
	plan, err := fleet.Solve(context.Background(), f, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(plan.Statement.Kind, plan.Statement.Short[0], plan.Statement.Excess[0])
	fmt.Println(plan.Lower <= plan.Fluid, plan.Gap < 1e-5)
	fmt.Println("period 1: replace", plan.First.Units[0][2][1], "failed pump, spend", plan.First.Spend)
	// Output:
	// mandatory_first true 4000
	// true true
	// period 1: replace 1 failed pump, spend 6000
}
