package optimize

import (
	"context"
	"math"
	"math/rand/v2"
	"testing"

	"fixpoint/condition"
	"fixpoint/costs"
	"fixpoint/optimize/internal/mdptest"
)

// classModel is a four-state class with leave, repair and replace, for
// tests (invented numbers).
func classModel() (*condition.Model, *costs.Schedule) {
	e := func(pairs ...float64) []condition.Entry {
		var row []condition.Entry
		for i := 0; i < len(pairs); i += 2 {
			row = append(row, condition.Entry{To: int(pairs[i]), P: pairs[i+1]})
		}
		return row
	}
	m := &condition.Model{
		PeriodYears: 0.5,
		States:      []condition.State{{Name: "good"}, {Name: "fair"}, {Name: "poor"}, {Name: "failed", Unsafe: true}},
		Actions: []condition.Action{
			{Name: "leave", Passive: true, Rows: [][]condition.Entry{e(0, 0.8, 1, 0.2), e(1, 0.7, 2, 0.3), e(2, 0.6, 3, 0.4), nil}},
			{Name: "repair", Rows: [][]condition.Entry{nil, e(0, 0.9, 1, 0.1), e(0, 0.5, 1, 0.5), nil}},
			{Name: "replace", Rows: [][]condition.Entry{e(0, 1), e(0, 1), e(0, 1), e(0, 1)}},
		},
	}
	c := &costs.Schedule{
		Currency: "EUR",
		Running:  []float64{10, 30, 90, 600},
		Action:   [][]float64{{0, 0, 0, 0}, {0, 200, 450, 0}, {1500, 1500, 1500, 1800}},
	}
	return m, c
}

func solveClass(t *testing.T, m *condition.Model, c *costs.Schedule, gamma float64) (*Problem, *Result) {
	t.Helper()
	p, err := Build(m, c, gamma)
	if err != nil {
		t.Fatal(err)
	}
	r, err := Solve(context.Background(), p, nil)
	if err != nil {
		t.Fatal(err)
	}
	return p, r
}

// Counts are conserved, and the present value over K periods obeys the
// identity Σ_{k<K} γ^k E[c_k] = v(s) - γ^K E[v(X_K)] (closed form of the
// policy's value).
func TestForecastConservationAndValue(t *testing.T) {
	m, c := classModel()
	gamma := 0.97
	_, r := solveClass(t, m, c, gamma)
	start := []float64{30, 50, 20, 0}
	f, err := NewForecast(m, c, gamma, r.Policy, start, 40)
	if err != nil {
		t.Fatal(err)
	}
	for _, per := range f.Periods {
		sum := 0.0
		for _, x := range per.Counts {
			sum += x
		}
		if math.Abs(sum-100) > 1e-9 {
			t.Errorf("period %d: %g units, want 100", per.Period, sum)
		}
	}
	want := 0.0
	for s, x := range start {
		want += x * r.Value[s]
	}
	tail := 0.0
	for s, x := range f.Final {
		tail += x * r.Value[s]
	}
	want -= math.Pow(gamma, 40) * tail
	if math.Abs(f.PresentValue-want) > 1e-8*want {
		t.Errorf("present value %.10g, want %.10g", f.PresentValue, want)
	}
}

// The expected counts agree with a seeded Monte-Carlo simulation of single
// units within three standard errors.
func TestForecastAgreesWithSimulation(t *testing.T) {
	m, c := classModel()
	_, r := solveClass(t, m, c, 0.97)
	const units, periods = 20000, 12
	start := []float64{0, units, 0, 0}
	f, err := NewForecast(m, c, 0.97, r.Policy, start, periods)
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(42, 7))
	counts := make([][]float64, periods)
	for k := range counts {
		counts[k] = make([]float64, len(m.States))
	}
	for range units {
		s := 1
		for k := range periods {
			counts[k][s]++
			s = condition.Step(m.Actions[r.Policy[s]].Rows[s], rng)
		}
	}
	for k := range periods {
		for s, got := range counts[k] {
			want := f.Periods[k].Counts[s]
			p := want / units
			se := math.Sqrt(units * p * (1 - p))
			if math.Abs(got-want) > 3*se+1e-9 {
				t.Errorf("period %d, state %d: simulated %g, expected %g (3 SE = %g)", k, s, got, want, 3*se)
			}
		}
	}
}

// The long-run cost per period is the Cesàro limit of the forecast's spend
// per unit, and the stationary distribution is invariant.
func TestLifeFiguresLongRun(t *testing.T) {
	m, c := classModel()
	_, r := solveClass(t, m, c, 0.97)
	l, err := LifeFigures(m, c, r, mdptest.Rate(0.06, m.PeriodYears), WorstTarget(4), 200)
	if err != nil {
		t.Fatal(err)
	}
	if l.Stationary == nil {
		t.Fatal(l.StationaryErr)
	}
	chain := m.PolicyChain(r.Policy)
	for j := range l.Stationary {
		got := 0.0
		for s, row := range chain.Rows {
			for _, e := range row {
				if e.To == j {
					got += l.Stationary[s] * e.P
				}
			}
		}
		if math.Abs(got-l.Stationary[j]) > 1e-12 {
			t.Errorf("(πP)[%d] = %g, π = %g", j, got, l.Stationary[j])
		}
	}
	f, err := NewForecast(m, c, 1, r.Policy, []float64{1, 0, 0, 0}, 20000)
	if err != nil {
		t.Fatal(err)
	}
	avg := f.PresentValue / 20000
	if math.Abs(avg-l.CostPerPeriod) > 1e-3*l.CostPerPeriod {
		t.Errorf("Cesàro average %g, long-run cost %g", avg, l.CostPerPeriod)
	}
	share := 0.0
	for a, s := range l.ActionShare {
		share += s
		if s > 0 && math.Abs(l.PeriodsBetween[a]*s-1) > 1e-12 {
			t.Errorf("action %d: share %g, periods between %g", a, s, l.PeriodsBetween[a])
		}
	}
	if math.Abs(share-1) > 1e-12 {
		t.Errorf("action shares sum to %g", share)
	}
	if math.Abs(l.CostPerYear-2*l.CostPerPeriod) > 1e-12 {
		t.Errorf("cost per year %g with half-year periods and %g per period", l.CostPerYear, l.CostPerPeriod)
	}
	// Equivalent annual cost: a level start-of-year amount A for ever is
	// worth A(1+i)/i (closed form), so A = v·i/(1+i).
	if want := r.Value[0] * 0.06 / 1.06; math.Abs(l.EquivalentAnnual[0]-want) > 1e-9 {
		t.Errorf("equivalent annual cost %g, want %g", l.EquivalentAnnual[0], want)
	}
	// Left alone, a good unit reaches failed after 1/0.2 + 1/0.3 + 1/0.4
	// periods on average (a sum of geometric waits).
	if want := 5 + 10.0/3 + 2.5; math.Abs(l.Passive.Periods[0]-want) > 1e-12 {
		t.Errorf("passive periods to failed from good = %g, want %g", l.Passive.Periods[0], want)
	}
	if !math.IsNaN(l.Passive.Periods[3]) && l.Passive.Periods[3] != 0 {
		t.Errorf("passive figure in the failed state = %g", l.Passive.Periods[3])
	}
}
