package optimize

import (
	"errors"
	"fmt"
	"math"

	"fixpoint/condition"
	"fixpoint/costs"
)

// Life holds what a policy means over the life of one unit.
type Life struct {
	// Target[s] marks the states whose first passage is measured
	// (by default the worst state of the scale).
	Target []bool
	// Passive and Policy are first-passage figures to the target for a
	// unit always left alone and for one following the advice. Passive is
	// nil when the model has no passive action; its Periods are NaN in the
	// states where the passive action is not admissible.
	Passive, Policy *condition.Passage
	// PassiveErr and PolicyErr say why some figures of Passive or Policy
	// could not be computed (they are NaN there), or are nil. A failure of
	// these auxiliary figures never fails LifeFigures: the advice stands.
	PassiveErr, PolicyErr error
	// PassiveSurvival[s][k] and PolicySurvival[s][k] are the probabilities
	// that a unit started in s has not reached the target after k periods
	// (k = 0..Horizon).
	PassiveSurvival, PolicySurvival [][]float64
	Horizon                         int
	// Stationary is the long-run distribution of condition under the
	// advice; nil when it is not unique or cannot be computed, with the
	// reason in StationaryErr (the long-run figures below are then NaN).
	Stationary    []float64
	StationaryErr error
	// CostPerPeriod is the long-run average cost per period under the
	// advice, Σ_s π(s) c(s, advice(s)), and CostPerYear the same per year;
	// NaN without a stationary distribution.
	CostPerPeriod, CostPerYear float64
	// EquivalentAnnual[s] is the level amount per year, paid at the start
	// of each year for ever, with the same present value at the annual
	// rate as the advice from s (NaN without a discount).
	EquivalentAnnual []float64
	// UnsafeShare is the long-run share of units in unsafe states.
	UnsafeShare float64
	// ActionShare[a] is the long-run share of periods in which action a is
	// taken, and PeriodsBetween[a] = 1/ActionShare[a] the mean number of
	// periods between two uses (+Inf when never used), by the
	// renewal-reward theorem.
	ActionShare, PeriodsBetween []float64
}

// LifeFigures computes the life figures of the advice r for the class
// (m, c) at the discount d: first passage to target, survival
// curves over horizon periods, the long-run figures of the policy's chain
// and the equivalent annual cost of r.Value. The chain figures come from
// condition.Chain (reachability on the graph, subtraction-free state
// reduction); a figure that cannot be computed is left out with its reason
// in PolicyErr, PassiveErr or StationaryErr. The error is only for
// arguments of the wrong length.
func LifeFigures(m *condition.Model, c *costs.Schedule, r *Result, d costs.Discount, target []bool, horizon int) (*Life, error) {
	n := len(m.States)
	policy := r.Policy
	if len(policy) != n || len(target) != n {
		return nil, fmt.Errorf("optimize: policy or target of the wrong length for %d states", n)
	}
	l := &Life{Target: target, Horizon: horizon, CostPerPeriod: math.NaN(), CostPerYear: math.NaN(),
		EquivalentAnnual: make([]float64, n),
		ActionShare:      make([]float64, len(m.Actions)), PeriodsBetween: make([]float64, len(m.Actions))}
	for s, v := range r.Value {
		l.EquivalentAnnual[s] = math.NaN()
		if !d.IsZero() {
			l.EquivalentAnnual[s] = d.EquivalentAnnual(v)
		}
	}
	pol := m.PolicyChain(policy)
	pp, err := pol.FirstPassage(target)
	l.Policy, l.PolicyErr = &pp, figureErr("first passage under the advice", err)
	l.PolicySurvival = pol.Survival(target, horizon)
	if m.Passive() >= 0 {
		pas := m.PassiveChain()
		p, err := pas.FirstPassage(target)
		l.PassiveErr = figureErr("first passage left alone", err)
		// A state where the unit cannot be left alone has no passive figure,
		// even when it is the target.
		for s, row := range pas.Rows {
			if row == nil {
				p.Periods[s] = math.NaN()
			}
		}
		l.Passive = &p
		l.PassiveSurvival = pas.Survival(target, horizon)
	}
	pi, err := pol.Stationary()
	if err != nil {
		var ce *condition.ClassesError
		if !errors.As(err, &ce) {
			err = figureErr("long-run figures", err)
		}
		l.StationaryErr = err
		for a := range l.PeriodsBetween {
			l.ActionShare[a], l.PeriodsBetween[a] = math.NaN(), math.NaN()
		}
		l.UnsafeShare = math.NaN()
		return l, nil
	}
	l.Stationary = pi
	l.CostPerPeriod = 0
	for s, a := range policy {
		l.CostPerPeriod += pi[s] * (c.Running[s] + c.Action[a][s])
		l.ActionShare[a] += pi[s]
		if m.States[s].Unsafe {
			l.UnsafeShare += pi[s]
		}
	}
	l.CostPerYear = l.CostPerPeriod / m.PeriodYears
	for a, share := range l.ActionShare {
		l.PeriodsBetween[a] = 1 / share
		if share <= 0 {
			l.PeriodsBetween[a] = math.Inf(1)
		}
	}
	return l, nil
}

// figureErr prefixes err with the figure it concerns (nil stays nil).
func figureErr(figure string, err error) error {
	if err == nil {
		return nil
	}
	return fmt.Errorf("optimize: %s cannot be computed: %w", figure, err)
}

// WorstTarget marks the last state of an n-state scale.
func WorstTarget(n int) []bool {
	t := make([]bool, n)
	t[n-1] = true
	return t
}
