package robust_test

import (
	"context"
	"fmt"

	"fixpoint/condition"
	"fixpoint/optimize"
	"fixpoint/optimize/robust"
)

// machine is a two-state machine (invented figures): left alone a good
// machine fails with probability 0.3 a period, serviced with 0.05; a
// failed one must be repaired.
func machine() *optimize.Problem {
	return &optimize.Problem{
		States:   []string{"good", "failed"},
		Actions:  []string{"leave", "service", "repair"},
		Discount: 0.9,
		Choices: [][]optimize.Choice{
			{
				{Action: 0, Cost: 0, Next: []condition.Entry{{To: 0, P: 0.7}, {To: 1, P: 0.3}}},
				{Action: 1, Cost: 5, Next: []condition.Entry{{To: 0, P: 0.95}, {To: 1, P: 0.05}}},
			},
			{
				{Action: 2, Cost: 100, Next: []condition.Entry{{To: 0, P: 1}}},
			},
		},
	}
}

// The machine when every row may be off by up to 0.1 in L1 distance (0.05
// of probability moved). Serviced, nature moves 0.05 more to failure: the
// worst case of good solves x = 5 + 0.9(0.9x + 0.1(100 + 0.9x)), so
// x = 14/0.109.
func ExampleAnalyze() {
	p := machine()
	sets, err := robust.Uniform(p, robust.L1, 0.1, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	a, err := robust.Analyze(context.Background(), p, sets, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	r := a.Robust
	for s, act := range r.Policy {
		fmt.Printf("%s: %s, worst case %.2f (nominal cost %.2f; nominal advice %s, %.2f)\n",
			p.States[s], p.Actions[act], r.WorstCase[s], a.NominalCost[s], p.Actions[a.Nominal.Policy[s]], a.Nominal.Value[s])
	}
	fmt.Printf("%v, price of robustness %.2f\n", r.Status, a.PriceOfRobustness)
	g := a.Settle[0]
	fmt.Printf("settle first: %s/%s, radius %.2f -> %.2f, worst case falls by up to %.2f\n",
		p.States[g.State], p.Actions[g.Action], g.Radius, g.NewRadius, g.MaxChange)
	// Output:
	// good: service, worst case 128.44 (nominal cost 90.91; nominal advice service, 90.91)
	// failed: repair, worst case 215.60 (nominal cost 181.82; nominal advice repair, 181.82)
	// certified, price of robustness 0.00
	// settle first: good/service, radius 0.10 -> 0.05, worst case falls by up to 18.37
}

// Radii from records: the leave row of good was seen 40 times, the service
// row 20 times, repair never (one possible outcome: known exactly). At 90%
// the two uncertain rows share 10% by the union bound; Weissman et al.'s
// bound at miss 0.05 gives ε = sqrt(2·ln(2/0.05)/n).
func ExampleFromCounts() {
	p := machine()
	observations := [][]int{{40, 0}, {20, 0}, {0, 0}} // [action][state]
	sets, err := robust.FromCounts(p, robust.L1, 0.9, observations, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, rows := range sets.Rows {
		for _, row := range rows {
			fmt.Printf("%s/%s: %d records, radius %.4f\n", p.States[row.State], p.Actions[row.Action], row.Observations, row.Radius)
		}
	}
	fmt.Printf("%d rows share %.0f%%, %.3f each\n", sets.Bounded, 100*(1-sets.Confidence), sets.RowMiss)
	// Output:
	// good/leave: 40 records, radius 0.4295
	// good/service: 20 records, radius 0.6074
	// failed/repair: 0 records, radius 0.0000
	// 2 rows share 10%, 0.050 each
}
