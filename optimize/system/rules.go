package system

import (
	"context"
	"fmt"
	"math"
	"slices"

	"fixpoint/condition"
	"fixpoint/optimize"
)

// componentProblem is component i alone: its own costs, plus the shutdown
// cost whenever it gets non-passive work, plus the down cost while it is
// unsafe (when the system charges it).
func (sys *Machine) componentProblem(i int) *optimize.Problem {
	c := sys.Components[i]
	m := c.Model
	p := &optimize.Problem{States: m.StateNames(), Actions: m.ActionNames(), Discount: sys.Discount.Factor(), Choices: make([][]optimize.Choice, len(m.States))}
	for x, st := range m.States {
		for a, act := range m.Actions {
			if !act.Admissible(x) || (act.Passive && st.Unsafe) {
				continue
			}
			cost := c.Costs.Running[x] + c.Costs.Action[a][x]
			if !act.Passive {
				cost += sys.Shutdown
			}
			if st.Unsafe && sys.DownOnUnsafe {
				cost += sys.Down
			}
			p.Choices[x] = append(p.Choices[x], optimize.Choice{Action: a, Cost: cost, Next: act.Rows[x]})
		}
	}
	return p
}

// Separate solves every component alone (see componentProblem) by policy
// iteration and returns their results: the policies a planner would use
// without grouping work.
func (sys *Machine) Separate(ctx context.Context) ([]*optimize.Result, error) {
	out := make([]*optimize.Result, len(sys.Components))
	for i := range sys.Components {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		r, err := optimize.Solve(ctx, sys.componentProblem(i), &optimize.Settings{Method: optimize.PolicyIteration})
		if err != nil {
			return nil, fmt.Errorf("system: component %q alone: %w", sys.Components[i].Name, err)
		}
		out[i] = r
	}
	return out, nil
}

// SeparateStart returns v0(s) = Σ_k v_k(x_k), the sum of the separate
// components' values (sep from Separate): a good first iterate for the
// joint value iteration, within (K-1)·(Shutdown + Down) of its first
// Bellman update (see Machine.Estimate). O(n·K), cancellable.
func (sys *Machine) SeparateStart(ctx context.Context, sep []*optimize.Result) ([]float64, error) {
	if len(sep) != len(sys.Components) {
		return nil, fmt.Errorf("system: %d separate results for %d components", len(sep), len(sys.Components))
	}
	j := newJointLayout(sys)
	v := make([]float64, j.n)
	err := j.eachState(ctx, func(s int, xs []int) {
		for i, r := range sep {
			v[s] += r.Value[xs[i]]
		}
	})
	if err != nil {
		return nil, err
	}
	return v, nil
}

// ProductEvaluation is the value of a product policy (each component's
// action a function of its own condition) in the joint system, with proven
// bounds.
type ProductEvaluation struct {
	Value, Lower, Upper []float64
	Sweeps              int
}

// EvaluateProduct evaluates the product policy policies[k][x] in the joint
// system (shutdown charged once per period with work, down cost once) by
// iterative policy evaluation from start (nil for zero): its transition
// operator is the Kronecker product of the component matrices, so one
// sweep is K mode products, O(n·Σ_k (1 + nnz_k/n_k)). It stops when the
// MacQueen bracket γ/(1-γ)·span(T_π v - v) is at most tol, and looks at
// ctx every few thousand joint states.
func (sys *Machine) EvaluateProduct(ctx context.Context, policies [][]int, start []float64, tol float64) (*ProductEvaluation, error) {
	if err := sys.Validate(); err != nil {
		return nil, err
	}
	j, err := newJoint(ctx, sys)
	if err != nil {
		return nil, err
	}
	if len(policies) != j.k {
		return nil, fmt.Errorf("system: %d component policies for %d components", len(policies), j.k)
	}
	for i, pol := range policies {
		if len(pol) != j.dims[i] {
			return nil, fmt.Errorf("system: component %q: policy has %d actions, want one per state (%d)", sys.Components[i].Name, len(pol), j.dims[i])
		}
		for x, a := range pol {
			if a < 0 || a >= j.acts[i] || j.rows[i][a][x] == nil {
				return nil, fmt.Errorf("system: component %q: policy takes action %d, inadmissible in state %d", sys.Components[i].Name, a, x)
			}
		}
	}
	if start != nil && len(start) != j.n {
		return nil, fmt.Errorf("system: start has %d values, want one per joint state (%d)", len(start), j.n)
	}
	c := make([]float64, j.n)
	err = j.eachState(ctx, func(s int, xs []int) {
		c[s] = j.base[s]
		worked := false
		for i, x := range xs {
			a := policies[i][x]
			c[s] += j.acost[i][a][x]
			worked = worked || a != j.passive[i]
		}
		if worked {
			c[s] += sys.Shutdown
		}
	})
	if err != nil {
		return nil, err
	}
	rows := make([][][]condition.Entry, j.k)
	for i, pol := range policies {
		rows[i] = make([][]condition.Entry, j.dims[i])
		for x, a := range pol {
			rows[i][x] = j.rows[i][a][x]
		}
	}
	v := make([]float64, j.n)
	copy(v, start)
	a, b := make([]float64, j.n), make([]float64, j.n)
	g := sys.Discount.Factor()
	p := &poll{ctx: ctx}
	for sweep := 1; sweep <= optimize.DefaultValueSweeps; sweep++ {
		copy(a, v)
		for i := range j.k {
			if err := j.modeProduct(p, b, a, i, rows[i]); err != nil {
				return nil, err
			}
			a, b = b, a
		}
		lo, hi := math.Inf(1), math.Inf(-1)
		for s := range j.n {
			tv := c[s] + g*a[s]
			d := tv - v[s]
			lo, hi = min(lo, d), max(hi, d)
			a[s] = tv
		}
		if math.IsNaN(hi-lo) || math.IsInf(hi-lo, 0) {
			return nil, errNonFinite
		}
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		if g/(1-g)*(hi-lo) <= tol || sweep == optimize.DefaultValueSweeps {
			out := &ProductEvaluation{Value: make([]float64, j.n), Lower: make([]float64, j.n), Upper: make([]float64, j.n), Sweeps: sweep}
			for s := range j.n {
				out.Lower[s] = a[s] + g/(1-g)*lo
				out.Upper[s] = a[s] + g/(1-g)*hi
				out.Value[s] = (out.Lower[s] + out.Upper[s]) / 2
			}
			return out, nil
		}
		copy(v, a)
	}
	return nil, errNonFinite
}

// Flatten returns the joint model as an explicit optimize.Problem (every joint
// state and admissible joint action with its Kronecker row), for checking
// the structured solver on small systems. It refuses more than maxStates
// joint states, and looks at ctx once per joint state.
func (sys *Machine) Flatten(ctx context.Context, maxStates int) (*optimize.Problem, error) {
	if err := sys.Validate(); err != nil {
		return nil, err
	}
	if n, _ := sys.Size(); n > float64(maxStates) {
		return nil, fmt.Errorf("system: %g joint states, more than %d to flatten", n, maxStates)
	}
	j, err := newJoint(ctx, sys)
	if err != nil {
		return nil, err
	}
	if j.n > maxStates {
		return nil, fmt.Errorf("system: %d joint states, more than %d to flatten", j.n, maxStates)
	}
	p := &optimize.Problem{Discount: sys.Discount.Factor(), Choices: make([][]optimize.Choice, j.n)}
	for s := range j.n {
		p.States = append(p.States, sys.StateName(s))
	}
	for a := range j.nActs {
		p.Actions = append(p.Actions, sys.ActionName(a))
	}
	for s := range j.n {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		for a := range j.nActs {
			cost := j.base[s]
			row := []condition.Entry{{To: 0, P: 1}}
			ok := true
			for i := range j.k {
				x, ai := j.coord(s, i), j.actionOf(a, i)
				if j.rows[i][ai][x] == nil {
					ok = false
					break
				}
				cost += j.acost[i][ai][x]
				var next []condition.Entry
				for _, e := range row {
					for _, f := range j.rows[i][ai][x] {
						next = append(next, condition.Entry{To: e.To + f.To*j.strides[i], P: e.P * f.P})
					}
				}
				row = next
			}
			if !ok {
				continue
			}
			if j.worked(a) {
				cost += sys.Shutdown
			}
			slices.SortFunc(row, func(x, y condition.Entry) int { return x.To - y.To })
			p.Choices[s] = append(p.Choices[s], optimize.Choice{Action: a, Cost: cost, Next: mergeEntries(row)})
		}
	}
	return p, nil
}

// mergeEntries adds the probabilities of repeated targets of a sorted row.
func mergeEntries(row []condition.Entry) []condition.Entry {
	out := row[:0]
	for _, e := range row {
		if k := len(out) - 1; k >= 0 && out[k].To == e.To {
			out[k].P += e.P
			continue
		}
		out = append(out, e)
	}
	return out
}

// AloneRule is what the joint policy does to one component when every
// other component is in its best condition: Actions[x] for each of its
// conditions x.
type AloneRule struct {
	Component int
	Actions   []int
}

// GroupRule says that when the machine is stopped for Trigger (in
// TriggerState, the best condition in which it is worked on alone, the
// others as new), the joint policy also works on Component in the
// conditions Extra, where alone it would be left: Actions[x] is
// Component's action in each of its conditions in that situation.
type GroupRule struct {
	Trigger, TriggerState int
	Component             int
	Actions               []int
	Extra                 []int
}

// Rules summarises a joint policy: for each component its alone rule, and
// every grouping of work that the shared shutdown brings about. The rules
// look at joint states where the components not named are as new; the
// full joint table holds every case.
func (sys *Machine) Rules(policy []int32) ([]AloneRule, []GroupRule) {
	k := len(sys.Components)
	best := make([]int, k)
	alone := make([]AloneRule, k)
	for i, c := range sys.Components {
		alone[i] = AloneRule{Component: i, Actions: make([]int, len(c.Model.States))}
		for x := range c.Model.States {
			xs := slices.Clone(best)
			xs[i] = x
			alone[i].Actions[x] = sys.ActionCoords(int(policy[sys.Index(xs)]))[i]
		}
	}
	var groups []GroupRule
	for jt, cj := range sys.Components {
		trigger := -1
		for x, a := range alone[jt].Actions {
			if a != cj.Model.Passive() {
				trigger = x
				break
			}
		}
		if trigger < 0 {
			continue
		}
		for i, ci := range sys.Components {
			if i == jt {
				continue
			}
			g := GroupRule{Trigger: jt, TriggerState: trigger, Component: i, Actions: make([]int, len(ci.Model.States))}
			for x := range ci.Model.States {
				xs := slices.Clone(best)
				xs[jt], xs[i] = trigger, x
				g.Actions[x] = sys.ActionCoords(int(policy[sys.Index(xs)]))[i]
				if alone[i].Actions[x] == ci.Model.Passive() && g.Actions[x] != ci.Model.Passive() {
					g.Extra = append(g.Extra, x)
				}
			}
			if len(g.Extra) > 0 {
				groups = append(groups, g)
			}
		}
	}
	return alone, groups
}

// ComponentActions lists, for each component i and each of its conditions
// x, the component actions (ascending) that the joint policy takes for i
// in some joint state where i is in x: what the joint advice may do to a
// component in that condition, whatever the others' conditions.
func (sys *Machine) ComponentActions(ctx context.Context, policy []int32) ([][][]int, error) {
	j := newJointLayout(sys)
	seen := make([][][]bool, j.k)
	for i := range seen {
		seen[i] = make([][]bool, j.dims[i])
		for x := range seen[i] {
			seen[i][x] = make([]bool, j.acts[i])
		}
	}
	for s, a := range policy {
		if s%4096 == 0 {
			if err := ctx.Err(); err != nil {
				return nil, err
			}
		}
		for i := range j.k {
			seen[i][j.coord(s, i)][j.actionOf(int(a), i)] = true
		}
	}
	out := make([][][]int, j.k)
	for i := range seen {
		out[i] = make([][]int, j.dims[i])
		for x, used := range seen[i] {
			for a, ok := range used {
				if ok {
					out[i][x] = append(out[i][x], a)
				}
			}
		}
	}
	return out, nil
}
