package robust

import (
	"context"
	"errors"
	"fmt"
	"math"
	"slices"

	"fixpoint/condition"
	"fixpoint/optimize"
)

// Result is the answer of Solve with its certificate. Values are expected
// discounted costs in the currency of the problem, per starting state.
type Result struct {
	Kind   Kind
	Method optimize.Method
	Status optimize.Status
	// Tol is the tolerance the result was asked to meet.
	Tol float64
	// Iterations counts value-iteration sweeps or policy-iteration steps;
	// Evaluations counts the linear solves of the adversary's policy
	// iterations, O(n³) each.
	Iterations, Evaluations int
	// Policy[s] is the robust advice in state s.
	Policy []int
	// WorstCase[s] is a proven upper bound on the worst-case expected
	// discounted cost of Policy from s over every transition matrix in the
	// sets; it exceeds the exact worst case by at most EvalGap (plus
	// rounding). It is what the advice can be relied on not to exceed.
	WorstCase []float64
	// Attained[s] <= worst case <= WorstCase[s]: the exact cost of Policy
	// when the rows are Adversary, a matrix inside the sets.
	Attained []float64
	// Adversary[s] is the next-state row that nature picks against the
	// advice in s, a row of the set of (s, Policy[s]).
	Adversary [][]condition.Entry
	// EvalGap is max_s WorstCase[s] - Attained[s].
	EvalGap float64
	// Lower[s] <= v*(s) <= Upper[s] are proven bounds on the robust
	// optimum v*(s) = min over policies of the worst-case cost.
	Lower, Upper []float64
	// Gap is max_s WorstCase[s] - Lower[s], a proven bound on how much
	// Policy's worst case can exceed the robust optimum from any state.
	Gap float64
	// Residual is the robust Bellman residual max_s |(T Attained)(s) -
	// Attained(s)|.
	Residual float64
	// Rounding is the allowance for floating-point rounding included in
	// the bounds.
	Rounding float64
	// InnerTol is the tolerance to which each KL inner problem was solved,
	// in currency units (0 for L1, solved exactly).
	InnerTol float64
	// Q[s][k] is the worst-case cost of taking Choices[s][k] once and then
	// following Policy, at Attained: c(s,a) + γ·max_{q∈P(s,a)} q·Attained
	// (for KL, its upper bound, within γ·InnerTol).
	Q [][]float64
	// RunnerUp[s] is the best action other than Policy[s] (-1 when s has
	// one admissible action); Margin[s] = its Q minus the advice's, NaN
	// when RunnerUp is -1.
	RunnerUp []int
	Margin   []float64
	// Ties lists the states where several actions are within TieTol of the
	// best; the advice is the lowest action index among them.
	Ties   []optimize.Tie
	TieTol float64
}

// Solve finds a policy of least worst-case expected discounted cost for p
// when every row may be any member of its set in sets, and certifies it.
// The robust Bellman operator
//
//	(T v)(s) = min_a { c(s,a) + γ·max_{q∈P(s,a)} q·v }
//
// is monotone, a γ-contraction in the max norm and translation-equivariant
// (T(v + k·1) = T v + γ·k), so for any v, with d = T v - v,
//
//	T v + γ/(1-γ)·min d  <=  v*  <=  T v + γ/(1-γ)·max d
//
// (the argument of MacQueen 1966 and Puterman 1994, §6.6.3, uses only
// those three properties; Iyengar 2005, Theorem 3.2, for the contraction).
// For KL the inner maxima are known only to within InnerTol; the lower
// bound then uses the inner problems' feasible (primal) values and the
// upper bound their dual values, both valid, so no further widening is
// needed.
//
// Methods: ValueIteration sweeps v <- T v with those bounds; PolicyIteration
// is robust policy iteration (Iyengar 2005, §4): evaluate the policy
// against its worst case (below), switch every state to an action whose
// worst-case Q-value is lower by more than the tie tolerance, repeat. Its
// evaluation proceeds one adversary step at a time and switches as soon
// as a switch is sure to lower the worst case (by more than 2γ times the
// evaluation's remaining gap), which saves evaluations in early steps. Auto
// runs value iteration for about the cost of four evaluations (see
// autoSweeps) and, if its bounds are not yet within Tol/2, continues with
// policy iteration from its greedy policy; above optimize.AutoPolicyStates
// states it is value iteration. Result.Method names the method that
// finished and Result.Iterations counts sweeps and steps together.
// LinearProgram is not available.
//
// Whatever the method, the advice's worst case is then evaluated on the
// adversary's own MDP, where nature maximises cost over the sets for the
// fixed policy: policy iteration for nature, each step one exact linear
// solve of the chain of its current rows (a lower bound: a matrix in the
// sets) and the bound above for the fixed-policy operator (an upper
// bound), until they are within Tol/8. Ties are then resolved by the
// lowest action index within TieTol, and the advice is re-evaluated; the
// Gap is computed after that, so the tie rule can never make the advice
// worse than the runner-up by more than the Gap.
//
// Cost per sweep or improvement step: O(Σ k log k) over the rows (L1), or
// a few O(k) Newton steps per row (KL); each evaluation O(n³). Reaching
// the iteration cap gives Status NotCertified, not an error; errors are
// for invalid inputs, non-finite numbers and cancellation.
func Solve(ctx context.Context, p *optimize.Problem, sets *Sets, settings *optimize.Settings) (*Result, error) {
	m, s, err := prepare(p, sets, settings)
	if err != nil {
		return nil, err
	}
	return m.solve(ctx, &s, nil, nil)
}

// prepare checks and flattens p with its sets and fills in the settings.
func prepare(p *optimize.Problem, sets *Sets, settings *optimize.Settings) (*model, optimize.Settings, error) {
	m, err := newModel(p, sets)
	if err != nil {
		return nil, optimize.Settings{}, err
	}
	s, err := withDefaults(settings, len(p.States))
	return m, s, err
}

// withDefaults fills in the documented defaults of optimize.Settings.
func withDefaults(settings *optimize.Settings, n int) (optimize.Settings, error) {
	var s optimize.Settings
	if settings != nil {
		s = *settings
	}
	switch s.Method {
	case optimize.Auto:
		if n > optimize.AutoPolicyStates {
			s.Method = optimize.ValueIteration
		}
	case optimize.ValueIteration, optimize.PolicyIteration:
	default:
		return s, fmt.Errorf("robust: method %v is not available for robust solves, want value or policy", s.Method)
	}
	if s.Tol <= 0 {
		s.Tol = optimize.DefaultTol
	}
	if s.MaxIterations <= 0 {
		s.MaxIterations = optimize.DefaultPolicySteps
		if s.Method == optimize.ValueIteration {
			s.MaxIterations = optimize.DefaultValueSweeps
		}
	}
	return s, nil
}

// autoSweeps is Auto's budget of value-iteration sweeps before it turns to
// policy iteration: about four evaluations' worth, taking an O(n³) LU
// ((2/3)·n³ floating-point operations) as n³/40 sweep entries (the
// measured ratio of a sort-and-shift entry to an LU operation, on the
// benchmarks' machine, common practice, no source), and at least 100.
func (m *model) autoSweeps() int {
	n := float64(len(m.first) - 1)
	return max(100, int(4*n*n*n/40/float64(len(m.to))))
}

var errNonFinite = errors.New("robust: value iteration diverged to non-finite values")

// solve runs the method of s and certifies its policy; start, if not nil,
// is the first policy of policy iteration, and v0 the first iterate of
// value iteration (nil: zero).
func (m *model) solve(ctx context.Context, s *optimize.Settings, start []int, v0 []float64) (*Result, error) {
	m.setTol(s.Tol)
	var (
		policy       []int
		lower, upper []float64
		ev           *evaluation
		iters        int
		err          error
	)
	method := s.Method
	switch method {
	case optimize.ValueIteration:
		policy, lower, upper, iters, _, err = m.valueIteration(ctx, s, v0)
	case optimize.PolicyIteration:
		policy, ev, iters, err = m.policyIteration(ctx, s, start)
	default:
		// Auto: value iteration for about the cost of four evaluations,
		// then, if its bounds are not yet within Tol/2, policy iteration
		// from its greedy policy (the worst rows it found stay as the
		// adversary's warm start).
		vs := *s
		vs.MaxIterations = m.autoSweeps()
		var done bool
		method = optimize.ValueIteration
		policy, lower, upper, iters, done, err = m.valueIteration(ctx, &vs, v0)
		if err == nil && !done {
			var steps int
			method = optimize.PolicyIteration
			policy, ev, steps, err = m.policyIteration(ctx, s, policy)
			iters += steps
		}
	}
	if err != nil {
		return nil, err
	}
	r, err := m.certify(ctx, s, policy, ev, lower, upper)
	if err != nil {
		return nil, err
	}
	r.Method = method
	r.Iterations = iters
	r.Evaluations = m.evaluations
	return r, nil
}

// setTol sets the KL inner tolerance for a solve to tol: each inner
// problem to within ε = tol·(1-γ)/(32γ), so that inexact inner values move
// the bounds by at most γε/(1-γ) = tol/32, below the evaluation's target
// tol/8.
func (m *model) setTol(tol float64) {
	m.eps = tol * (1 - m.gamma) / (32 * m.gamma)
	m.evaluations = 0
}

// sweep computes, for every state, tvLo[s] <= (T v)(s) <= tvHi[s] and the
// greedy policy (first action of least upper Q-value), and stores each
// choice's worst row in adv (the warm start of the later evaluation).
func (m *model) sweep(v, tvLo, tvHi []float64, policy []int) {
	g := m.gamma
	for s := range tvHi {
		bestLo, bestHi, arg := math.Inf(1), math.Inf(1), -1
		for c := m.first[s]; c < m.first[s+1]; c++ {
			lo, hi := m.inner(c, v, m.adv[m.off[c]:m.off[c+1]])
			bestLo = min(bestLo, m.cost[c]+g*lo)
			if qh := m.cost[c] + g*hi; qh < bestHi {
				bestHi, arg = qh, m.action[c]
			}
		}
		tvLo[s], tvHi[s], policy[s] = bestLo, bestHi, arg
	}
}

// valueIteration runs v_{k+1} = T v_k from v0 (nil: zero) with the bounds of
// Solve, stopping when max_s (upper(s) - lower(s)) <= Tol/2 or after
// MaxIterations sweeps. It returns the greedy policy of the last iterate
// and the bounds, and whether they met Tol/2.
func (m *model) valueIteration(ctx context.Context, s *optimize.Settings, v0 []float64) (policy []int, lower, upper []float64, sweeps int, done bool, err error) {
	n := len(m.first) - 1
	g := m.gamma
	v := make([]float64, n)
	copy(v, v0)
	tvLo, tvHi := make([]float64, n), make([]float64, n)
	policy = make([]int, n)
	for sweeps = 1; ; sweeps++ {
		if err := ctx.Err(); err != nil {
			return nil, nil, nil, sweeps, false, err
		}
		m.sweep(v, tvLo, tvHi, policy)
		lo, hi, width := math.Inf(1), math.Inf(-1), 0.0
		for st := range n {
			lo, hi = min(lo, tvLo[st]-v[st]), max(hi, tvHi[st]-v[st])
			width = max(width, tvHi[st]-tvLo[st])
		}
		gap := width + g/(1-g)*(hi-lo)
		if math.IsNaN(gap) || math.IsInf(gap, 0) {
			return nil, nil, nil, sweeps, false, errNonFinite
		}
		if s.Progress != nil {
			s.Progress(optimize.Progress{Method: optimize.ValueIteration, Iteration: sweeps, Gap: gap})
		}
		if gap <= s.Tol/2 || sweeps >= s.MaxIterations {
			lower, upper = make([]float64, n), make([]float64, n)
			for st := range n {
				lower[st] = tvLo[st] + g/(1-g)*lo
				upper[st] = tvHi[st] + g/(1-g)*hi
			}
			return policy, lower, upper, sweeps, gap <= s.Tol/2, nil
		}
		v, tvHi = tvHi, v
	}
}

// policyIteration is robust policy iteration (Iyengar 2005, §4) from start
// (nil: the policy of least immediate cost). It returns the last policy
// and, when the policy did not change in the last step, its evaluation.
func (m *model) policyIteration(ctx context.Context, s *optimize.Settings, start []int) ([]int, *evaluation, int, error) {
	n := len(m.first) - 1
	g := m.gamma
	policy := make([]int, n)
	if start != nil {
		copy(policy, start)
	} else {
		for st := range n {
			best := math.Inf(1)
			for c := m.first[st]; c < m.first[st+1]; c++ {
				if m.cost[c] < best {
					best, policy[st] = m.cost[c], m.action[c]
				}
			}
		}
	}
	for step := 1; ; step++ {
		// Evaluate one adversary step at a time: a switch is taken as soon
		// as it is sure to improve the worst case (below), so early steps
		// seldom need the adversary's full policy iteration.
		ev, err := m.evaluate(ctx, policy, s.Tol/8, 1)
		if err != nil {
			return nil, nil, step, err
		}
		changed, worst := 0, 0.0
		for {
			tie := tieTol(s, ev.upper)
			// With w <= v_π <= w + gap, each worst-case Q-value at w is
			// within γ·(gap + ε) of its value at v_π (the inner maximum is
			// 1-Lipschitz in the max norm), so a switch by more than
			// 2γ·(gap + ε) lowers (T v_π)(s) below v_π(s) and, by
			// monotonicity, the worst case of the policy.
			margin := tie
			if !ev.done {
				margin += 2 * g * (ev.gap + m.eps)
			}
			changed, worst = 0, 0.0
			for st := range n {
				qCur, best, arg := math.NaN(), math.Inf(1), -1
				for c := m.first[st]; c < m.first[st+1]; c++ {
					_, hi := m.inner(c, ev.value, m.adv[m.off[c]:m.off[c+1]])
					q := m.cost[c] + g*hi
					if m.action[c] == policy[st] {
						qCur = q
					}
					if q < best {
						best, arg = q, m.action[c]
					}
				}
				worst = max(worst, qCur-best)
				if best < qCur-margin {
					policy[st] = arg
					changed++
				}
			}
			if changed > 0 || ev.done {
				break
			}
			if ev, err = m.evaluate(ctx, policy, s.Tol/8, 1); err != nil {
				return nil, nil, step, err
			}
		}
		if s.Progress != nil {
			s.Progress(optimize.Progress{Method: optimize.PolicyIteration, Iteration: step, Gap: worst/(1-g) + ev.gap})
		}
		if changed == 0 {
			return policy, ev, step, nil
		}
		if step >= s.MaxIterations {
			return policy, nil, step, nil
		}
	}
}

// dot returns Σ_i q[i]·v[to[i]].
func dot(to []int, q, v []float64) float64 {
	s := 0.0
	for i, j := range to {
		s += q[i] * v[j]
	}
	return s
}

// tieTol is Settings.TieTol, or optimize.DefaultTieTol·max(1, max|v|).
func tieTol(s *optimize.Settings, v []float64) float64 {
	if s.TieTol > 0 {
		return s.TieTol
	}
	scale := 1.0
	for _, x := range v {
		scale = max(scale, math.Abs(x))
	}
	return optimize.DefaultTieTol * scale
}

// certify evaluates policy's worst case (reusing ev when it is that
// policy's), applies the tie rule, and computes the bounds, gap, Q-values
// and runner-ups. lower and upper, if not nil, are bounds already proven
// by value iteration.
func (m *model) certify(ctx context.Context, s *optimize.Settings, policy []int, ev *evaluation, lower, upper []float64) (*Result, error) {
	n := len(policy)
	g := m.gamma
	policy = slices.Clone(policy)
	ql, qh := make([][]float64, n), make([][]float64, n)
	for st := range n {
		k := m.first[st+1] - m.first[st]
		ql[st], qh[st] = make([]float64, k), make([]float64, k)
	}
	var tie float64
	for round := 0; ; round++ {
		if ev == nil {
			var err error
			if ev, err = m.evaluate(ctx, policy, s.Tol/8, maxAdversarySteps); err != nil {
				return nil, err
			}
		}
		for st := range n {
			for c := m.first[st]; c < m.first[st+1]; c++ {
				lo, hi := m.inner(c, ev.value, nil)
				ql[st][c-m.first[st]] = m.cost[c] + g*lo
				qh[st][c-m.first[st]] = m.cost[c] + g*hi
			}
		}
		tie = tieTol(s, ev.upper)
		if round == 3 || !m.preferFirst(qh, tie, policy) {
			break
		}
		ev = nil
	}
	round := m.roundingError(ev.upper) / (1 - g)
	r := &Result{
		Kind: m.kind, Method: s.Method, Tol: s.Tol, Policy: policy,
		WorstCase: make([]float64, n), Attained: ev.value, Adversary: ev.rows,
		Lower: make([]float64, n), Upper: make([]float64, n), Rounding: round,
		Q: qh, RunnerUp: make([]int, n), Margin: make([]float64, n), TieTol: tie,
	}
	if m.kind == KL {
		r.InnerTol = m.eps
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	tlo, thi := make([]float64, n), make([]float64, n)
	for st := range n {
		tlo[st], thi[st] = slices.Min(ql[st]), slices.Min(qh[st])
		lo, hi = min(lo, tlo[st]-ev.value[st]), max(hi, thi[st]-ev.value[st])
		r.Residual = max(r.Residual, math.Abs(thi[st]-ev.value[st]))
	}
	for st := range n {
		r.WorstCase[st] = ev.upper[st]
		r.EvalGap = max(r.EvalGap, r.WorstCase[st]-ev.value[st])
		r.Lower[st] = tlo[st] + g/(1-g)*lo - round
		r.Upper[st] = min(r.WorstCase[st], thi[st]+g/(1-g)*hi+round)
		if lower != nil {
			r.Lower[st] = max(r.Lower[st], lower[st]-round)
			r.Upper[st] = min(r.Upper[st], upper[st]+round)
		}
		r.Lower[st] = min(r.Lower[st], r.WorstCase[st])
		r.Upper[st] = max(r.Upper[st], r.Lower[st])
		r.Gap = max(r.Gap, r.WorstCase[st]-r.Lower[st])
		r.RunnerUp[st], r.Margin[st], r.Ties = m.runnerUp(qh, tie, st, policy[st], r.Ties)
	}
	r.Status = optimize.Certified
	if !(r.Gap <= s.Tol) {
		r.Status = optimize.NotCertified
	}
	return r, nil
}

// preferFirst is the tie rule of optimize.Solve: where the policy's
// action is within tie of the best Q-value, it becomes the lowest-index
// action within tie of the best. It reports whether anything changed.
func (m *model) preferFirst(q [][]float64, tie float64, policy []int) bool {
	changed := false
	for s := range policy {
		best := slices.Min(q[s])
		cur := m.position(s, policy[s])
		if q[s][cur] > best+tie {
			continue
		}
		for k, x := range q[s] {
			if x <= best+tie {
				if a := m.action[m.first[s]+k]; a != policy[s] {
					policy[s] = a
					changed = true
				}
				break
			}
		}
	}
	return changed
}

// position returns the position of action a among the choices of s.
func (m *model) position(s, a int) int {
	for c := m.first[s]; c < m.first[s+1]; c++ {
		if m.action[c] == a {
			return c - m.first[s]
		}
	}
	return -1
}

// runnerUp returns the best action of st other than chosen, its margin,
// and ties with st appended when several actions are within tie of the
// chosen one.
func (m *model) runnerUp(q [][]float64, tie float64, st, chosen int, ties []optimize.Tie) (int, float64, []optimize.Tie) {
	k0 := m.position(st, chosen)
	best, margin := -1, math.NaN()
	var tied []int
	for k, x := range q[st] {
		a := m.action[m.first[st]+k]
		if x <= q[st][k0]+tie {
			tied = append(tied, a)
		}
		if k == k0 {
			continue
		}
		if best < 0 || x-q[st][k0] < margin {
			best, margin = a, x-q[st][k0]
		}
	}
	if len(tied) > 1 {
		ties = append(ties, optimize.Tie{State: st, Actions: tied})
	}
	return best, margin, ties
}

// roundingError bounds the float64 rounding of one application of the
// robust operator at v, to first order: each inner value is a sum of at
// most 2k+1 rounded products and differences (k the longest support), so
// (2k+4)·ε·(max|c| + max|v|) with ε = 2⁻⁵² dominates (N. J. Higham,
// Accuracy and Stability of Numerical Algorithms, 2nd ed., SIAM 2002,
// §3.1). The KL dual adds a logarithm and an exponential per entry, and is
// given twice that.
func (m *model) roundingError(v []float64) float64 {
	const eps = 0x1p-52
	cmax, vmax := 0.0, 0.0
	for _, c := range m.cost {
		cmax = max(cmax, math.Abs(c))
	}
	for _, x := range v {
		vmax = max(vmax, math.Abs(x))
	}
	k := float64(2*m.maxLen + 4)
	if m.kind == KL {
		k *= 2
	}
	return k * eps * (cmax + vmax)
}
