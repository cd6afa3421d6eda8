package system

import (
	"context"
	"errors"
	"fmt"
	"math"
	"runtime"
	"strings"
	"sync"

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

// joint holds the precomputed layout of a system.
type joint struct {
	sys     *Machine
	k       int
	dims    []int // states per component
	strides []int // state strides
	acts    []int // actions per component
	aStride []int // action strides
	n       int
	nActs   int
	passive []int
	// base[s] = Σ running + Down·[any unsafe]; unsafe[s] marks down states.
	base []float64
	// acost[k][a][x] is component k's action cost, +Inf where inadmissible.
	acost [][][]float64
	// rows[k][a][x] is component k's row, nil where inadmissible.
	rows [][][][]condition.Entry
}

// newJoint precomputes the layout, costs and rows of a system.
func newJoint(sys *Machine) *joint {
	j := newJointLayout(sys)
	for _, c := range sys.Components {
		j.passive = append(j.passive, c.Model.Passive())
	}
	j.acost = make([][][]float64, j.k)
	j.rows = make([][][][]condition.Entry, j.k)
	for i, c := range sys.Components {
		m := c.Model
		j.acost[i] = make([][]float64, j.acts[i])
		j.rows[i] = make([][][]condition.Entry, j.acts[i])
		for a := range m.Actions {
			j.acost[i][a] = make([]float64, j.dims[i])
			j.rows[i][a] = make([][]condition.Entry, j.dims[i])
			for x := range m.States {
				if !m.Actions[a].Admissible(x) || (m.Actions[a].Passive && m.States[x].Unsafe) {
					j.acost[i][a][x] = math.Inf(1)
					continue
				}
				j.acost[i][a][x] = c.Costs.Action[a][x]
				j.rows[i][a][x] = m.Actions[a].Rows[x]
			}
		}
	}
	j.base = make([]float64, j.n)
	for s := range j.n {
		down := false
		for i, c := range sys.Components {
			x := j.coord(s, i)
			j.base[s] += c.Costs.Running[x]
			down = down || c.Model.States[x].Unsafe
		}
		if down && sys.DownOnUnsafe {
			j.base[s] += sys.Down
		}
	}
	return j
}

func (j *joint) coord(s, i int) int { return s / j.strides[i] % j.dims[i] }

func (j *joint) actionOf(a, i int) int { return a / j.aStride[i] % j.acts[i] }

// worked reports whether joint action a works on some component.
func (j *joint) worked(a int) bool {
	for i := range j.k {
		if j.actionOf(a, i) != j.passive[i] {
			return true
		}
	}
	return false
}

// modeProduct sets out = (I ⊗ .. ⊗ P ⊗ .. ⊗ I) in along mode i with the
// rows of component i's action a: out[l, x, r] = Σ_y P(y | x) in[l, y, r];
// rows that are nil give zeros. O(n · nnz/dims[i]).
func (j *joint) modeProduct(out, in []float64, i, a int) {
	r := j.strides[i]
	block := r * j.dims[i]
	rows := j.rows[i][a]
	for l := 0; l < j.n; l += block {
		for x, row := range rows {
			dst := out[l+x*r : l+x*r+r]
			clear(dst)
			for _, e := range row {
				src := in[l+e.To*r : l+e.To*r+r]
				p := e.P
				for t := range dst {
					dst[t] += p * src[t]
				}
			}
		}
	}
}

// addCost sets out = in + broadcast of component i's cost of action a.
func (j *joint) addCost(out, in []float64, i, a int) {
	r := j.strides[i]
	block := r * j.dims[i]
	cost := j.acost[i][a]
	for l := 0; l < j.n; l += block {
		for x, c := range cost {
			base := l + x*r
			for t := range r {
				out[base+t] = in[base+t] + c
			}
		}
	}
}

// sweepState is the per-worker result of a Bellman sweep: for every joint
// state the best and second-best Q-values and their joint actions.
type sweepState struct {
	best, second []float64
	arg, arg2    []int32
	bufs, costs  [][]float64
}

func (j *joint) newSweepState() *sweepState {
	st := &sweepState{best: make([]float64, j.n), second: make([]float64, j.n),
		arg: make([]int32, j.n), arg2: make([]int32, j.n)}
	for range j.k + 1 {
		st.bufs = append(st.bufs, make([]float64, j.n))
		st.costs = append(st.costs, make([]float64, j.n))
	}
	return st
}

func (st *sweepState) reset() {
	for s := range st.best {
		st.best[s], st.second[s] = math.Inf(1), math.Inf(1)
		st.arg[s], st.arg2[s] = -1, -1
	}
}

// better orders (q, a) pairs: smaller Q first, then smaller action index,
// so that merging workers is deterministic.
func better(q float64, a int32, bq float64, ba int32) bool {
	return q < bq || (q == bq && a < ba)
}

func (st *sweepState) offer(s int, q float64, a int32) {
	switch {
	case better(q, a, st.best[s], st.arg[s]) || st.arg[s] < 0:
		st.second[s], st.arg2[s] = st.best[s], st.arg[s]
		st.best[s], st.arg[s] = q, a
	case better(q, a, st.second[s], st.arg2[s]) || st.arg2[s] < 0:
		st.second[s], st.arg2[s] = q, a
	}
}

// descend applies components level.. to st.bufs[level] and offers every
// completed joint action's Q-values. prefix is the joint action index so
// far.
func (j *joint) descend(st *sweepState, level, prefix int) {
	if level == j.k {
		g := j.sys.Discount.Factor()
		extra := 0.0
		if j.worked(prefix) {
			extra = j.sys.Shutdown
		}
		w, c := st.bufs[level], st.costs[level]
		for s := range j.n {
			if q := c[s] + extra + g*w[s]; q < math.Inf(1) {
				st.offer(s, q, int32(prefix))
			}
		}
		return
	}
	for a := range j.acts[level] {
		j.modeProduct(st.bufs[level+1], st.bufs[level], level, a)
		j.addCost(st.costs[level+1], st.costs[level], level, a)
		j.descend(st, level+1, prefix+a*j.aStride[level])
	}
}

// sweep computes (T v)(s) for every joint state, with the greedy joint
// action and the runner-up, splitting the action tree over workers at its
// first two levels. The result is in states[0]. Workers stop between
// subtrees when ctx is cancelled.
func (j *joint) sweep(ctx context.Context, v []float64, states []*sweepState) error {
	type task struct{ a0, a1 int }
	var tasks []task
	for a0 := range j.acts[0] {
		if j.k == 1 {
			tasks = append(tasks, task{a0, -1})
			continue
		}
		for a1 := range j.acts[1] {
			tasks = append(tasks, task{a0, a1})
		}
	}
	next := make(chan task, len(tasks))
	for _, t := range tasks {
		next <- t
	}
	close(next)
	var wg sync.WaitGroup
	for _, st := range states {
		st.reset()
		wg.Add(1)
		go func() {
			defer wg.Done()
			copy(st.bufs[0], v)
			copy(st.costs[0], j.base)
			for t := range next {
				if ctx.Err() != nil {
					continue
				}
				j.modeProduct(st.bufs[1], st.bufs[0], 0, t.a0)
				j.addCost(st.costs[1], st.costs[0], 0, t.a0)
				if t.a1 < 0 {
					j.descend(st, 1, t.a0*j.aStride[0])
					continue
				}
				j.modeProduct(st.bufs[2], st.bufs[1], 1, t.a1)
				j.addCost(st.costs[2], st.costs[1], 1, t.a1)
				j.descend(st, 2, t.a0*j.aStride[0]+t.a1*j.aStride[1])
			}
		}()
	}
	wg.Wait()
	if err := ctx.Err(); err != nil {
		return err
	}
	out := states[0]
	for _, st := range states[1:] {
		for s := range j.n {
			if st.arg[s] >= 0 {
				out.offer(s, st.best[s], st.arg[s])
			}
			if st.arg2[s] >= 0 {
				out.offer(s, st.second[s], st.arg2[s])
			}
		}
	}
	return nil
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

// Solve solves the joint model by value iteration with MacQueen's
// bounds, never forming the joint transition matrix: for each joint
// action, P v is the Kronecker product of the component rows applied by
// successive mode products, O(n·Σ_k nnz_k/n_k) each, and joint actions
// share their prefixes in a depth-first walk of the action tree. A sweep
// costs O(n · Σ_k nnz_k/n_k · Π_{j<=k} m_j) for m_j actions of component j;
// memory is O(n·K) per worker. It stops when γ/(1-γ)·span(Tv - v) is at
// most Tol/2 (the bounds are then widened by a rounding allowance).
func Solve(ctx context.Context, sys *Machine, s *Settings) (*Result, error) {
	if err := sys.Validate(); err != nil {
		return nil, err
	}
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
	j := newJoint(sys)
	set.Workers = min(set.Workers, max(1, j.acts[0]*safeActs(j, 1)))
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
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		if err := j.sweep(ctx, v, states); err != nil {
			return nil, err
		}
		st := states[0]
		lo, hi := math.Inf(1), math.Inf(-1)
		for s := range j.n {
			d := st.best[s] - v[s]
			lo, hi = min(lo, d), max(hi, d)
		}
		if math.IsNaN(hi-lo) || math.IsInf(hi-lo, 0) {
			return nil, errNonFinite
		}
		gap := g / (1 - g) * (hi - lo)
		if set.Progress != nil {
			set.Progress(optimize.Progress{Method: optimize.ValueIteration, Iteration: sweep, Gap: gap})
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
			lo, hi = math.Inf(1), math.Inf(-1)
			for s := range j.n {
				d := st.best[s] - v[s]
				lo, hi = min(lo, d), max(hi, d)
			}
			r.Sweeps = sweep + 1
			r.finish(j, v, st, lo, hi, prevLower)
			return r, nil
		}
		copy(v, st.best)
	}
}

func safeActs(j *joint, i int) int {
	if i < j.k {
		return j.acts[i]
	}
	return 1
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

// newJointLayout computes only the strides of a system (cheap).
func newJointLayout(sys *Machine) *joint {
	j := &joint{sys: sys, k: len(sys.Components), n: 1, nActs: 1}
	for _, c := range sys.Components {
		j.dims = append(j.dims, len(c.Model.States))
		j.acts = append(j.acts, len(c.Model.Actions))
	}
	j.strides = make([]int, j.k)
	j.aStride = make([]int, j.k)
	for i := j.k - 1; i >= 0; i-- {
		j.strides[i], j.aStride[i] = j.n, j.nActs
		j.n *= j.dims[i]
		j.nActs *= j.acts[i]
	}
	return j
}

var errNonFinite = errors.New("system: iteration produced a non-finite value")
