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
	// NotCertified: the gap stayed above the tolerance; Result.Shortfall
	// says why, and the bounds are the best found.
	NotCertified
)

func (s Status) String() string {
	if s == Certified {
		return "certified"
	}
	return "not certified"
}

// Shortfall says why a result is not certified, so that a caller can name
// the remedy that fits.
type Shortfall int

const (
	// NoShortfall: the result is certified.
	NoShortfall Shortfall = iota
	// IterationCap: the method stopped at Settings.MaxIterations (sweeps of
	// value iteration, steps of policy iteration, pivots of the simplex
	// method) before its own stopping rule held. Remedy: raise the cap, or
	// use policy iteration.
	IterationCap
	// RoundingFloor: the method's stopping rule held, but the allowance
	// for floating-point rounding at these values and this discount factor
	// (Result.Rounding, about ε·(max|c| + max|v|)/(1-γ)) keeps the gap above
	// the tolerance: a tolerance below about 2·Rounding cannot be proven in
	// float64. Remedy: loosen the tolerance, or state the costs in larger
	// units; raising the cap or changing the method does not help.
	RoundingFloor
	// TieLoss: an explicit Settings.TieTol let the tie rule choose actions
	// that lose more than the tolerance allows (a tie tolerance τ can cost
	// up to τ/(1-γ)). Remedy: lower TieTol or leave it at its default,
	// which never does this.
	TieLoss
	// MethodAccuracy: the simplex method stopped at its reduced-cost
	// tolerance with a policy whose exact evaluation misses the
	// tolerance by more than rounding explains. Remedy: use policy
	// iteration.
	MethodAccuracy
)

var shortfallNames = [...]string{NoShortfall: "none", IterationCap: "iteration cap",
	RoundingFloor: "rounding floor", TieLoss: "tie loss", MethodAccuracy: "method accuracy"}

func (s Shortfall) String() string {
	if s >= 0 && int(s) < len(shortfallNames) {
		return shortfallNames[s]
	}
	return fmt.Sprintf("Shortfall(%d)", int(s))
}

// Result is the answer of Solve with its certificate.
type Result struct {
	Method Method
	Status Status
	// Shortfall says why Status is NotCertified (NoShortfall when
	// certified).
	Shortfall Shortfall
	// Tol is the tolerance the result was asked to meet.
	Tol float64
	// Iterations counts value-iteration sweeps, policy-iteration steps or
	// simplex solves (1) of the method that ran; Pivots counts the
	// simplex pivots of the LP method (0 for the others).
	Iterations int
	Pivots     int
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
	// tolerance of the best; TieTol is the tolerance used (see
	// Settings.TieTol for its default and cap).
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
		pivots       int
		capped       bool
		err          error
	)
	switch s.Method {
	case ValueIteration:
		policy, lower, upper, iters, capped, err = valueIteration(ctx, p, &s)
	case PolicyIteration:
		policy, iters, capped, err = policyIteration(ctx, p, &s)
	case LinearProgram:
		policy, pivots, capped, err = linearProgram(ctx, p, &s)
		iters = 1
	default:
		return nil, fmt.Errorf("optimize: unknown method %v", s.Method)
	}
	if err != nil {
		return nil, err
	}
	r, err := certify(ctx, p, policy, lower, upper, &s, capped)
	if err != nil {
		return nil, err
	}
	r.Iterations, r.Pivots = iters, pivots
	return r, nil
}

// certify evaluates policy exactly, resolves ties by the lowest action
// index, and computes the bounds, gap, Q-values and runner-ups. lower and
// upper, if not nil, are bounds already proven by the solver; the result
// keeps the tighter of those and its own. capped says that the solver
// stopped at its iteration cap before its own stopping rule held.
//
// Why a gap above Tol: the solvers stop when their own bound is within
// Tol/2 (value iteration) or when no switch gains more than the tie
// tolerance τ <= (1-γ)·Tol/2 (policy iteration), so without a cap the gap
// is at most Tol/2 + Rounding + the rounding of d = Tv - v, itself at most
// Rounding; a larger gap is put down to the simplex's reduced-cost
// tolerance.
func certify(ctx context.Context, p *Problem, policy []int, lower, upper []float64, s *Settings, capped bool) (*Result, error) {
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
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		v, err = Evaluate(p, policy)
		if err != nil {
			return nil, err
		}
		q = qValues(p, v)
		tie = tieTol(p, s, v, 1-p.Discount)
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
	// The tie rule's own loss: the policy is at most -lo worse than greedy
	// in one step, so at most -lo/(1-γ) in value.
	tieLoss := -lo / (1 - g)
	r.Status, r.Shortfall = Certified, NoShortfall
	switch {
	case r.Gap <= s.Tol:
	case capped:
		r.Shortfall = IterationCap
	case s.TieTol > 0 && tieLoss > s.Tol/2 && -lo <= tie:
		r.Shortfall = TieLoss
	case r.Gap <= s.Tol/2+4*round:
		r.Shortfall = RoundingFloor
	default:
		r.Shortfall = MethodAccuracy
	}
	if r.Shortfall != NoShortfall {
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

// tieTol returns the tie tolerance τ at values v, for a criterion whose
// value loss per unit of one-step loss is 1/weight (weight = 1-γ when
// discounted, 1 for the average criterion). An explicit Settings.TieTol is
// used as given. The default is DefaultTieTol·max(1, max|v|), capped at
// weight·Tol/2 and floored at the rounding bound of one Q-value,
// roundingError(p, v).
//
// The cap: a policy that in each state takes an action within τ of the
// best Q-value has d = Tv - v_π >= -τ, so by the bound of Solve it loses at
// most τ + γτ/(1-γ) = τ/(1-γ) against the optimum; τ <= (1-γ)·Tol/2 keeps
// that within half the tolerance, and the advice is never worse than the
// runner-up by more than the stated gap (its margin is >= -τ). The floor:
// Q-values closer than their rounding cannot be told apart, and a tie
// rule below that would let the method decide; its loss is then within
// Result.Rounding.
func tieTol(p *Problem, s *Settings, v []float64, weight float64) float64 {
	if s.TieTol > 0 {
		return s.TieTol
	}
	scale := 1.0
	for _, x := range v {
		scale = max(scale, math.Abs(x))
	}
	return max(roundingError(p, v), min(DefaultTieTol*scale, weight*s.Tol/2))
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
