package inspect_test

import (
	"context"
	"fmt"
	"math"

	"fixpoint/condition"
	"fixpoint/costs"
	"fixpoint/optimize"
	"fixpoint/optimize/inspect"
)

// A relief valve of the fictional Kestrel Valley Water (invented numbers),
// rated every quarter: "stuck" (would not lift) is found only by an
// inspection, "passing" (visibly leaking) announces itself. The written
// scheme of examination allows at most two years between inspections.
// The advice is advisory: the statutory interval and the competent
// person's scheme of examination take precedence.
func Example() {
	m := &condition.Model{
		PeriodYears: 0.25,
		States:      []condition.State{{Name: "good"}, {Name: "worn"}, {Name: "stuck", Unsafe: true}, {Name: "passing", Unsafe: true}},
		Actions: []condition.Action{
			{Name: "leave", Passive: true, Rows: [][]condition.Entry{
				{{To: 0, P: 0.94}, {To: 1, P: 0.04}, {To: 2, P: 0.015}, {To: 3, P: 0.005}},
				{{To: 1, P: 0.85}, {To: 2, P: 0.10}, {To: 3, P: 0.05}},
				nil, nil}},
			{Name: "service", Rows: [][]condition.Entry{
				nil, {{To: 0, P: 0.9}, {To: 1, P: 0.1}}, {{To: 0, P: 0.7}, {To: 1, P: 0.3}}, nil}},
			{Name: "replace", Rows: [][]condition.Entry{
				{{To: 0, P: 1}}, {{To: 0, P: 1}}, {{To: 0, P: 1}}, {{To: 0, P: 1}}}},
		},
	}
	c := &costs.Schedule{Currency: "EUR",
		Running: []float64{5, 10, 10, 400},
		Action:  [][]float64{{0, 0, 0, 0}, {0, 200, 450, 0}, {1500, 1500, 1500, 1900}}}
	plan := &inspect.Plan{Cost: 80, Intervals: []int{1, 2, 4, 8, 12}, Hidden: []int{2},
		RiskCost: []float64{0, 0, 1200, 0}, MaxIntervalYears: 2}
	gamma, _ := costs.DiscountFactor(0.04, m.PeriodYears)

	ctx := context.Background()
	p, err := inspect.Build(ctx, m, c, gamma, plan)
	if err != nil {
		fmt.Println(err)
		return
	}
	r, err := inspect.Solve(ctx, p, &optimize.Settings{Tol: 1e-6})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println("excluded intervals (periods):", p.Excluded)
	for s := range p.States {
		fmt.Printf("%-8s %-8s then inspect in %2.0f months  %8.2f\n",
			p.States[s], p.Actions[r.Action[s]], 12*p.Years(r.Interval[s]), r.Value[s])
	}
	fmt.Println(r.Status)

	fixed, err := inspect.FixedIntervals(ctx, p, r, &optimize.Settings{Tol: 1e-6})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, f := range fixed {
		fmt.Printf("every %2.0f months costs %7.2f more from good\n", 12*p.Years(f.Interval), f.Excess[0])
	}

	lr, err := p.LongRun(r.Policy)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("hidden failure in service: %.1f days per unit-year\n", 365.25*lr.HiddenShare)
	fmt.Printf("unsafe at a scheduled inspection: %.1f%%\n", 100*lr.UnsafeAtInspection)

	cal, err := p.Calendar(ctx, r.Policy, []float64{40, 10, 0, 0}, 3)
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, y := range cal.Years {
		fmt.Printf("year %d: %.1f inspections (%.1f call-outs), inspection cost %.0f\n",
			y.Year+1, y.Epochs, y.Unscheduled, math.Round(y.InspectionCost))
	}
	// Output:
	// excluded intervals (periods): [12]
	// good     leave    then inspect in  6 months   8399.15
	// worn     service  then inspect in  6 months   8585.66
	// stuck    service  then inspect in  6 months   8894.08
	// passing  replace  then inspect in 12 months  10614.09
	// certified
	// every  3 months costs 3010.80 more from good
	// every  6 months costs   19.17 more from good
	// every 12 months costs  599.35 more from good
	// every 24 months costs 5899.54 more from good
	// hidden failure in service: 2.5 days per unit-year
	// unsafe at a scheduled inspection: 4.0%
	// year 1: 100.2 inspections (0.4 call-outs), inspection cost 8018
	// year 2: 99.3 inspections (0.4 call-outs), inspection cost 7942
	// year 3: 99.3 inspections (0.4 call-outs), inspection cost 7941
}
