package optimize

import (
	"context"
	"fmt"
	"math"
	"slices"
)

// Status says whether a result is certified.
type Status int

const (
	// Certified: the proven gap is at most the tolerance.
	Certified Status = iota
	// NotCertified: the iteration cap was reached, or rounding kept the gap
	// above the tolerance; the bounds are the best found.
	NotCertified
)

func (s Status) String() string {
	if s == Certified {
		return "certified"
	}
	return "not certified"
}

// Result is the answer of Solve with its certificate.
type Result struct {
	Method Method
	Status Status
	// Tol is the tolerance the result was asked to meet.
	Tol float64
	// Iterations counts value-iteration sweeps, policy-iteration steps or
	// simplex solves (1) of the method that ran.
	Iterations int
	// Policy[s] is the advised action index in state s.
	Policy []int
	// Value[s] is the exact expected discounted cost of Policy from s,
	// found by a linear solve.
	Value []float64
	// Lower[s] <= v*(s) <= Upper[s] are proven bounds on the optimal value.
	Lower, Upper []float64
	// Gap is max_s Value[s] - Lower[s], a proven bound on what Policy can
	// lose against the optimum from any state.
	Gap float64
	// Residual is the Bellman residual max_s |(T Value)(s) - Value(s)|.
	Residual float64
	// Rounding is the allowance for floating-point rounding included in
	// the bounds: tolerances much below it cannot be proven.
	Rounding float64
	// Q[s][k] is the expected discounted cost of taking Choices[s][k] in s
	// once and following Policy after.
	Q [][]float64
	// RunnerUp[s] is the best action other than Policy[s], or -1 when s
	// has a single admissible action.
	RunnerUp []int
	// Margin[s] = Q of RunnerUp - Q of Policy: by how much the runner-up's
	// cost in s must fall before it becomes the advice. NaN when RunnerUp
	// is -1.
	Margin []float64
	// Ties lists the states where several actions are within the tie
	// tolerance of the best; TieTol is the tolerance used.
	Ties   []Tie
	TieTol float64
}

// Tie is a state where several actions are equally good within the tie
// tolerance. Actions holds their indices in increasing order; the advice is
// the first.
type Tie struct {
	State   int
	Actions []int
}

// Solve finds a policy of minimum expected discounted cost for p and
// certifies it (see Result). Whatever the method, the returned policy is
// evaluated exactly and bounded by the contraction property of the Bellman
// operator T: for any v, with d = Tv - v,
//
//	Tv + γ/(1-γ)·min d  <=  v*  <=  Tv + γ/(1-γ)·max d
//
// (MacQueen 1966; Puterman 1994, §6.6.3). Reaching the iteration cap is
// not an error: the result then has Status NotCertified. Errors are
// returned for invalid problems, numerical failure and cancellation.
func Solve(ctx context.Context, p *Problem, settings *Settings) (*Result, error) {
	if err := p.Validate(true); err != nil {
		return nil, err
	}
	s := settings.withDefaults(len(p.States))
	var (
		policy       []int
		lower, upper []float64
		iters        int
		err          error
	)
	switch s.Method {
	case ValueIteration:
		policy, lower, upper, iters, err = valueIteration(ctx, p, &s)
	case PolicyIteration:
		policy, iters, err = policyIteration(ctx, p, &s)
	case LinearProgram:
		policy, err = linearProgram(p)
		iters = 1
	default:
		return nil, fmt.Errorf("optimize: unknown method %v", s.Method)
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

// certify evaluates policy exactly, resolves ties by the lowest action
// index, and computes the bounds, gap, Q-values and runner-ups. lower and
// upper, if not nil, are bounds already proven by the solver; the result
// keeps the tighter of those and its own.
func certify(p *Problem, policy []int, lower, upper []float64, s *Settings) (*Result, error) {
	n := len(p.States)
	policy = slices.Clone(policy)
	var (
		v   []float64
		q   [][]float64
		tie float64
		err error
	)
	// Resolve ties by the documented rule and re-evaluate; a switch between
	// tied actions changes values by at most TieTol/(1-γ), so this settles
	// in a step or two.
	for round := 0; ; round++ {
		v, err = Evaluate(p, policy)
		if err != nil {
			return nil, err
		}
		q = qValues(p, v)
		tie = tieTol(s, v)
		if round == 3 || !preferFirst(p, q, tie, policy) {
			break
		}
	}
	r := &Result{
		Method: s.Method, Tol: s.Tol, Policy: policy, Value: v, Q: q, TieTol: tie,
		Lower: make([]float64, n), Upper: make([]float64, n),
		RunnerUp: make([]int, n), Margin: make([]float64, n),
	}
	g := p.Discount
	tv := make([]float64, n)
	lo, hi := math.Inf(1), math.Inf(-1)
	for st := range n {
		tv[st] = slices.Min(q[st])
		d := tv[st] - v[st]
		lo, hi = min(lo, d), max(hi, d)
		r.Residual = max(r.Residual, math.Abs(d))
	}
	round := roundingError(p, v) / (1 - g)
	r.Rounding = round
	for st := range n {
		r.Lower[st] = tv[st] + g/(1-g)*lo - round
		r.Upper[st] = min(v[st], tv[st]+g/(1-g)*hi) + round
		if lower != nil {
			r.Lower[st] = max(r.Lower[st], lower[st]-round)
		}
		if upper != nil {
			r.Upper[st] = min(r.Upper[st], upper[st]+round)
		}
		r.Lower[st] = min(r.Lower[st], v[st]-round)
		r.Upper[st] = max(r.Upper[st], r.Lower[st])
		r.Gap = max(r.Gap, v[st]-r.Lower[st])

		r.RunnerUp[st], r.Margin[st], r.Ties = runnerUp(p, q, tie, st, policy[st], r.Ties)
	}
	r.Status = Certified
	if !(r.Gap <= s.Tol) {
		r.Status = NotCertified
	}
	return r, nil
}

// qValues returns Q[s][k] = cost + γ·E[v(next)] for every choice.
func qValues(p *Problem, v []float64) [][]float64 {
	q := make([][]float64, len(p.Choices))
	for s, cs := range p.Choices {
		q[s] = make([]float64, len(cs))
		for k, c := range cs {
			q[s][k] = c.Cost + p.Discount*Expect(c.Next, v)
		}
	}
	return q
}

func tieTol(s *Settings, v []float64) float64 {
	if s.TieTol > 0 {
		return s.TieTol
	}
	scale := 1.0
	for _, x := range v {
		scale = max(scale, math.Abs(x))
	}
	return DefaultTieTol * scale
}

// preferFirst applies the tie rule of every method: where the action of
// policy is within tie of the best Q-value, it becomes the lowest-index
// action within tie of the best. Elsewhere the policy is left alone (that
// would be an improvement step, not tie resolution). It reports whether
// anything changed.
func preferFirst(p *Problem, q [][]float64, tie float64, policy []int) bool {
	changed := false
	for s, cs := range p.Choices {
		best := slices.Min(q[s])
		if q[s][p.Find(s, policy[s])] > best+tie {
			continue
		}
		for k, c := range cs {
			if q[s][k] <= best+tie {
				if policy[s] != c.Action {
					policy[s] = c.Action
					changed = true
				}
				break
			}
		}
	}
	return changed
}

// roundingError bounds the float64 rounding in one application of the
// Bellman operator at v: each Q-value is a sum of at most m+1 products, each
// with relative error below ε = 2⁻⁵², so (m+3)·ε·(max|c| + max|v|)
// dominates the accumulated error (N. J. Higham, Accuracy and Stability of
// Numerical Algorithms, 2nd ed., SIAM 2002, §3.1: |fl(Σ) - Σ| <= m·u·Σ|terms|
// to first order). The discounted bounds divide differences of such sums
// by 1-γ, and so their allowance.
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
	return RoundingAllowance(m, cmax, vmax)
}

// RoundingAllowance bounds the float64 rounding of one Bellman update
// whose sums have at most entries products, with costs and values at most
// maxCost and maxValue in absolute value: (entries+3)·ε·(maxCost +
// maxValue), ε = 2⁻⁵² (Higham 2002, §3.1, as for roundingError).
func RoundingAllowance(entries int, maxCost, maxValue float64) float64 {
	const eps = 0x1p-52
	return float64(entries+3) * eps * (maxCost + maxValue)
}
