package inspect

import (
	"context"
	"errors"
	"fmt"
	"math"
	"slices"

	"fixpoint/condition"
	"fixpoint/costs"
)

// Choice is one admissible decision (a, k) of a state at a decision epoch:
// take Action now and inspect again after Interval periods, or earlier,
// when a self-announcing failure is seen. τ is the time to the next epoch,
// 1 <= τ <= Interval.
type Choice struct {
	Action int
	// Interval is k, the periods until the next scheduled inspection.
	Interval int
	// Cost is c(s,a,k), the expected discounted cost from this epoch up to
	// the next: C + downtime + cost(a,s) + running(s) at t = 0, then
	// E Σ_{t=1}^{τ-1} γ^t (running(s_t) + risk(s_t)).
	Cost float64
	// Next is the discounted next-epoch kernel M(j) = E[γ^τ 1{s_τ = j}],
	// in increasing To; it sums to E[γ^τ], between γ^k and γ.
	Next []condition.Entry
	// Exit is the distribution of the state found at the next epoch,
	// P(s_τ = j), in increasing To.
	Exit []condition.Entry
	// MeanPeriods is E[τ], the expected periods to the next epoch.
	MeanPeriods float64
	// HiddenPeriods is E Σ_{t=1}^{τ-1} 1{s_t hidden}: the expected periods
	// the unit spends unseen in a hidden unsafe state before the epoch.
	HiddenPeriods float64
	// CycleCost is Cost without discounting: the expected money spent from
	// this epoch up to the next.
	CycleCost float64
	// Unscheduled is P(τ < k): the next epoch is the call-out after a
	// self-announcing failure, before the scheduled inspection.
	Unscheduled float64
	// ScheduledUnsafe is P(τ = k, s_k unsafe): the scheduled inspection
	// finds the unit in an unsafe state.
	ScheduledUnsafe float64
}

// Problem is the semi-Markov decision process of inspection and action
// for one class of equipment (see the package comment for the timing).
// Choices[s] lists the admissible decisions of state s in increasing
// (action, interval) order; that order is the tie rule's. Solve,
// FixedIntervals, LongRun and Calendar do not modify a Problem and may
// run concurrently on one.
type Problem struct {
	States  []string
	Actions []string
	// Unsafe[s] and Hidden[s] mark the unsafe states and, among them, the
	// hidden failures; the other unsafe states are self-announcing. nil in
	// a hand-made problem means none.
	Unsafe, Hidden []bool
	// PeriodYears is the length of one period in years.
	PeriodYears float64
	// Discount is γ, the discount factor per period.
	Discount float64
	// Intervals are the admissible intervals in periods, increasing: the
	// plan's intervals within the limit.
	Intervals []int
	// Excluded are the plan's intervals above the limit, never advised.
	Excluded []int
	// MaxIntervalYears is the plan's limit in years.
	MaxIntervalYears float64
	// EpochCost is the inspection and downtime cost charged at every
	// epoch (Plan.Cost + Plan.Downtime).
	EpochCost float64
	Choices   [][]Choice

	// Built problems keep copies of what the calendar needs: the rows
	// (rows[a][s], nil where not admissible), the running, action and risk
	// costs, and the unseen walk; nil in hand-made problems.
	rows          [][][]condition.Entry
	running, risk []float64
	actionCost    [][]float64
	walk          *walker
}

// Years returns the length of an interval of k periods in years.
func (p *Problem) Years(k int) float64 { return float64(k) * p.PeriodYears }

// Build makes the inspection problem of class (m, c) with discount factor
// gamma per period and inspection plan pl. The model, the schedule and the
// plan are validated first and every fault of any is returned, joined
// (*condition.Fault, *costs.Fault, *Fault; see Plan.Validate). Intervals
// above the plan's limit are dropped into Excluded; no admissible interval
// is a fault.
//
// For every state s, admissible action a and admissible interval k it
// computes Choice (cost, discounted kernel, exit distribution, mean
// periods, hidden periods) in one forward pass of the unseen chain up to
// the longest interval K: O(K·(n + nnz)) per (s, a), with nnz the non-zero
// entries of the passive rows, and O(n) per interval to store the result.
// It checks ctx between states.
func Build(ctx context.Context, m *condition.Model, c *costs.Schedule, gamma float64, pl *Plan) (*Problem, error) {
	var planErrs []error
	if !(gamma > 0 && gamma < 1) {
		planErrs = append(planErrs, &Fault{Field: "discount", Index: -1, State: -1, Problem: fmt.Sprintf("discount factor per period %v is not in (0, 1)", gamma)})
	}
	errs, kinds := pl.check(m)
	planErrs = append(planErrs, errs...)
	if err := errors.Join(append([]error{m.Validate(), c.Validate(len(m.States), len(m.Actions))}, planErrs...)...); err != nil {
		return nil, err
	}
	n := len(m.States)
	p := &Problem{
		States: m.StateNames(), Actions: m.ActionNames(),
		Unsafe: make([]bool, n), Hidden: make([]bool, n),
		PeriodYears: m.PeriodYears, Discount: gamma, MaxIntervalYears: pl.MaxIntervalYears,
		EpochCost: pl.Cost + pl.Downtime, Choices: make([][]Choice, n),
		rows: make([][][]condition.Entry, len(m.Actions)), running: slices.Clone(c.Running),
		risk: make([]float64, n), actionCost: make([][]float64, len(m.Actions)),
	}
	copy(p.risk, pl.RiskCost)
	for a := range m.Actions {
		p.actionCost[a] = slices.Clone(c.Action[a])
		p.rows[a] = make([][]condition.Entry, n)
		for s, row := range m.Actions[a].Rows {
			p.rows[a][s] = slices.Clone(row)
		}
	}
	for s := range n {
		p.Unsafe[s] = kinds[s] != safe
		p.Hidden[s] = kinds[s] == hidden
	}
	for _, k := range pl.Intervals {
		if admissible(k, m.PeriodYears, pl.MaxIntervalYears) {
			p.Intervals = append(p.Intervals, k)
		} else {
			p.Excluded = append(p.Excluded, k)
		}
	}
	p.walk = newWalker(p, m.Passive(), kinds)
	var acc cycle
	for s := range n {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		p.Choices[s] = make([]Choice, 0, len(m.Actions)*len(p.Intervals))
		for a := range m.Actions {
			if !m.Actions[a].Admissible(s) {
				continue
			}
			start := p.EpochCost + p.actionCost[a][s] + p.running[s]
			acc.reset(n)
			ki := 0
			p.walk.run(p.rows[a][s], p.Intervals[len(p.Intervals)-1], func(t int, x []float64, sup []int) {
				if t == p.Intervals[ki] {
					p.Choices[s] = append(p.Choices[s], acc.choice(a, t, start, gamma, x, kinds))
					ki++
				}
				acc.add(t, x, sup, kinds, p.walk.charge, gamma)
			})
		}
	}
	return p, nil
}

// cycle accumulates, over t = 1..t-1 of one interval, what a Choice holds.
type cycle struct {
	next, exit                       []float64
	cost, ucost, mean, hidden, early float64
}

func (c *cycle) reset(n int) {
	if len(c.next) != n {
		c.next, c.exit = make([]float64, n), make([]float64, n)
	}
	clear(c.next)
	clear(c.exit)
	c.cost, c.ucost, c.mean, c.hidden, c.early = 0, 0, 0, 0, 0
}

// add accounts for period t as an unseen period of a longer interval: the
// mass x in self-announcing states ends the interval at t, the rest is
// charged running and risk cost.
func (c *cycle) add(t int, x []float64, sup []int, kinds []kind, charge []float64, gamma float64) {
	g := math.Pow(gamma, float64(t))
	for _, j := range sup {
		switch kinds[j] {
		case announced:
			c.next[j] += g * x[j]
			c.exit[j] += x[j]
			c.mean += float64(t) * x[j]
			c.early += x[j]
		case hidden:
			c.hidden += x[j]
			fallthrough
		default:
			c.cost += g * x[j] * charge[j]
			c.ucost += x[j] * charge[j]
		}
	}
}

// choice closes the interval at t = k with the unit in distribution x.
func (c *cycle) choice(a, k int, start, gamma float64, x []float64, kinds []kind) Choice {
	g := math.Pow(gamma, float64(k))
	ch := Choice{Action: a, Interval: k, Cost: start + c.cost, CycleCost: start + c.ucost,
		HiddenPeriods: c.hidden, MeanPeriods: c.mean, Unscheduled: c.early}
	nNext, nExit := 0, 0
	for j := range x {
		if c.next[j]+g*x[j] != 0 {
			nNext++
		}
		if c.exit[j]+x[j] != 0 {
			nExit++
		}
	}
	ch.Next, ch.Exit = make([]condition.Entry, 0, nNext), make([]condition.Entry, 0, nExit)
	for j := range x {
		if kinds[j] != safe {
			ch.ScheduledUnsafe += x[j]
		}
		if m := c.next[j] + g*x[j]; m != 0 {
			ch.Next = append(ch.Next, condition.Entry{To: j, P: m})
		}
		if e := c.exit[j] + x[j]; e != 0 {
			ch.Exit = append(ch.Exit, condition.Entry{To: j, P: e})
		}
		ch.MeanPeriods += float64(k) * x[j]
	}
	return ch
}

// walker follows the distribution of a unit left unseen after an epoch.
// The rows and charges are shared; the scratch vectors are its own (see
// fresh).
type walker struct {
	kinds []kind
	// pass[s] is the passive row of a safe state (nil elsewhere).
	pass [][]condition.Entry
	// charge[s] is the cost of one unseen period in s: running plus risk.
	charge    []float64
	x, nx     []float64
	sup, nsup []int
	in        []bool
}

func newWalker(p *Problem, passive int, kinds []kind) *walker {
	n := len(kinds)
	w := &walker{kinds: kinds, pass: make([][]condition.Entry, n), charge: make([]float64, n),
		x: make([]float64, n), nx: make([]float64, n), in: make([]bool, n)}
	for s := range n {
		w.charge[s] = p.running[s] + p.risk[s]
		if kinds[s] == safe && passive >= 0 {
			w.pass[s] = p.rows[passive][s]
		}
	}
	return w
}

// fresh returns a walker with the same rows and new scratch vectors, so
// that walks on one Problem may run concurrently.
func (w *walker) fresh() *walker {
	n := len(w.kinds)
	return &walker{kinds: w.kinds, pass: w.pass, charge: w.charge,
		x: make([]float64, n), nx: make([]float64, n), in: make([]bool, n)}
}

// run puts a unit in distribution row at t = 1 and follows it unseen up
// to t = last. At every t it calls visit(t, x, sup): x is the distribution
// at t of the mass whose interval has not ended before t, sup the states
// where x may be non-zero, in a fixed order. Between visits the mass in
// self-announcing states leaves (the interval ended there), hidden states
// keep theirs and safe states move by the passive row. Each step costs
// O(|sup| + the entries of the rows of sup).
func (w *walker) run(row []condition.Entry, last int, visit func(t int, x []float64, sup []int)) {
	x, nx := w.x, w.nx
	sup := w.sup[:0]
	for _, e := range row {
		if !w.in[e.To] {
			w.in[e.To] = true
			sup = append(sup, e.To)
		}
		x[e.To] += e.P
	}
	nsup := w.nsup[:0]
	for t := 1; ; t++ {
		for _, j := range sup {
			w.in[j] = false
		}
		visit(t, x, sup)
		if t == last {
			break
		}
		nsup = nsup[:0]
		put := func(j int, q float64) {
			if !w.in[j] {
				w.in[j] = true
				nsup = append(nsup, j)
			}
			nx[j] += q
		}
		for _, j := range sup {
			switch w.kinds[j] {
			case hidden:
				put(j, x[j])
			case safe:
				for _, e := range w.pass[j] {
					put(e.To, x[j]*e.P)
				}
			}
			x[j] = 0
		}
		x, nx = nx, x
		sup, nsup = nsup, sup
	}
	for _, j := range sup {
		x[j] = 0
	}
	w.x, w.nx, w.sup, w.nsup = x, nx, sup, nsup
}

// Validate reports every fault of p, joined; each is a *Fault with Field
// "states" or "choices". A valid problem has names for its sizes, at
// least one choice per state in strictly increasing (action, interval)
// order, finite costs and kernels with finite non-negative entries on the
// scale and Σ_j M(j) < 1, so that the Bellman operator is a contraction;
// Unsafe and Hidden are nil (no unsafe states) or have one entry per state.
func (p *Problem) Validate() error {
	var errs []error
	add := func(field string, index, state int, format string, args ...any) {
		errs = append(errs, &Fault{Field: field, Index: index, State: state, Problem: fmt.Sprintf(format, args...)})
	}
	n := len(p.States)
	if n == 0 {
		add("states", -1, -1, "no states")
	}
	if len(p.Choices) != n {
		add("choices", -1, -1, "%d choice lists for %d states", len(p.Choices), n)
	}
	if p.Unsafe != nil && len(p.Unsafe) != n || p.Hidden != nil && len(p.Hidden) != n {
		add("states", -1, -1, "%d unsafe and %d hidden marks for %d states, want one per state or none", len(p.Unsafe), len(p.Hidden), n)
	}
	for s, cs := range p.Choices {
		if len(cs) == 0 {
			add("choices", -1, s, "no admissible decision")
		}
		for i, c := range cs {
			if c.Action < 0 || c.Action >= len(p.Actions) || c.Interval < 1 ||
				i > 0 && (c.Action < cs[i-1].Action || c.Action == cs[i-1].Action && c.Interval <= cs[i-1].Interval) {
				add("choices", i, s, "decision (action %d, interval %d) out of range or out of order", c.Action, c.Interval)
			}
			if math.IsNaN(c.Cost) || math.IsInf(c.Cost, 0) {
				add("choices", i, s, "cost is %v", c.Cost)
			}
			sum := 0.0
			for _, e := range c.Next {
				if e.To < 0 || e.To >= n || !(e.P >= 0) || math.IsInf(e.P, 0) {
					add("choices", i, s, "bad kernel entry %+v", e)
					continue
				}
				sum += e.P
			}
			if !(sum < 1) {
				add("choices", i, s, "kernel sums to %v, want < 1", sum)
			}
		}
	}
	return errors.Join(errs...)
}

// modulus returns the least and greatest kernel sums over all choices,
// β_lo = min Σ_j M(j) and β = max Σ_j M(j); β is the contraction modulus
// of the Bellman operator in the max norm.
func (p *Problem) modulus() (lo, hi float64) {
	lo, hi = 1, 0
	for _, cs := range p.Choices {
		for _, c := range cs {
			sum := kernelSum(c.Next)
			lo, hi = min(lo, sum), max(hi, sum)
		}
	}
	return lo, hi
}

func kernelSum(next []condition.Entry) float64 {
	sum := 0.0
	for _, e := range next {
		sum += e.P
	}
	return sum
}

// checkPolicy reports a policy of the wrong length or with a position
// outside the choices of its state.
func (p *Problem) checkPolicy(policy []int) error {
	if len(policy) != len(p.States) {
		return fmt.Errorf("inspect: policy has %d entries for %d states", len(policy), len(p.States))
	}
	for s, i := range policy {
		if i < 0 || i >= len(p.Choices[s]) {
			return fmt.Errorf("inspect: policy takes decision %d, not one of the %d of state %d", i, len(p.Choices[s]), s)
		}
	}
	return nil
}

// find returns the position of the decision (a, k) among the choices of
// state s, or -1.
func (p *Problem) find(s, a, k int) int {
	return slices.IndexFunc(p.Choices[s], func(c Choice) bool { return c.Action == a && c.Interval == k })
}
