package optimize_test

import (
	"context"
	"fmt"

	"fixpoint/condition"
	"fixpoint/costs"
	"fixpoint/optimize"
)

// A two-state machine: left alone a good machine fails with probability
// 0.3 a period; a failed one must be repaired.
func ExampleSolve() {
	p := &optimize.Problem{
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
	r, err := optimize.Solve(context.Background(), p, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	for s, a := range r.Policy {
		fmt.Printf("%s: %s, expected cost %.2f\n", p.States[s], p.Actions[a], r.Value[s])
	}
	fmt.Println(r.Status, r.Gap < 1e-6)
	// Output:
	// good: service, expected cost 90.91
	// failed: repair, expected cost 181.82
	// certified true
}

func ExampleBuild() {
	m := &condition.Model{
		PeriodYears: 1,
		States:      []condition.State{{Name: "ok"}, {Name: "broken", Unsafe: true}},
		Actions: []condition.Action{
			{Name: "leave", Passive: true, Rows: [][]condition.Entry{{{To: 0, P: 0.9}, {To: 1, P: 0.1}}, nil}},
			{Name: "fix", Rows: [][]condition.Entry{nil, {{To: 0, P: 1}}}},
		},
	}
	c := &costs.Schedule{Currency: "EUR", Running: []float64{5, 50}, Action: [][]float64{{0, 0}, {0, 200}}}
	p, err := optimize.Build(m, c, 0.95)
	if err != nil {
		fmt.Println(err)
		return
	}
	for s, cs := range p.Choices {
		for _, ch := range cs {
			fmt.Printf("%s/%s costs %g\n", p.States[s], p.Actions[ch.Action], ch.Cost)
		}
	}
	// Output:
	// ok/leave costs 5
	// broken/fix costs 250
}
