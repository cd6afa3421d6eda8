package inspect

import (
	"context"
	"fmt"
	"math"

	"fixpoint/condition"
	"fixpoint/optimize"
)

// Restrict returns the problem in which every inspection interval is k
// periods: the choices of p with Interval k (every admissible action of
// every state keeps one). It returns nil when k is not admissible.
func (p *Problem) Restrict(k int) *Problem {
	q := *p
	q.Intervals = []int{k}
	q.Choices = make([][]Choice, len(p.Choices))
	for s, cs := range p.Choices {
		for _, c := range cs {
			if c.Interval == k {
				q.Choices[s] = append(q.Choices[s], c)
			}
		}
		if len(q.Choices[s]) == 0 {
			return nil
		}
	}
	return &q
}

// Fixed is the cost of inspecting on one fixed interval: the best action
// rule when every interval is Interval, against the optimum.
type Fixed struct {
	Interval int
	// Result is the certified solve of p.Restrict(Interval); its Policy
	// positions refer to the restricted problem's choices, its Action and
	// Value to the states of p.
	Result *Result
	// Excess[s] = Result.Value[s] - opt.Value[s]: what the fixed habit
	// costs against the advice from an epoch in s. Both values are exact
	// for their policies, each within its Gap of its optimum.
	Excess []float64
}

// FixedIntervals solves, for every admissible interval k of p, the
// problem of inspecting every k periods (actions re-optimised with k
// fixed), and compares each with opt, the solve of p. Cost: one Solve per
// interval.
func FixedIntervals(ctx context.Context, p *Problem, opt *Result, settings *optimize.Settings) ([]Fixed, error) {
	if len(opt.Value) != len(p.States) {
		return nil, fmt.Errorf("inspect: optimum has %d values for %d states", len(opt.Value), len(p.States))
	}
	out := make([]Fixed, 0, len(p.Intervals))
	for _, k := range p.Intervals {
		r, err := Solve(ctx, p.Restrict(k), settings)
		if err != nil {
			return nil, err
		}
		f := Fixed{Interval: k, Result: r, Excess: make([]float64, len(p.States))}
		for s := range f.Excess {
			f.Excess[s] = r.Value[s] - opt.Value[s]
		}
		out = append(out, f)
	}
	return out, nil
}

// LongRun holds the long-run figures of one unit under a policy, from the
// stationary distribution ν of the chain embedded at the decision epochs
// (its rows are the Exit distributions of the advised choices) and the
// renewal-reward theorem for Markov renewal processes: a long-run rate is
// Σ_s ν(s)·(reward per cycle from s) / Σ_s ν(s)·(periods per cycle from s).
type LongRun struct {
	// Found[s] is ν(s), the long-run share of epochs that find the unit
	// in s.
	Found []float64
	// PeriodsBetween is Σ ν(s)·E[τ|s], the mean periods between epochs;
	// EpochsPerYear = 1/(PeriodsBetween·PeriodYears) per unit.
	PeriodsBetween, EpochsPerYear float64
	// InspectionsPerYear counts scheduled inspections only:
	// EpochsPerYear·Σ ν(s)·(1 - P(τ<k|s)); the rest are call-outs after a
	// self-announcing failure.
	InspectionsPerYear float64
	// CallOutsPerYear is EpochsPerYear·Σ ν(s)·P(τ<k|s), the epochs that a
	// self-announcing failure brings forward.
	CallOutsPerYear float64
	// UnsafeAtEpoch is Σ_{s unsafe} ν(s), the probability that an epoch
	// (inspection or call-out) finds the unit unsafe.
	UnsafeAtEpoch float64
	// UnsafeAtInspection is the probability that a scheduled inspection
	// finds the unit unsafe: Σ ν(s)·P(τ=k, s_k unsafe|s) / Σ ν(s)·P(τ=k|s).
	// NaN when no inspection is ever scheduled to happen.
	UnsafeAtInspection float64
	// HiddenAtInspection is the probability that a scheduled inspection
	// finds a hidden failure, Σ_{s hidden} ν(s) / Σ ν(s)·P(τ=k|s) (hidden
	// failures are found only by scheduled inspections).
	HiddenAtInspection float64
	// HiddenShare is the long-run share of time a unit spends in a hidden
	// failure unseen, Σ ν(s)·E[hidden periods|s] / PeriodsBetween: the
	// years a hidden failure stays in service per unit per year.
	HiddenShare float64
	// CostPerPeriod is the long-run average cost, Σ ν(s)·CycleCost(s) /
	// PeriodsBetween, and CostPerYear the same per year.
	CostPerPeriod, CostPerYear float64
}

// LongRun returns the long-run figures of policy (positions in Choices).
// It returns the *condition.ClassesError of condition.Chain.Stationary
// when the embedded chain has several closed classes, so that ν is not
// unique. Cost: one O(n³) linear solve.
func (p *Problem) LongRun(policy []int) (*LongRun, error) {
	if err := p.checkPolicy(policy); err != nil {
		return nil, err
	}
	n := len(p.States)
	rows := make([][]condition.Entry, n)
	for s, i := range policy {
		rows[s] = p.Choices[s][i].Exit
	}
	nu, err := condition.Chain{Rows: rows}.Stationary()
	if err != nil {
		return nil, err
	}
	l := &LongRun{Found: nu}
	var hiddenTime, cost, scheduled, unsafe, found float64
	for s, i := range policy {
		c := &p.Choices[s][i]
		l.PeriodsBetween += nu[s] * c.MeanPeriods
		hiddenTime += nu[s] * c.HiddenPeriods
		cost += nu[s] * c.CycleCost
		scheduled += nu[s] * (1 - c.Unscheduled)
		unsafe += nu[s] * c.ScheduledUnsafe
		if p.Unsafe != nil && p.Unsafe[s] {
			l.UnsafeAtEpoch += nu[s]
		}
		if p.Hidden != nil && p.Hidden[s] {
			found += nu[s]
		}
	}
	l.EpochsPerYear = 1 / (l.PeriodsBetween * p.PeriodYears)
	l.InspectionsPerYear = l.EpochsPerYear * scheduled
	l.CallOutsPerYear = l.EpochsPerYear * max(0, 1-scheduled)
	l.UnsafeAtInspection, l.HiddenAtInspection = math.NaN(), math.NaN()
	if scheduled > 0 {
		l.UnsafeAtInspection = unsafe / scheduled
		l.HiddenAtInspection = found / scheduled
	}
	l.HiddenShare = hiddenTime / l.PeriodsBetween
	l.CostPerPeriod = cost / l.PeriodsBetween
	l.CostPerYear = l.CostPerPeriod / p.PeriodYears
	return l, nil
}

// Calendar is the expected inspection calendar of a population of units
// under a policy, year by year.
type Calendar struct {
	// Years[y] covers [y, y+1) years from the first epoch (time 0).
	Years []CalendarYear
	// Found[t][s] is the expected number of epochs in period t (t = 0 ..
	// the periods that start within the horizon) that find a unit in s;
	// Spend[t] is the expected spend of period t, undiscounted.
	Found [][]float64
	Spend []float64
	// PresentValue is Σ_t γ^t·(expected spend of period t) over the
	// horizon, costs charged at the start of each period; as the horizon
	// grows it tends to Σ_s start(s)·v(s).
	PresentValue float64
}

// CalendarYear is one year of a Calendar. Counts are expected numbers of
// units; costs are in the currency of the schedule, undiscounted.
type CalendarYear struct {
	// Year counts from 0, the year in which the calendar starts.
	Year int
	// Epochs counts the decision epochs of the year: scheduled inspections
	// plus call-outs after self-announcing failures (Unscheduled). Each is
	// charged the inspection cost.
	Epochs, Unscheduled float64
	// UnsafeFound counts the epochs that find a unit unsafe.
	UnsafeFound float64
	// Actions[a] counts the times action a is taken.
	Actions []float64
	// InspectionCost is Problem.EpochCost·Epochs; ActionCost, RunningCost
	// (running cost of every period, seen or not) and RiskCost (risk cost
	// of hidden failures unseen) complete Total.
	InspectionCost, ActionCost, RunningCost, RiskCost, Total float64
	// HiddenUnitYears is the expected unit-years spent in hidden failures
	// unseen.
	HiddenUnitYears float64
}

// profile is what one advised choice does, period by period.
type profile struct {
	k       int
	arrive  [][]condition.Entry // arrive[τ-1]: units whose next epoch is at τ, by state
	running []float64           // running[t], t = 0..k-1 (t = 0: the epoch's own period)
	risk    []float64           // risk cost at t
	hidden  []float64           // mass in hidden states at t (unseen)
}

// Calendar propagates start (units, or shares, per state found at an
// epoch at time 0) over the periods of horizonYears years under policy:
// the epochs of period t+τ are the epochs of period t times the
// distribution of (τ, s_τ) of the advised choices, and the period-by-period
// running and risk costs follow the unseen chain. Period t belongs to year
// ⌊t·PeriodYears⌋, counted from 0; the horizon covers the T periods that
// start within it. It needs a Problem made by Build. Cost:
// O(T·n·(K + entries)) for T periods; it checks ctx every period.
func (p *Problem) Calendar(ctx context.Context, policy []int, start []float64, horizonYears int) (*Calendar, error) {
	n := len(p.States)
	switch {
	case p.walk == nil:
		return nil, fmt.Errorf("inspect: the calendar needs a problem made by Build")
	case len(start) != n:
		return nil, fmt.Errorf("inspect: calendar start has %d entries for %d states", len(start), n)
	case horizonYears < 1:
		return nil, fmt.Errorf("inspect: calendar horizon of %d years, want at least 1", horizonYears)
	}
	if err := p.checkPolicy(policy); err != nil {
		return nil, err
	}
	for s, x := range start {
		if !(x >= 0) || math.IsInf(x, 0) {
			return nil, fmt.Errorf("inspect: starting count %v in state %d is not a finite number >= 0", x, s)
		}
	}
	w := p.walk.fresh()
	prof := make([]profile, n)
	for s, i := range policy {
		prof[s] = p.profile(w, s, i)
	}
	T := int(math.Ceil(float64(horizonYears)/p.PeriodYears - 1e-9))
	cal := &Calendar{Years: make([]CalendarYear, horizonYears)}
	for y := range cal.Years {
		cal.Years[y] = CalendarYear{Year: y, Actions: make([]float64, len(p.Actions))}
	}
	year := func(t int) *CalendarYear {
		return &cal.Years[min(int(math.Floor(float64(t)*p.PeriodYears+1e-9)), horizonYears-1)]
	}
	epochs := make([][]float64, T)
	unsched := make([]float64, T)
	for t := range epochs {
		epochs[t] = make([]float64, n)
	}
	copy(epochs[0], start)
	spend := make([]float64, T)
	for t := range T {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		y := year(t)
		y.Unscheduled += unsched[t]
		for s, w := range epochs[t] {
			if w == 0 {
				continue
			}
			a := p.Choices[s][policy[s]].Action
			y.Epochs += w
			y.Actions[a] += w
			if p.Unsafe[s] {
				y.UnsafeFound += w
			}
			y.InspectionCost += w * p.EpochCost
			y.ActionCost += w * p.actionCost[a][s]
			spend[t] += w * (p.EpochCost + p.actionCost[a][s])
			pr := &prof[s]
			for o := range pr.k {
				if t+o >= T {
					break
				}
				yo := year(t + o)
				yo.RunningCost += w * pr.running[o]
				yo.RiskCost += w * pr.risk[o]
				yo.HiddenUnitYears += w * pr.hidden[o] * p.PeriodYears
				spend[t+o] += w * (pr.running[o] + pr.risk[o])
			}
			for tau := 1; tau <= pr.k && t+tau < T; tau++ {
				for _, e := range pr.arrive[tau-1] {
					epochs[t+tau][e.To] += w * e.P
					if tau < pr.k {
						unsched[t+tau] += w * e.P
					}
				}
			}
		}
	}
	g := 1.0
	for t := range T {
		cal.PresentValue += g * spend[t]
		g *= p.Discount
	}
	cal.Found, cal.Spend = epochs, spend
	for y := range cal.Years {
		cy := &cal.Years[y]
		cy.Total = cy.InspectionCost + cy.ActionCost + cy.RunningCost + cy.RiskCost
	}
	return cal, nil
}

// profile follows choice i of state s period by period with walker w.
func (p *Problem) profile(w *walker, s, i int) profile {
	c := &p.Choices[s][i]
	pr := profile{k: c.Interval, arrive: make([][]condition.Entry, c.Interval),
		running: make([]float64, c.Interval), risk: make([]float64, c.Interval), hidden: make([]float64, c.Interval)}
	pr.running[0] = p.running[s]
	w.run(p.rows[c.Action][s], c.Interval, func(t int, x []float64, sup []int) {
		for _, j := range sup {
			switch {
			case x[j] == 0:
			case t == c.Interval || w.kinds[j] == announced:
				pr.arrive[t-1] = append(pr.arrive[t-1], condition.Entry{To: j, P: x[j]})
			default:
				pr.running[t] += x[j] * p.running[j]
				pr.risk[t] += x[j] * p.risk[j]
				if w.kinds[j] == hidden {
					pr.hidden[t] += x[j]
				}
			}
		}
	})
	return pr
}
