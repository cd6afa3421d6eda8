package robust

import (
	"math"
	"math/rand/v2"
	"strconv"
	"testing"

	"fixpoint/condition"
	"fixpoint/costs"
	"fixpoint/optimize"
	"fixpoint/optimize/internal/mdptest"
)

// pumps is the demo class of configs/pumps.yaml (Kestrel Valley Water's
// booster pumps: INVENTED data), built by hand: five conditions, the last
// unsafe, four actions, one-year periods at 4% a year.
func pumps(t testing.TB) *optimize.Problem {
	t.Helper()
	row := func(xs ...float64) []condition.Entry {
		var r []condition.Entry
		for j, x := range xs {
			if x != 0 {
				r = append(r, condition.Entry{To: j, P: x})
			}
		}
		return r
	}
	m := &condition.Model{
		PeriodYears: 1,
		States:      []condition.State{{Name: "sound"}, {Name: "light_wear"}, {Name: "heavy_wear"}, {Name: "critical"}, {Name: "failed", Unsafe: true}},
		Actions: []condition.Action{
			{Name: "leave", Passive: true, Rows: [][]condition.Entry{
				row(0.825, 0.14, 0.03, 0, 0.005),
				row(0, 0.80, 0.16, 0.03, 0.01),
				row(0, 0, 0.68, 0.22, 0.10),
				row(0, 0, 0, 0.55, 0.45),
				nil,
			}},
			{Name: "service", Rows: [][]condition.Entry{
				nil,
				row(0.55, 0.40, 0.04, 0, 0.01),
				row(0, 0.50, 0.37, 0.10, 0.03),
				nil, nil,
			}},
			{Name: "overhaul", Rows: [][]condition.Entry{
				nil, nil,
				row(0.73, 0.25, 0, 0, 0.02),
				row(0.52, 0.34, 0.10, 0, 0.04),
				nil,
			}},
			{Name: "replace", Rows: [][]condition.Entry{row(1), row(1), row(1), row(1), row(1)}},
		},
	}
	c := &costs.Schedule{
		Currency: "EUR",
		Running:  []float64{150, 260, 480, 1100, 6500},
		Action: [][]float64{
			{0, 0, 0, 0, 0},
			{0, 750, 900, 0, 0},
			{0, 0, 3200, 3800, 0},
			{11000, 11000, 11000, 11000, 12500},
		},
	}
	p, err := optimize.Build(m, c, 1/1.04)
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// randomProblem returns a problem of n states and m actions in which each
// action is admissible in a state with probability 0.7 (the first always),
// rows have up to k non-zero entries and costs are uniform on
// [0, scale]. The source is seeded by the caller.
func randomProblem(rng *rand.Rand, n, m, k int, gamma, scale float64) *optimize.Problem {
	p := &optimize.Problem{Discount: gamma, Choices: make([][]optimize.Choice, n)}
	for s := range n {
		p.States = append(p.States, "s"+strconv.Itoa(s))
	}
	for a := range m {
		p.Actions = append(p.Actions, "a"+strconv.Itoa(a))
	}
	for s := range n {
		for a := range m {
			if len(p.Choices[s]) > 0 && rng.Float64() > 0.7 {
				continue
			}
			p.Choices[s] = append(p.Choices[s], optimize.Choice{Action: a, Cost: scale * rng.Float64(), Next: mdptest.RandomRow(rng, n, k)})
		}
	}
	return p
}

// bandedProblem is a deterioration scale of n states: left alone a unit
// stays or slips one or two states (running cost rising with the state);
// a repair moves it back a quarter of the scale, a replacement to the top.
func bandedProblem(n int, gamma float64) *optimize.Problem {
	p := &optimize.Problem{Discount: gamma, Actions: []string{"leave", "repair", "replace"}, Choices: make([][]optimize.Choice, n)}
	for s := range n {
		p.States = append(p.States, "s"+strconv.Itoa(s))
		run := 10 * float64(s*s) / float64(n)
		if s < n-1 {
			next := []condition.Entry{{To: s, P: 0.7}, {To: min(s+1, n-1), P: 0.2}, {To: min(s+2, n-1), P: 0.1}}
			if s == n-2 {
				next = []condition.Entry{{To: s, P: 0.7}, {To: n - 1, P: 0.3}}
			}
			p.Choices[s] = append(p.Choices[s], optimize.Choice{Action: 0, Cost: run, Next: next})
		}
		if s > 0 {
			p.Choices[s] = append(p.Choices[s], optimize.Choice{Action: 1, Cost: run + 50 + float64(s), Next: []condition.Entry{{To: s - (s+3)/4, P: 1}}})
		}
		p.Choices[s] = append(p.Choices[s], optimize.Choice{Action: 2, Cost: run + 40*float64(n), Next: []condition.Entry{{To: 0, P: 1}}})
	}
	return p
}

// mustUniform is Uniform that fails the test on error.
func mustUniform(t testing.TB, p *optimize.Problem, kind Kind, r float64) *Sets {
	t.Helper()
	s, err := Uniform(p, kind, r, nil)
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// evaluateRows returns the exact discounted cost of policy when each
// state's row is rows[s], by optimize.Evaluate on the chain.
func evaluateRows(t testing.TB, p *optimize.Problem, policy []int, rows [][]condition.Entry) []float64 {
	t.Helper()
	n := len(p.States)
	chain := &optimize.Problem{States: p.States, Actions: []string{"x"}, Discount: p.Discount, Choices: make([][]optimize.Choice, n)}
	for s := range n {
		cost := math.NaN()
		for _, c := range p.Choices[s] {
			if c.Action == policy[s] {
				cost = c.Cost
			}
		}
		chain.Choices[s] = []optimize.Choice{{Action: 0, Cost: cost, Next: rows[s]}}
	}
	v, err := optimize.Evaluate(chain, make([]int, n))
	if err != nil {
		t.Fatal(err)
	}
	return v
}

// singleRow is a model of one state whose one choice has the support
// 0..k-1 with nominal row p and radius r; its values are passed to inner
// directly.
func singleRow(kind Kind, p []float64, r float64) *model {
	k := len(p)
	m := &model{kind: kind, gamma: 0.9, first: []int{0, 1}, action: []int{0}, cost: []float64{0}, radius: []float64{r},
		off: []int{0, k}, center: p, maxLen: k, eps: 1e-12}
	for j := range k {
		m.to = append(m.to, j)
		m.order = append(m.order, int32(j))
	}
	m.adv = append([]float64(nil), p...)
	m.dual = make([]float64, 1)
	m.scratch = make([]float64, k)
	m.gs = make([]float64, k)
	m.xs = make([]float64, k)
	return m
}
