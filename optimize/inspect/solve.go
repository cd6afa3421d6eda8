package inspect

import (
	"context"
	"fmt"
	"math"
	"slices"

	"fixpoint/optimize"
)

// Result is the answer of Solve with its certificate.
type Result struct {
	Method optimize.Method
	Status optimize.Status
	// Tol is the tolerance the result was asked to meet, in currency units.
	Tol float64
	// Iterations counts value-iteration sweeps, policy-iteration steps or
	// simplex solves (1) of the method that ran.
	Iterations int
	// Policy[s] is the position in Problem.Choices[s] of the advised
	// decision; Action[s] and Interval[s] (periods) spell it out.
	Policy, Action, Interval []int
	// Value[s] is the exact expected discounted cost of the advice from an
	// epoch in s, found by a linear solve.
	Value []float64
	// Lower[s] <= v*(s) <= Upper[s] are proven bounds on the optimal value.
	Lower, Upper []float64
	// Gap is max_s Value[s] - Lower[s], a proven bound on what the advice
	// can lose against the optimum from any state.
	Gap float64
	// Residual is the Bellman residual max_s |(T Value)(s) - Value(s)|.
	Residual float64
	// Rounding is the allowance for floating-point rounding included in
	// the bounds.
	Rounding float64
	// ModulusLow and Modulus are β_lo and β, the least and greatest
	// E[γ^τ] over all decisions: γ^K <= β_lo <= β <= γ.
	ModulusLow, Modulus float64
	// Q[s][i] is the expected discounted cost of taking Choices[s][i] at
	// an epoch in s and following the advice after.
	Q [][]float64
	// RunnerUp[s] is the position of the best decision other than the
	// advice, or -1 when s has one decision; Margin[s] = Q of RunnerUp - Q
	// of the advice (NaN without a runner-up). Margin >= -Gap always (up
	// to Rounding): where the runner-up is better by δ,
	// Lower <= v* <= T v_π <= v_π - δ.
	RunnerUp []int
	Margin   []float64
	// Ties lists the states where several decisions are within TieTol of
	// the advice.
	Ties   []Tie
	TieTol float64
}

// Tie is a state where several decisions are equally good within the tie
// tolerance. Choices holds their positions in Problem.Choices[State] in
// increasing order; the advice is the first.
type Tie struct {
	State   int
	Choices []int
}

// Solve finds a policy of least expected discounted cost for p and
// certifies it. Whatever the method (settings.Method: value iteration,
// policy iteration or the linear program; Auto picks policy iteration up
// to optimize.AutoPolicyStates states), the returned policy is evaluated
// exactly and bounded by the Porteus bounds of the package comment:
// with d = T v - v at v = v_π, lo = min d, hi = max d,
//
//	Tv + lo·f(lo < 0 ? β : β_lo)  <=  v*  <=  Tv + hi·f(hi < 0 ? β_lo : β),  f(b) = b/(1-b).
//
// Ties are resolved in favour of the lowest (action, interval), within the
// tie tolerance min(TieTol, (1-β)·Tol/2), so a switch between tied
// decisions costs at most Tol/2. Reaching the iteration cap is Status
// NotCertified, not an error; errors are for invalid problems, non-finite
// numbers and cancellation. A nil settings means the defaults of
// optimize.Settings.
func Solve(ctx context.Context, p *Problem, settings *optimize.Settings) (*Result, error) {
	if err := p.Validate(); err != nil {
		return nil, err
	}
	s := settings.WithDefaults(len(p.States))
	var (
		policy       []int
		lower, upper []float64
		iters        int
		err          error
	)
	switch s.Method {
	case optimize.ValueIteration:
		policy, lower, upper, iters, err = valueIteration(ctx, p, &s)
	case optimize.PolicyIteration:
		policy, iters, err = policyIteration(ctx, p, &s)
	case optimize.LinearProgram:
		policy, err = linearProgram(p)
		iters = 1
	default:
		return nil, fmt.Errorf("inspect: unknown method %v", s.Method)
	}
	if err != nil {
		return nil, err
	}
	r, err := certify(p, policy, lower, upper, &s)
	if err != nil {
		return nil, err
	}
	r.Iterations = iters
	return r, nil
}

func progress(s *optimize.Settings, m optimize.Method, it int, gap float64) {
	if s.Progress != nil {
		s.Progress(optimize.Progress{Method: m, Iteration: it, Gap: gap})
	}
}

// modulus holds β_lo and β, the least and greatest kernel sums.
type modulus struct{ lo, hi float64 }

func newModulus(p *Problem) modulus {
	lo, hi := p.modulus()
	return modulus{lo, hi}
}

// series returns b/(1-b) = Σ_{n>=1} b^n.
func series(b float64) float64 { return b / (1 - b) }

// lower is the Porteus lower bound at one state: Tv(s) + lo·Σ_{n>=1}M^n 1
// bounded below, with the factor at β_lo when lo >= 0 and at β when lo < 0.
func (m modulus) lower(tv, lo float64) float64 {
	if lo >= 0 {
		return tv + lo*series(m.lo)
	}
	return tv + lo*series(m.hi)
}

// upper is the Porteus upper bound at one state, the mirror of lower.
func (m modulus) upper(tv, hi float64) float64 {
	if hi >= 0 {
		return tv + hi*series(m.hi)
	}
	return tv + hi*series(m.lo)
}

// span is upper - lower, the same in every state.
func (m modulus) span(lo, hi float64) float64 { return m.upper(0, hi) - m.lower(0, lo) }

// certify evaluates policy exactly, applies the tie rule, and computes the
// bounds, gap, Q-values and runner-ups. lower and upper, if not nil, are
// bounds already proven by the solver; the result keeps the tighter.
func certify(p *Problem, policy []int, lower, upper []float64, s *optimize.Settings) (*Result, error) {
	n := len(p.States)
	mod := newModulus(p)
	policy = slices.Clone(policy)
	var (
		v   []float64
		q   [][]float64
		tie float64
		err error
	)
	// A switch between tied decisions changes values by at most
	// tie/(1-β) <= Tol/2, so this settles in a step or two.
	for round := 0; ; round++ {
		if v, err = p.Evaluate(policy); err != nil {
			return nil, err
		}
		q = qValues(p, v)
		tie = tieTol(s, v, mod.hi)
		if round == 3 || !preferFirst(q, tie, policy) {
			break
		}
	}
	r := &Result{
		Method: s.Method, Tol: s.Tol, Policy: policy, Value: v, Q: q, TieTol: tie,
		ModulusLow: mod.lo, Modulus: mod.hi,
		Action: make([]int, n), Interval: make([]int, n),
		Lower: make([]float64, n), Upper: make([]float64, n),
		RunnerUp: make([]int, n), Margin: make([]float64, n),
	}
	tv := make([]float64, n)
	lo, hi := math.Inf(1), math.Inf(-1)
	for st := range n {
		tv[st] = slices.Min(q[st])
		d := tv[st] - v[st]
		lo, hi = min(lo, d), max(hi, d)
		r.Residual = max(r.Residual, math.Abs(d))
	}
	round := roundingError(p, v) / (1 - mod.hi)
	r.Rounding = round
	for st := range n {
		c := p.Choices[st][policy[st]]
		r.Action[st], r.Interval[st] = c.Action, c.Interval
		r.Lower[st] = mod.lower(tv[st], lo) - round
		r.Upper[st] = min(v[st], mod.upper(tv[st], hi)) + round
		if lower != nil {
			r.Lower[st] = max(r.Lower[st], lower[st]-round)
		}
		if upper != nil {
			r.Upper[st] = min(r.Upper[st], upper[st]+round)
		}
		r.Lower[st] = min(r.Lower[st], v[st]-round)
		r.Upper[st] = max(r.Upper[st], r.Lower[st])
		r.Gap = max(r.Gap, v[st]-r.Lower[st])
		r.RunnerUp[st], r.Margin[st] = runnerUp(q[st], policy[st])
		if tied := tiedWith(q[st], policy[st], tie); len(tied) > 1 {
			r.Ties = append(r.Ties, Tie{State: st, Choices: tied})
		}
	}
	r.Status = optimize.Certified
	if !(r.Gap <= s.Tol) {
		r.Status = optimize.NotCertified
	}
	return r, nil
}

// qValues returns Q[s][i] = c(s,d_i) + Σ_j M_{d_i}(j) v(j).
func qValues(p *Problem, v []float64) [][]float64 {
	q := make([][]float64, len(p.Choices))
	for s, cs := range p.Choices {
		q[s] = make([]float64, len(cs))
		for i := range cs {
			q[s][i] = qValue(&cs[i], v)
		}
	}
	return q
}

func qValue(c *Choice, v []float64) float64 {
	sum := c.Cost
	for _, e := range c.Next {
		sum += e.P * v[e.To]
	}
	return sum
}

// tieTol is Settings.TieTol, or optimize.DefaultTieTol·max(1, max|v|),
// capped at (1-β)·Tol/2.
func tieTol(s *optimize.Settings, v []float64, beta float64) float64 {
	tie := s.TieTol
	if tie <= 0 {
		scale := 1.0
		for _, x := range v {
			scale = max(scale, math.Abs(x))
		}
		tie = optimize.DefaultTieTol * scale
	}
	return min(tie, (1-beta)*s.Tol/2)
}

// preferFirst applies the tie rule: where the advice is within tie of the
// best Q-value, it becomes the first decision within tie of the best. It
// reports whether anything changed.
func preferFirst(q [][]float64, tie float64, policy []int) bool {
	changed := false
	for s, qs := range q {
		best := slices.Min(qs)
		if qs[policy[s]] > best+tie {
			continue
		}
		first := slices.IndexFunc(qs, func(x float64) bool { return x <= best+tie })
		if first != policy[s] {
			policy[s] = first
			changed = true
		}
	}
	return changed
}

// runnerUp returns the position of the best decision other than chosen and
// its margin over the chosen one, or -1 and NaN.
func runnerUp(qs []float64, chosen int) (int, float64) {
	best, margin := -1, math.NaN()
	for i, x := range qs {
		if i != chosen && (best < 0 || x-qs[chosen] < margin) {
			best, margin = i, x-qs[chosen]
		}
	}
	return best, margin
}

// tiedWith returns the decisions within tie of the chosen one.
func tiedWith(qs []float64, chosen int, tie float64) []int {
	var tied []int
	for i, x := range qs {
		if x <= qs[chosen]+tie {
			tied = append(tied, i)
		}
	}
	return tied
}

// roundingError is optimize.RoundingAllowance at v: each Q-value sums at
// most m+1 products for kernels of at most m entries.
func roundingError(p *Problem, v []float64) float64 {
	m, cmax, vmax := 0, 0.0, 0.0
	for _, cs := range p.Choices {
		for _, c := range cs {
			m = max(m, len(c.Next))
			cmax = max(cmax, math.Abs(c.Cost))
		}
	}
	for _, x := range v {
		vmax = max(vmax, math.Abs(x))
	}
	return optimize.RoundingAllowance(m, cmax, vmax)
}
