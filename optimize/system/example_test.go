package system_test

import (
	"context"
	"fmt"

	"fixpoint/condition"
	"fixpoint/costs"
	"fixpoint/optimize/system"
)

// part is an invented component of three conditions (the last unsafe):
// left alone it wears, overhaul brings it back to good.
func part(name string, wear, overhaul float64) system.Component {
	m := &condition.Model{PeriodYears: 1, States: []condition.State{{Name: "good"}, {Name: "worn"}, {Name: "failed", Unsafe: true}},
		Actions: []condition.Action{
			{Name: "leave", Passive: true, Rows: [][]condition.Entry{{{To: 0, P: 1 - wear}, {To: 1, P: wear}}, {{To: 1, P: 1 - wear}, {To: 2, P: wear}}, nil}},
			{Name: "overhaul", Rows: [][]condition.Entry{{{To: 0, P: 1}}, {{To: 0, P: 1}}, {{To: 0, P: 1}}}},
		}}
	c := &costs.Schedule{Currency: "EUR", Running: []float64{0, 40, 0}, Action: [][]float64{{0, 0, 0}, {overhaul, overhaul, 3 * overhaul}}}
	return system.Component{Name: name, Model: m, Costs: c}
}

// A hoist of the fictional Kestrel Valley Water workshop (invented data):
// a motor and a rope that share the cost of stopping the hoist. The
// estimate comes before the solve, which starts from the components'
// separate values.
func Example() {
	p, _ := costs.NewPeriod(1)
	d, _ := costs.Rate(0.05, p)
	sys := &system.Machine{Components: []system.Component{part("motor", 0.2, 300), part("rope", 0.3, 150)},
		Shutdown: 500, Down: 2000, DownOnUnsafe: true, Discount: d}
	set := &system.Settings{Tol: 0.01, Workers: 1}
	est, err := sys.Estimate(set)
	if err != nil {
		fmt.Println(err)
		return
	}
	// The sweep bound by hand: D0 = (2-1)(500+2000) = 2500, γ = 1/1.05,
	// ⌈ln(0.005(1-γ)/2500)/ln γ⌉ = ⌈331.4⌉ = 332 sweeps, plus the last.
	fmt.Printf("%.0f joint states, %.0f joint actions, at most %d sweeps\n", est.States, est.Actions, est.Sweeps)
	if err := est.Check(1<<30, 60); err != nil {
		fmt.Println(err)
		return
	}
	ctx := context.Background()
	sep, _ := sys.Separate(ctx)
	set.Start, _ = sys.SeparateStart(ctx, sep)
	r, err := system.Solve(ctx, sys, set)
	if err != nil {
		fmt.Println(err)
		return
	}
	worn := sys.Index([]int{1, 1})
	fmt.Printf("%v after %d sweeps, gap %.3f EUR\n", r.Status, r.Sweeps, r.Gap)
	fmt.Printf("%s: %s\n", sys.StateName(worn), sys.ActionName(int(r.Policy[worn])))
	// Output:
	// 9 joint states, 4 joint actions, at most 333 sweeps
	// certified after 12 sweeps, gap 0.001 EUR
	// motor=worn,rope=worn: motor=overhaul,rope=overhaul
}
