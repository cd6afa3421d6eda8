package inspect

import (
	"context"
	"math"
	"math/rand/v2"
	"slices"
	"strconv"
	"testing"

	"fixpoint/condition"
	"fixpoint/costs"
	"fixpoint/optimize"
	"fixpoint/optimize/internal/mdptest"
)

// class is one test class: a condition model, its costs, a discount
// factor and an inspection plan.
type class struct {
	name  string
	m     *condition.Model
	c     *costs.Schedule
	gamma float64
	plan  Plan
}

func (cl *class) build(t testing.TB) *Problem {
	t.Helper()
	p, err := Build(context.Background(), cl.m, cl.c, cl.gamma, &cl.plan)
	if err != nil {
		t.Fatalf("Build(%q): %v", cl.name, err)
	}
	return p
}

func dense(rows ...[]float64) [][]condition.Entry {
	out := make([][]condition.Entry, len(rows))
	for s, r := range rows {
		if r == nil {
			continue
		}
		for j, p := range r {
			if p != 0 {
				out[s] = append(out[s], condition.Entry{To: j, P: p})
			}
		}
	}
	return out
}

// reliefValves is INVENTED DATA for the tests: the pressure relief valves
// of the fictional Kestrel Valley Water, rated every quarter. "stuck"
// (would not lift on demand) is a hidden failure; "passing" (visibly
// leaking) announces itself.
func reliefValves() *class {
	return &class{
		name: "relief-valves",
		m: &condition.Model{
			PeriodYears: 0.25,
			States: []condition.State{
				{Name: "good"}, {Name: "worn"}, {Name: "stiff"},
				{Name: "stuck", Unsafe: true}, {Name: "passing", Unsafe: true},
			},
			Actions: []condition.Action{
				{Name: "leave", Passive: true, Rows: dense(
					[]float64{0.95, 0.035, 0.01, 0.005, 0},
					[]float64{0, 0.85, 0.08, 0.04, 0.03},
					[]float64{0, 0, 0.80, 0.12, 0.08},
					nil, nil)},
				{Name: "service", Rows: dense(
					nil,
					[]float64{0.85, 0.15, 0, 0, 0},
					[]float64{0.70, 0.25, 0.05, 0, 0},
					[]float64{0.60, 0.30, 0.10, 0, 0},
					nil)},
				{Name: "replace", Rows: dense(
					[]float64{1, 0, 0, 0, 0},
					[]float64{1, 0, 0, 0, 0},
					[]float64{1, 0, 0, 0, 0},
					[]float64{1, 0, 0, 0, 0},
					[]float64{1, 0, 0, 0, 0})},
			},
		},
		c: &costs.Schedule{Currency: "EUR",
			Running: []float64{5, 8, 15, 15, 400},
			Action: [][]float64{
				{0, 0, 0, 0, 0},
				{0, 180, 260, 420, 0},
				{1500, 1500, 1500, 1500, 1800},
			}},
		gamma: math.Pow(1.04, -0.25),
		plan: Plan{Cost: 60, Downtime: 20, Intervals: []int{1, 2, 3, 4, 6, 8, 12}, Hidden: []int{3},
			RiskCost: []float64{0, 0, 0, 900, 0}, MaxIntervalYears: 2},
	}
}

// randomClass returns a seeded random class of n states: the last states
// are unsafe (one hidden, one self-announcing when n >= 4), a passive
// action in every safe state, up to three more actions (the last one
// admissible everywhere), and random intervals up to maxK.
// reachesSafe reports whether row puts probability on a state below safe
// (the safe states come first).
func reachesSafe(row []condition.Entry, safe int) bool {
	for _, e := range row {
		if e.P > 0 && e.To < safe {
			return true
		}
	}
	return false
}

func randomClass(rng *rand.Rand, n, maxK int) *class {
	m := &condition.Model{PeriodYears: 0.5}
	unsafe := min(2, n-1)
	for s := range n {
		m.States = append(m.States, condition.State{Name: "s" + strconv.Itoa(s), Unsafe: s >= n-unsafe})
	}
	pass := condition.Action{Name: "leave", Passive: true, Rows: make([][]condition.Entry, n)}
	for s := range n - unsafe {
		pass.Rows[s] = mdptest.RandomRow(rng, n, 1+rng.IntN(n))
	}
	m.Actions = append(m.Actions, pass)
	extra := 1 + rng.IntN(3)
	for a := range extra {
		act := condition.Action{Name: "a" + strconv.Itoa(a), Rows: make([][]condition.Entry, n)}
		for s := range n {
			if a == extra-1 || rng.Float64() < 0.5 {
				act.Rows[s] = mdptest.RandomRow(rng, n, 1+rng.IntN(3))
				// A valid model never keeps an unsafe unit within unsafe
				// states: draw again until the row reaches a safe one.
				for m.States[s].Unsafe && !reachesSafe(act.Rows[s], n-unsafe) {
					act.Rows[s] = mdptest.RandomRow(rng, n, 1+rng.IntN(3))
				}
			}
		}
		m.Actions = append(m.Actions, act)
	}
	c := &costs.Schedule{Currency: "EUR", Running: make([]float64, n), Action: make([][]float64, len(m.Actions))}
	for s := range n {
		c.Running[s] = 100 * rng.Float64()
		if m.States[s].Unsafe {
			c.Running[s] += 300
		}
	}
	for a := range c.Action {
		c.Action[a] = make([]float64, n)
		for s := range n {
			if a > 0 {
				c.Action[a][s] = 1000 * rng.Float64()
			}
		}
	}
	var ks []int
	for k := 1; k <= maxK; k++ {
		if k == 1 || rng.Float64() < 0.6 {
			ks = append(ks, k)
		}
	}
	pl := Plan{Cost: 50 * rng.Float64(), Downtime: 10 * rng.Float64(), Intervals: ks,
		RiskCost: make([]float64, n), MaxIntervalYears: float64(maxK) * m.PeriodYears}
	if n >= 4 {
		pl.Hidden = []int{n - unsafe}
		pl.RiskCost[n-unsafe] = 500 * rng.Float64()
	}
	return &class{name: "random-" + strconv.Itoa(n), m: m, c: c, gamma: 0.9 + 0.09*rng.Float64(), plan: pl}
}

// expanded is the independent formulation: the ordinary discounted MDP on
// the pairs (x, r) of the true condition x and the periods r left until
// the scheduled inspection, built from the model's rows directly, with
// discount γ per period. r = 0 is a decision epoch with one choice per
// (action, admissible interval); at r >= 1 the unit is unseen and has one
// choice, "wait": a safe state moves by the passive row, a hidden failure
// stays, and entering a self-announcing state with r >= 1 left makes the
// next period an epoch (the failure is seen). State index r·n + x; action
// index a·len(ks) + i for (a, ks[i]), and len(actions)·len(ks) for wait.
// It returns the problem and the admissible intervals ks.
func expanded(cl *class) (*optimize.Problem, []int) {
	m, c, pl := cl.m, cl.c, &cl.plan
	n := len(m.States)
	var ks []int
	for _, k := range pl.Intervals {
		if float64(k)*m.PeriodYears <= pl.MaxIntervalYears*(1+1e-9) {
			ks = append(ks, k)
		}
	}
	K := slices.Max(ks)
	isHidden := make([]bool, n)
	for _, s := range pl.Hidden {
		isHidden[s] = true
	}
	risk := func(x int) float64 {
		if pl.RiskCost == nil {
			return 0
		}
		return pl.RiskCost[x]
	}
	announces := func(x int) bool { return m.States[x].Unsafe && !isHidden[x] }
	idx := func(x, r int) int {
		if r >= 1 && announces(x) {
			r = 0
		}
		return r*n + x
	}
	na := len(m.Actions)
	wait := na * len(ks)
	p := &optimize.Problem{Discount: cl.gamma, Choices: make([][]optimize.Choice, n*K)}
	for r := range K {
		for x := range n {
			p.States = append(p.States, m.States[x].Name+"/"+strconv.Itoa(r))
		}
	}
	for a := range na {
		for _, k := range ks {
			p.Actions = append(p.Actions, m.Actions[a].Name+"@"+strconv.Itoa(k))
		}
	}
	p.Actions = append(p.Actions, "wait")
	pa := m.Passive()
	for x := range n {
		for a := range na {
			if !m.Actions[a].Admissible(x) {
				continue
			}
			for i, k := range ks {
				ch := optimize.Choice{Action: a*len(ks) + i, Cost: pl.Cost + pl.Downtime + c.Action[a][x] + c.Running[x]}
				for _, e := range m.Actions[a].Rows[x] {
					ch.Next = append(ch.Next, condition.Entry{To: idx(e.To, k-1), P: e.P})
				}
				p.Choices[x] = append(p.Choices[x], ch)
			}
		}
		for r := 1; r < K; r++ {
			ch := optimize.Choice{Action: wait, Cost: c.Running[x] + risk(x)}
			switch {
			case announces(x): // never reached: the failure is seen at once
				ch = optimize.Choice{Action: wait, Next: []condition.Entry{{To: x, P: 1}}}
			case isHidden[x]:
				ch.Next = []condition.Entry{{To: idx(x, r-1), P: 1}}
			default:
				for _, e := range m.Actions[pa].Rows[x] {
					ch.Next = append(ch.Next, condition.Entry{To: idx(e.To, r-1), P: e.P})
				}
			}
			p.Choices[r*n+x] = append(p.Choices[r*n+x], ch)
		}
	}
	return p, ks
}

func checkClose(t *testing.T, what string, got, want []float64, tol float64) {
	t.Helper()
	for i := range want {
		if math.Abs(got[i]-want[i]) > tol {
			t.Errorf("%s[%d] = %.12g, want %.12g (tol %g)", what, i, got[i], want[i], tol)
		}
	}
}

// relClose reports whether |a-b| <= tol·max(1, |b|).
func relClose(a, b, tol float64) bool { return math.Abs(a-b) <= tol*max(1, math.Abs(b)) }

var methods = []optimize.Method{optimize.ValueIteration, optimize.PolicyIteration, optimize.LinearProgram}
