package optimize

import (
	"context"
	"fmt"
	"math"
	"slices"
	"strings"

	"gonum.org/v1/gonum/mat"

	"fixpoint/condition"
)

// AverageResult is the answer of SolveAverage: a policy of least long-run
// average cost per period, its gain and bias, and proven bounds on the
// optimal gain.
type AverageResult struct {
	Method Method
	Status Status
	// Shortfall says why Status is NotCertified: IterationCap or
	// RoundingFloor.
	Shortfall  Shortfall
	Tol        float64
	Iterations int
	Policy     []int
	// Gain is the long-run average cost per period of Policy from state
	// Ref. The gain from every start lies in [GainLower, GainUpper], and
	// SolveAverage refuses models where the optimal gain differs between
	// starts by more than Tol/2.
	Gain float64
	// GainLower <= g*(s) <= GainUpper for every state s are proven bounds
	// on the optimal gain.
	GainLower, GainUpper float64
	// Bias[s] is the bias of Policy (the h with g + h = c_π + P_π h and
	// P*_π h = 0, Puterman 1994, §8.2.1) shifted so that Bias[Ref] = 0:
	// Bias[s] - Bias[t] is the limit of the difference between the expected
	// total costs over N periods from s and from t (in the Cesàro sense
	// for periodic chains), also across closed classes.
	Bias []float64
	Ref  int
	// Classes are the closed classes of Policy's chain, each in increasing
	// state order: one for a unichain policy, several when several
	// conditions hold a unit for ever at the same gain.
	Classes [][]int
	// Q[s][k] = c(s, Choices[s][k]) + Σ_j P(j) h(j), the test quantity of
	// policy improvement.
	Q        [][]float64
	RunnerUp []int
	Margin   []float64
	Ties     []Tie
	TieTol   float64
}

// MultichainError reports that the optimal average cost per period is not
// the same from every state: under the optimal Policy the chain has
// several closed classes whose gains differ, so the long-run cost depends
// on where a unit starts.
type MultichainError struct {
	Policy  []int
	Classes [][]int
	// Gains[s] is the optimal gain from state s.
	Gains []float64
	// States names the states, for the message.
	States []string
}

func (e *MultichainError) Error() string {
	parts := make([]string, len(e.Classes))
	for i, cls := range e.Classes {
		names := make([]string, len(cls))
		for k, s := range cls {
			names[k] = e.States[s]
		}
		parts[i] = fmt.Sprintf("%.6g in {%s}", e.Gains[cls[0]], strings.Join(names, ", "))
	}
	return fmt.Sprintf("optimize: the long-run average cost depends on the starting condition: under the best policy it is %s per period; use the discounted criterion, or make the classes reachable from one another (e.g. by a replacement action)",
		strings.Join(parts, ", "))
}

// policyChain returns the chain of a policy of p.
func (p *Problem) policyChain(policy []int) condition.Chain {
	rows := make([][]condition.Entry, len(p.States))
	for s, a := range policy {
		rows[s] = p.Choices[s][p.Find(s, a)].Next
	}
	return condition.Chain{Rows: rows}
}

// SolveAverage minimises the long-run average cost per period by
// multichain policy iteration (Howard 1960, Ch. 4; Puterman 1994, §9.2),
// which also covers unichain models: each policy is evaluated exactly
// (gain g and bias h, see evaluateAverage), and improved first on the
// gain, to an action of least Σ_j P(j|s,a) g(j), and where no gain
// improves, on c(s,a) + Σ_j P(j|s,a) h(j) among the actions of least gain;
// an action is kept unless another beats it by more than the tie
// tolerance (capped at Tol/4 here). Each step costs O(n³).
//
// When the optimal gains differ between states by more than Tol/2, the
// criterion is not well defined and a *MultichainError says so. Otherwise
// the answer carries the bounds min_s (Th - h)(s) <= g*(s') <= max_s
// (Th - h)(s) for every s', valid for any h and any model (Odoni 1969: for
// every policy σ, g_σ = P*_σ c_σ >= P*_σ (h - P_σ h + min(Th - h)) =
// min(Th - h), and the greedy policy of h attains the upper bound).
func SolveAverage(ctx context.Context, p *Problem, settings *Settings) (*AverageResult, error) {
	if err := p.Validate(false); err != nil {
		return nil, err
	}
	s := settings.withDefaults(len(p.States))
	const ref = 0
	policy, iters, capped, err := averagePolicyIteration(ctx, p, &s, ref, nil)
	if err != nil {
		return nil, err
	}
	r, err := certifyAverage(ctx, p, policy, ref, &s, capped)
	if err != nil {
		return nil, err
	}
	r.Method, r.Iterations = PolicyIteration, iters
	return r, nil
}

// averageEval is the gain and bias of one policy.
type averageEval struct {
	g, h    []float64
	classes [][]int
}

// evaluateAverage solves the multichain evaluation equations of policy
// (Puterman 1994, §8.2 and §9.2.1)
//
//	(I - P) g = 0,   g + (I - P) h = c,   P* h = 0,
//
// class by class. On each closed class C (found on the graph of P), with
// stationary distribution π_C (GTH, condition.Chain.Stationary), the gain
// is the constant π_C·c and the bias solves (I - P_C + 1π_C) h = c - g,
// whose matrix is non-singular for an irreducible class (Kemeny & Snell
// 1960, §4.3, the fundamental matrix Z = (I - P + 1π)⁻¹). On the transient
// states T, (I - P_TT) g_T = P_TR g_R and (I - P_TT) h_T = c_T - g_T +
// P_TR h_R, by condition.Chain.SolveTransient; P*h = 0 then holds there
// too, since P* of a transient state mixes the classes' π. Cost O(n³).
func evaluateAverage(p *Problem, policy []int) (*averageEval, error) {
	n := len(p.States)
	chain := p.policyChain(policy)
	classes, err := chain.ClosedClasses()
	if err != nil {
		return nil, err
	}
	cost := make([]float64, n)
	for s := range n {
		cost[s] = p.Choices[s][p.Find(s, policy[s])].Cost
	}
	ev := &averageEval{g: make([]float64, n), h: make([]float64, n), classes: classes}
	recurrent := make([]bool, n)
	for _, cls := range classes {
		if err := ev.class(chain, cls, cost); err != nil {
			return nil, err
		}
		for _, s := range cls {
			recurrent[s] = true
		}
	}
	var transient []int
	for s := range n {
		if !recurrent[s] {
			transient = append(transient, s)
		}
	}
	if len(transient) == 0 {
		return ev, nil
	}
	// Right-hand sides: the weight of the rows leaving T, divided by the
	// row sums as SolveTransient divides Q.
	bg, bh := make([]float64, len(transient)), make([]float64, len(transient))
	for i, s := range transient {
		sum := 0.0
		for _, e := range chain.Rows[s] {
			sum += e.P
		}
		for _, e := range chain.Rows[s] {
			if recurrent[e.To] {
				bg[i] += e.P / sum * ev.g[e.To]
				bh[i] += e.P / sum * ev.h[e.To]
			}
		}
	}
	gT, err := chain.SolveTransient(transient, bg)
	if err != nil {
		return nil, fmt.Errorf("optimize: average-cost evaluation: %w", err)
	}
	for i, s := range transient {
		ev.g[s] = gT[i]
		bh[i] += cost[s] - gT[i]
	}
	hT, err := chain.SolveTransient(transient, bh)
	if err != nil {
		return nil, fmt.Errorf("optimize: average-cost evaluation: %w", err)
	}
	for i, s := range transient {
		ev.h[s] = hT[i]
	}
	for s := range n {
		if math.IsNaN(ev.g[s]+ev.h[s]) || math.IsInf(ev.g[s]+ev.h[s], 0) {
			return nil, errNonFinite
		}
	}
	return ev, nil
}

// class fills in the gain and bias of one closed class cls of chain.
func (ev *averageEval) class(chain condition.Chain, cls []int, cost []float64) error {
	k := len(cls)
	pos := make(map[int]int, k)
	for i, s := range cls {
		pos[s] = i
	}
	sub := condition.Chain{Rows: make([][]condition.Entry, k)}
	for i, s := range cls {
		for _, e := range chain.Rows[s] {
			if j, ok := pos[e.To]; ok && e.P > 0 {
				sub.Rows[i] = append(sub.Rows[i], condition.Entry{To: j, P: e.P})
			}
		}
	}
	pi, err := sub.Stationary()
	if err != nil {
		return fmt.Errorf("optimize: average-cost evaluation: %w", err)
	}
	g := 0.0
	for i, s := range cls {
		g += pi[i] * cost[s]
	}
	// (I - P_C + 1π) h = c - g.
	a := mat.NewDense(k, k, nil)
	b := mat.NewVecDense(k, nil)
	for i, s := range cls {
		a.Set(i, i, 1)
		for j := range k {
			a.Set(i, j, a.At(i, j)+pi[j])
		}
		for _, e := range sub.Rows[i] {
			a.Set(i, e.To, a.At(i, e.To)-e.P)
		}
		b.SetVec(i, cost[s]-g)
	}
	var lu mat.LU
	lu.Factorize(a)
	var x mat.VecDense
	if err := lu.SolveVecTo(&x, false, b); err != nil {
		return fmt.Errorf("optimize: average-cost evaluation: %w", err)
	}
	for i, s := range cls {
		ev.g[s], ev.h[s] = g, x.AtVec(i)
	}
	return nil
}

// relativeTo returns h - h[ref].
func relativeTo(h []float64, ref int) []float64 {
	out := make([]float64, len(h))
	for s, x := range h {
		out[s] = x - h[ref]
	}
	return out
}

// averageStep is one policy-iteration step, for tests against published
// iterates.
type averageStep struct {
	Policy []int
	Gain   float64
	Bias   []float64
}

// averagePolicyIteration is multichain policy iteration (Puterman 1994,
// §9.2.1) from the least-immediate-cost policy; on unichain models it is
// Howard's. If path is not nil, each evaluated policy is appended to it,
// with the gain from ref and the bias shifted to 0 at ref. capped says that
// it stopped at MaxIterations with switches pending.
func averagePolicyIteration(ctx context.Context, p *Problem, s *Settings, ref int, path *[]averageStep) ([]int, int, bool, error) {
	n := len(p.States)
	policy := make([]int, n)
	greedy(p, make([]float64, n), policy, make([]float64, n))
	for step := 1; ; step++ {
		if err := ctx.Err(); err != nil {
			return nil, step, false, err
		}
		ev, err := evaluateAverage(p, policy)
		if err != nil {
			return nil, step, false, err
		}
		if path != nil {
			*path = append(*path, averageStep{Policy: slices.Clone(policy), Gain: ev.g[ref], Bias: relativeTo(ev.h, ref)})
		}
		tie := tieTol(p, s, append(slices.Clone(ev.h), ev.g...), 0.5)
		// Gain step: an action of least expected next gain.
		changed := 0
		for st, cs := range p.Choices {
			cur := p.Find(st, policy[st])
			gCur := Expect(cs[cur].Next, ev.g)
			best, arg := gCur, policy[st]
			for _, c := range cs {
				if x := Expect(c.Next, ev.g); x < best {
					best, arg = x, c.Action
				}
			}
			if best < gCur-tie {
				policy[st] = arg
				changed++
			}
		}
		// Bias step, where no gain improves: the least test quantity among
		// the actions of least gain.
		worst := 0.0
		if changed == 0 {
			for st, cs := range p.Choices {
				cur := p.Find(st, policy[st])
				gCur := Expect(cs[cur].Next, ev.g)
				qCur := cs[cur].Cost + Expect(cs[cur].Next, ev.h)
				best, arg := qCur, policy[st]
				for _, c := range cs {
					if Expect(c.Next, ev.g) > gCur+tie {
						continue
					}
					if q := c.Cost + Expect(c.Next, ev.h); q < best {
						best, arg = q, c.Action
					}
				}
				worst = max(worst, qCur-best)
				if best < qCur-tie {
					policy[st] = arg
					changed++
				}
			}
		}
		s.progress(PolicyIteration, step, worst)
		if changed == 0 || step >= s.MaxIterations {
			return policy, step, changed > 0, nil
		}
	}
}

// certifyAverage evaluates policy exactly, refuses it with a
// *MultichainError when its gains differ by more than Tol/2 (and policy
// iteration converged), applies the tie rule, and computes the gain
// bounds, Q-values, runner-ups and margins.
func certifyAverage(ctx context.Context, p *Problem, policy []int, ref int, s *Settings, capped bool) (*AverageResult, error) {
	policy = slices.Clone(policy)
	var (
		ev  *averageEval
		q   [][]float64
		tie float64
		err error
	)
	for round := 0; ; round++ {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		if ev, err = evaluateAverage(p, policy); err != nil {
			return nil, err
		}
		if span := slices.Max(ev.g) - slices.Min(ev.g); !capped && span > s.Tol/2 {
			return nil, &MultichainError{Policy: policy, Classes: ev.classes, Gains: ev.g, States: p.States}
		}
		q = make([][]float64, len(p.Choices))
		for st, cs := range p.Choices {
			q[st] = make([]float64, len(cs))
			for k, c := range cs {
				q[st][k] = c.Cost + Expect(c.Next, ev.h)
			}
		}
		tie = tieTol(p, s, append(slices.Clone(ev.h), ev.g...), 0.5)
		if round == 3 || !preferFirst(p, q, tie, policy) {
			break
		}
	}
	n := len(p.States)
	h := relativeTo(ev.h, ref)
	r := &AverageResult{Tol: s.Tol, Policy: policy, Gain: ev.g[ref], Bias: h, Ref: ref, Classes: ev.classes,
		Q: q, TieTol: tie, RunnerUp: make([]int, n), Margin: make([]float64, n)}
	lo, hi := math.Inf(1), math.Inf(-1)
	for st := range n {
		d := slices.Min(q[st]) - ev.h[st]
		lo, hi = min(lo, d), max(hi, d)
		r.RunnerUp[st], r.Margin[st], r.Ties = runnerUp(p, q, tie, st, policy[st], r.Ties)
	}
	round := roundingError(p, append(slices.Clone(ev.h), ev.g...))
	r.GainLower, r.GainUpper = min(lo, slices.Min(ev.g))-round, max(hi, slices.Max(ev.g))+round
	r.Status, r.Shortfall = Certified, NoShortfall
	switch {
	case r.GainUpper-r.GainLower <= s.Tol:
	case capped:
		r.Shortfall = IterationCap
	default:
		r.Shortfall = RoundingFloor
	}
	if r.Shortfall != NoShortfall {
		r.Status = NotCertified
	}
	return r, nil
}

// runnerUp returns the best action other than chosen in state st with its
// margin over the chosen one (-1 and NaN when there is none), and appends
// a Tie to ties when several actions are within tie of the chosen one.
func runnerUp(p *Problem, q [][]float64, tie float64, st, chosen int, ties []Tie) (int, float64, []Tie) {
	k0 := p.Find(st, chosen)
	best, margin := -1, math.NaN()
	var tied []int
	for k, c := range p.Choices[st] {
		if q[st][k] <= q[st][k0]+tie {
			tied = append(tied, c.Action)
		}
		if k == k0 {
			continue
		}
		if best < 0 || q[st][k]-q[st][k0] < margin {
			best, margin = c.Action, q[st][k]-q[st][k0]
		}
	}
	if len(tied) > 1 {
		ties = append(ties, Tie{State: st, Actions: tied})
	}
	return best, margin, ties
}
