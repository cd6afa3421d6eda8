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

// Separate solves every component alone (see componentProblem) and
// returns their results: the policies a planner would use without
// grouping work.
func (sys *Machine) Separate(ctx context.Context) ([]*optimize.Result, error) {
	out := make([]*optimize.Result, len(sys.Components))
	for i := range sys.Components {
		r, err := optimize.Solve(ctx, sys.componentProblem(i), &optimize.Settings{Method: optimize.PolicyIteration})
		if err != nil {
			return nil, fmt.Errorf("system: component %q alone: %w", sys.Components[i].Name, err)
		}
		out[i] = r
	}
	return out, nil
}

// SeparateStart returns Σ_k v_k(x_k), the sum of the separate components'
// values: a good first iterate for the joint value iteration.
func (sys *Machine) SeparateStart(sep []*optimize.Result) []float64 {
	j := newJointLayout(sys)
	v := make([]float64, j.n)
	for s := range v {
		for i, r := range sep {
			v[s] += r.Value[j.coord(s, i)]
		}
	}
	return v
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
// iterative policy evaluation: its transition operator is the Kronecker
// product of the component matrices, so one sweep is K mode products. It
// stops when the MacQueen bracket is narrower than tol.
func (sys *Machine) EvaluateProduct(ctx context.Context, policies [][]int, start []float64, tol float64) (*ProductEvaluation, error) {
	j := newJoint(sys)
	c := make([]float64, j.n)
	for s := range j.n {
		c[s] = j.base[s]
		worked := false
		for i := range j.k {
			x := j.coord(s, i)
			a := policies[i][x]
			c[s] += j.acost[i][a][x]
			worked = worked || a != j.passive[i]
		}
		if worked {
			c[s] += sys.Shutdown
		}
		if math.IsInf(c[s], 0) {
			return nil, fmt.Errorf("system: product policy takes an inadmissible action in joint state %d", s)
		}
	}
	v := make([]float64, j.n)
	copy(v, start)
	a, b := make([]float64, j.n), make([]float64, j.n)
	g := sys.Discount.Factor()
	for sweep := 1; sweep <= optimize.DefaultValueSweeps; sweep++ {
		if sweep%16 == 1 {
			if err := ctx.Err(); err != nil {
				return nil, err
			}
		}
		copy(a, v)
		for i := range j.k {
			j.modeProductPolicy(b, a, i, policies[i])
			a, b = b, a
		}
		lo, hi := math.Inf(1), math.Inf(-1)
		for s := range j.n {
			tv := c[s] + g*a[s]
			d := tv - v[s]
			lo, hi = min(lo, d), max(hi, d)
			a[s] = tv
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

// modeProductPolicy is modeProduct with the action chosen per condition of
// component i by policy.
func (j *joint) modeProductPolicy(out, in []float64, i int, policy []int) {
	r := j.strides[i]
	block := r * j.dims[i]
	for l := 0; l < j.n; l += block {
		for x := range j.dims[i] {
			dst := out[l+x*r : l+x*r+r]
			clear(dst)
			for _, e := range j.rows[i][policy[x]][x] {
				src := in[l+e.To*r : l+e.To*r+r]
				for t := range dst {
					dst[t] += e.P * src[t]
				}
			}
		}
	}
}

// Flatten returns the joint model as an explicit optimize.Problem (every joint
// state and admissible joint action with its Kronecker row), for checking
// the structured solver on small systems. It refuses more than maxStates
// joint states.
func (sys *Machine) Flatten(maxStates int) (*optimize.Problem, error) {
	if err := sys.Validate(); err != nil {
		return nil, err
	}
	j := newJoint(sys)
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

// Cost estimates what Solve needs: memory in bytes for the
// given number of workers, and arithmetic operations per sweep.
func Cost(sys *Machine, workers int) (bytes, opsPerSweep float64) {
	n, acts := sys.Size()
	k := float64(len(sys.Components))
	// Per worker: K+1 product and K+1 cost buffers of n float64, best and
	// second best (n float64 and n int32 each). Shared: v, the result's
	// five n-vectors, two policies, the base costs.
	perWorker := (2*(k+1)+2)*8*n + 2*4*n
	bytes = float64(max(workers, 1))*perWorker + 8*8*n + 2*4*n
	nodes, prefix := 0.0, 1.0
	for _, c := range sys.Components {
		nnz := 0
		rows := 0
		for _, a := range c.Model.Actions {
			for _, r := range a.Rows {
				nnz += len(r)
				if r != nil {
					rows++
				}
			}
		}
		prefix *= float64(len(c.Model.Actions))
		nodes += prefix * (2 + float64(nnz)/float64(max(rows, 1)))
	}
	return bytes, n * (nodes + acts)
}
