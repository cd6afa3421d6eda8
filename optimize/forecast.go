package optimize

import (
	"fmt"
	"math"

	"fixpoint/condition"
	"fixpoint/costs"
)

// Forecast is the expected evolution of a population of units of one
// class under a policy.
type Forecast struct {
	// Periods[k] describes period k = 0..len-1; period 0 holds the
	// starting mix.
	Periods []ForecastPeriod
	// Final holds the expected counts at the start of the period after the
	// last one.
	Final []float64
	// PresentValue is Σ_k γ^k Periods[k].Total (costs at the start of each
	// period).
	PresentValue float64
}

// ForecastPeriod is one period of a forecast.
type ForecastPeriod struct {
	Period int
	// Counts[s] is the expected number of units in state s at the start of
	// the period.
	Counts []float64
	// ActionSpend[a] is the expected spend on action a in the period: the
	// cost of what the policy does to the units counted.
	ActionSpend []float64
	// Running is the expected running cost of the period; Total adds the
	// action spend.
	Running, Total float64
}

// NewForecast propagates the starting counts (units per state, or shares)
// over periods periods under policy: the counts of period k+1 are the
// counts of period k times the policy's transition matrix, and the spend
// of period k is what the policy does to the units of period k.
func NewForecast(m *condition.Model, c *costs.Schedule, gamma float64, policy []int, start []float64, periods int) (*Forecast, error) {
	n := len(m.States)
	if len(start) != n || len(policy) != n {
		return nil, fmt.Errorf("optimize: forecast start or policy of the wrong length for %d states", n)
	}
	if periods < 1 {
		return nil, fmt.Errorf("optimize: forecast needs at least one period, got %d", periods)
	}
	for s, x := range start {
		if !(x >= 0) || math.IsInf(x, 0) {
			return nil, fmt.Errorf("optimize: starting count %v in state %d is not a finite number >= 0", x, s)
		}
	}
	f := &Forecast{}
	counts := append([]float64(nil), start...)
	disc := 1.0
	for k := range periods {
		per := ForecastPeriod{Period: k, Counts: counts, ActionSpend: make([]float64, len(m.Actions))}
		next := make([]float64, n)
		for s, x := range counts {
			a := policy[s]
			per.ActionSpend[a] += x * c.Action[a][s]
			per.Running += x * c.Running[s]
			for _, e := range m.Actions[a].Rows[s] {
				next[e.To] += x * e.P
			}
		}
		per.Total = per.Running
		for _, v := range per.ActionSpend {
			per.Total += v
		}
		f.PresentValue += disc * per.Total
		disc *= gamma
		f.Periods = append(f.Periods, per)
		counts = next
	}
	f.Final = counts
	return f, nil
}
