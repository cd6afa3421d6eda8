package system

import (
	"context"
	"errors"
	"fmt"
	"math"
	"runtime"
	"strings"

	"fixpoint/condition"
	"fixpoint/costs"
	"fixpoint/optimize"
)

// Component is one part of a machine: its condition model and costs.
type Component struct {
	Name  string
	Model *condition.Model
	Costs *costs.Schedule
}

// Machine is a machine of independently degrading components that share a
// shutdown: any period in which at least one component gets non-passive
// work costs Shutdown once, and any period in which some component is in
// an unsafe state costs Down (when DownOnUnsafe).
//
// A joint state is the tuple of component conditions, indexed in mixed
// radix with the first component most significant; a joint action is one
// admissible action per component, indexed the same way over action
// indices. Components transition independently given their actions, so
// the transition operator of a joint action is the Kronecker product of
// the component rows.
type Machine struct {
	Components   []Component
	Shutdown     float64
	Down         float64
	DownOnUnsafe bool
	// Discount is the discount per period.
	Discount costs.Discount
}

// Size returns the number of joint states and joint actions.
func (sys *Machine) Size() (states, actions float64) {
	states, actions = 1, 1
	for _, c := range sys.Components {
		states *= float64(len(c.Model.States))
		actions *= float64(len(c.Model.Actions))
	}
	return states, actions
}

// MaxJointActions is the largest number of joint actions Solve accepts:
// joint actions are stored as int32 indices in the policy and runner-up
// arrays.
const MaxJointActions = math.MaxInt32

// MaxJointStates is the largest number of joint states Solve accepts
// (2^40: index arithmetic stays exact, and one value vector of that many
// float64 is 8 TiB, far beyond any machine the estimate admits).
const MaxJointStates = 1 << 40

// Fault is one problem found in a machine. Component is the index of the
// component concerned, or -1 when the fault is about the machine as a
// whole. Field names what is wrong: "components", "name", "model",
// "costs", "passive", "period", "shutdown", "down", "discount" or "size".
// Err, when not nil, is the underlying fault (a *condition.Fault or a
// *costs.Fault for Field "model" or "costs").
type Fault struct {
	Component int
	// Name is the component's name when Component >= 0.
	Name    string
	Field   string
	Problem string
	Err     error
}

func (f *Fault) Error() string {
	var b strings.Builder
	b.WriteString("system: ")
	switch {
	case f.Component >= 0 && f.Name != "":
		fmt.Fprintf(&b, "component %d %q: ", f.Component, f.Name)
	case f.Component >= 0:
		fmt.Fprintf(&b, "component %d: ", f.Component)
	}
	b.WriteString(f.Problem)
	if f.Err != nil {
		if f.Problem != "" {
			b.WriteString(": ")
		}
		b.WriteString(f.Err.Error())
	}
	return b.String()
}

// Unwrap returns the underlying fault, if any.
func (f *Fault) Unwrap() error { return f.Err }

// Validate reports every fault of the machine, joined by errors.Join; each
// is a *Fault. A valid machine has at least one component; every component
// has a non-empty name unique in the machine, a condition model and a cost
// schedule that are valid and of matching sizes (their own faults are
// wrapped one by one), a passive action, and the period of the machine's
// discount; the shared shutdown and down costs are finite; the discount is
// given; and there are at most MaxJointStates joint states and
// MaxJointActions joint actions.
func (sys *Machine) Validate() error {
	var errs []error
	add := func(i int, field, format string, args ...any) {
		f := &Fault{Component: i, Field: field, Problem: fmt.Sprintf(format, args...)}
		if i >= 0 {
			f.Name = sys.Components[i].Name
		}
		errs = append(errs, f)
	}
	wrap := func(i int, field string, err error) {
		if err == nil {
			return
		}
		list := []error{err}
		if j, ok := err.(interface{ Unwrap() []error }); ok {
			list = j.Unwrap()
		}
		for _, e := range list {
			errs = append(errs, &Fault{Component: i, Name: sys.Components[i].Name, Field: field, Err: e})
		}
	}
	if len(sys.Components) == 0 {
		add(-1, "components", "the machine has no components")
	}
	period := math.NaN()
	if !sys.Discount.IsZero() {
		period = sys.Discount.Period().Years()
	}
	seen := make(map[string]int)
	states, actions := 1.0, 1.0
	for i, c := range sys.Components {
		switch j, dup := seen[c.Name]; {
		case c.Name == "":
			add(i, "name", "the component has no name")
		case dup:
			add(i, "name", "duplicate name (also component %d)", j)
		default:
			seen[c.Name] = i
		}
		if c.Model == nil {
			add(i, "model", "the component has no condition model")
		}
		if c.Costs == nil {
			add(i, "costs", "the component has no cost schedule")
		}
		if c.Model == nil {
			continue
		}
		states *= float64(len(c.Model.States))
		actions *= float64(len(c.Model.Actions))
		wrap(i, "model", c.Model.Validate())
		if c.Costs != nil {
			wrap(i, "costs", c.Costs.Validate(len(c.Model.States), len(c.Model.Actions)))
		}
		if c.Model.Passive() < 0 {
			add(i, "passive", "no passive (leave-as-is) action")
		}
		if y := c.Model.PeriodYears; !math.IsNaN(period) && math.Abs(y-period) > 1e-9*period {
			add(i, "period", "period of %g years, the machine's discount is per period of %g years", y, period)
		}
	}
	for _, x := range []struct {
		field string
		v     float64
	}{{"shutdown", sys.Shutdown}, {"down", sys.Down}} {
		if math.IsNaN(x.v) || math.IsInf(x.v, 0) {
			add(-1, x.field, "%s cost is %v, want a finite number", x.field, x.v)
		}
	}
	if sys.Discount.IsZero() {
		add(-1, "discount", "the machine needs a discount")
	}
	if states > MaxJointStates {
		add(-1, "size", "%g joint states, more than %d", states, MaxJointStates)
	}
	if actions > MaxJointActions {
		add(-1, "size", "%g joint actions, more than %d", actions, MaxJointActions)
	}
	return errors.Join(errs...)
}

// Result is the certified joint policy of a system.
type Result struct {
	Status optimize.Status
	Tol    float64
	Sweeps int
	// Policy[s] is the joint action index of joint state s.
	Policy []int32
	// Value[s] is the midpoint of the proven bracket Lower[s] <= v*(s) <=
	// Upper[s]; the advised policy loses at most Gap against the optimum.
	Value, Lower, Upper []float64
	Gap                 float64
	// Residual is max |T v - v| at the last iterate.
	Residual float64
	// RunnerUp and Margin are the second-best joint action and its Q-value
	// margin at the last iterate (-1 and NaN when there is none).
	RunnerUp []int32
	Margin   []float64
	Workers  int
	// Rounding is the width the floating-point rounding allowance adds to
	// every bracket; Shortfall says why Status is NotCertified:
	// optimize.IterationCap (MaxSweeps reached first) or
	// optimize.RoundingFloor (the iteration converged, the allowance is
	// what keeps Gap above Tol).
	Rounding  float64
	Shortfall optimize.Shortfall
}

// Settings controls Solve.
type Settings struct {
	// Tol is the target gap in currency units; zero means optimize.DefaultTol.
	Tol float64
	// MaxSweeps caps value iteration; zero means optimize.DefaultValueSweeps.
	MaxSweeps int
	// Workers is the number of goroutines; zero means GOMAXPROCS.
	Workers int
	// Start, if not nil, is the first iterate (for instance the sum of the
	// components' separate values).
	Start []float64
	// optimize.Progress, if not nil, is called after every sweep.
	Progress func(optimize.Progress)
}

// withDefaults returns the settings with zero fields replaced by their
// defaults, and the worker count capped by the sweep's tasks.
func (s *Settings) withDefaults(j *joint) Settings {
	var set Settings
	if s != nil {
		set = *s
	}
	if set.Tol <= 0 {
		set.Tol = optimize.DefaultTol
	}
	if set.MaxSweeps <= 0 {
		set.MaxSweeps = optimize.DefaultValueSweeps
	}
	if set.Workers <= 0 {
		set.Workers = runtime.GOMAXPROCS(0)
	}
	_, tasks := j.taskDepth(set.Workers)
	set.Workers = min(set.Workers, tasks)
	return set
}

// Solve solves the joint model by value iteration with MacQueen's
// bounds, never forming the joint transition matrix: for each joint
// action, P v is the Kronecker product of the component rows applied by
// successive mode products, O(n·(1 + nnz_k/n_k)) each, and joint actions
// share their prefixes in a depth-first walk of the action tree. A sweep
// costs O(n · Σ_k (1 + nnz_k/n_k) · Π_{j<=k} m_j) for m_j actions of
// component j; memory is O(n·K) per worker (see Machine.Estimate for both
// in numbers). It stops when γ/(1-γ)·span(Tv - v) is at most Tol/2 (the
// bounds are then widened by a rounding allowance).
//
// Cancellation: every loop looks at ctx every few thousand joint states,
// so Solve returns ctx.Err() within milliseconds of ctx being cancelled,
// whatever the size.
func Solve(ctx context.Context, sys *Machine, s *Settings) (*Result, error) {
	if err := sys.Validate(); err != nil {
		return nil, err
	}
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	j, err := newJoint(ctx, sys)
	if err != nil {
		return nil, err
	}
	set := s.withDefaults(j)
	if set.Start != nil && len(set.Start) != j.n {
		return nil, fmt.Errorf("system: start has %d values, want one per joint state (%d)", len(set.Start), j.n)
	}
	states := make([]*sweepState, set.Workers)
	for w := range states {
		states[w] = j.newSweepState()
	}
	v := make([]float64, j.n)
	if set.Start != nil {
		copy(v, set.Start)
	}
	g := sys.Discount.Factor()
	r := &Result{Tol: set.Tol, Workers: set.Workers}
	for sweep := 1; ; sweep++ {
		if err := j.sweep(ctx, v, states); err != nil {
			return nil, err
		}
		st := states[0]
		lo, hi := span(st.best, v)
		if math.IsNaN(hi-lo) || math.IsInf(hi-lo, 0) {
			return nil, errNonFinite
		}
		gap := g / (1 - g) * (hi - lo)
		if set.Progress != nil {
			set.Progress(optimize.Progress{Method: optimize.ValueIteration, Iteration: sweep, Gap: gap})
		}
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		// Half the tolerance: the rest is room for the rounding allowance.
		if gap <= set.Tol/2 || sweep >= set.MaxSweeps {
			// One more sweep at the MacQueen estimate: its greedy policy is
			// the advice, its residual is reported, and the lower bounds
			// of both sweeps are kept.
			prevLower := make([]float64, j.n)
			mid := g / (1 - g) * (lo + hi) / 2
			for s := range j.n {
				prevLower[s] = st.best[s] + g/(1-g)*lo
				v[s] = st.best[s] + mid
			}
			if err := j.sweep(ctx, v, states); err != nil {
				return nil, err
			}
			lo, hi = span(st.best, v)
			r.Sweeps = sweep + 1
			r.finish(j, v, st, lo, hi, prevLower)
			if r.Status != optimize.Certified {
				r.Shortfall = optimize.RoundingFloor
				if gap > set.Tol/2 {
					r.Shortfall = optimize.IterationCap
				}
			}
			if err := ctx.Err(); err != nil {
				return nil, err
			}
			return r, nil
		}
		copy(v, st.best)
	}
}

// span returns the least and greatest of tv[s] - v[s].
func span(tv, v []float64) (lo, hi float64) {
	lo, hi = math.Inf(1), math.Inf(-1)
	for s, x := range tv {
		d := x - v[s]
		lo, hi = min(lo, d), max(hi, d)
	}
	return lo, hi
}

// finish fills the certificate from the last sweep; prevLower holds lower
// bounds proven by the sweep before.
func (r *Result) finish(j *joint, v []float64, st *sweepState, lo, hi float64, prevLower []float64) {
	g := j.sys.Discount.Factor()
	n := j.n
	r.Policy = make([]int32, n)
	r.Value, r.Lower, r.Upper = make([]float64, n), make([]float64, n), make([]float64, n)
	r.RunnerUp, r.Margin = make([]int32, n), make([]float64, n)
	cmax, vmax := 0.0, 0.0
	for s := range n {
		cmax = max(cmax, math.Abs(j.base[s])+math.Abs(j.sys.Shutdown))
		vmax = max(vmax, math.Abs(st.best[s]))
	}
	terms := 1
	for i := range j.k {
		longest := 0
		for _, rows := range j.rows[i] {
			for _, row := range rows {
				longest = max(longest, len(row))
			}
		}
		terms *= longest
	}
	round := float64(terms+3*j.k) * 0x1p-52 * (cmax + vmax) / (1 - g)
	r.Rounding = 2 * round
	for s := range n {
		r.Policy[s] = st.arg[s]
		r.Lower[s] = max(st.best[s]+g/(1-g)*lo, prevLower[s]) - round
		r.Upper[s] = st.best[s] + g/(1-g)*hi + round
		r.Value[s] = (r.Lower[s] + r.Upper[s]) / 2
		r.Gap = max(r.Gap, r.Upper[s]-r.Lower[s])
		r.Residual = max(r.Residual, math.Abs(st.best[s]-v[s]))
		r.RunnerUp[s], r.Margin[s] = st.arg2[s], st.second[s]-st.best[s]
		if st.arg2[s] < 0 {
			r.Margin[s] = math.NaN()
		}
	}
	r.Status = optimize.Certified
	if !(r.Gap <= r.Tol) {
		r.Status = optimize.NotCertified
	}
}

// StateName writes joint state s as "motor=worn,rope=good".
func (sys *Machine) StateName(s int) string {
	j := newJointLayout(sys)
	parts := make([]string, len(sys.Components))
	for i, c := range sys.Components {
		parts[i] = c.Name + "=" + c.Model.States[j.coord(s, i)].Name
	}
	return strings.Join(parts, ",")
}

// ActionName writes joint action a as "motor=rewind,rope=leave".
func (sys *Machine) ActionName(a int) string {
	j := newJointLayout(sys)
	parts := make([]string, len(sys.Components))
	for i, c := range sys.Components {
		parts[i] = c.Name + "=" + c.Model.Actions[j.actionOf(a, i)].Name
	}
	return strings.Join(parts, ",")
}

// Coords returns the component conditions of joint state s, and
// ActionCoords the component actions of joint action a.
func (sys *Machine) Coords(s int) []int {
	j := newJointLayout(sys)
	out := make([]int, len(sys.Components))
	for i := range out {
		out[i] = j.coord(s, i)
	}
	return out
}

// ActionCoords returns the component actions of joint action a.
func (sys *Machine) ActionCoords(a int) []int {
	j := newJointLayout(sys)
	out := make([]int, len(sys.Components))
	for i := range out {
		out[i] = j.actionOf(a, i)
	}
	return out
}

// Index returns the joint state of component conditions xs.
func (sys *Machine) Index(xs []int) int {
	j := newJointLayout(sys)
	s := 0
	for i, x := range xs {
		s += x * j.strides[i]
	}
	return s
}

var errNonFinite = errors.New("system: iteration produced a non-finite value")
