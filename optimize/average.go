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
	Method     Method
	Status     Status
	Tol        float64
	Iterations int
	Policy     []int
	// Gain is the long-run average cost per period of Policy, the same
	// from every state.
	Gain float64
	// GainLower <= g* <= GainUpper are proven bounds on the optimal gain.
	GainLower, GainUpper float64
	// Bias[s] is the relative value h(s) of Policy, normalised so that
	// Bias[Ref] = 0: g + h = c_π + P_π h.
	Bias []float64
	Ref  int
	// Q[s][k] = c(s, Choices[s][k]) + Σ_j P(j) h(j), the test quantity of
	// policy improvement.
	Q        [][]float64
	RunnerUp []int
	Margin   []float64
	Ties     []Tie
	TieTol   float64
}

// MultichainError reports that the average cost per period is not the
// same from every state: under Policy the chain has several closed
// classes, so the long-run cost depends on where a unit starts.
type MultichainError struct {
	Policy  []int
	Classes [][]int
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
		parts[i] = "{" + strings.Join(names, ", ") + "}"
	}
	return fmt.Sprintf("optimize: the long-run average cost is not well defined: under the best policy found the chain has %d closed classes %s, so the average cost depends on the starting condition; use the discounted criterion, or make the classes reachable from one another (e.g. by a replacement action)",
		len(e.Classes), strings.Join(parts, ", "))
}

// policyChain returns the chain of a policy of p.
func (p *Problem) policyChain(policy []int) condition.Chain {
	rows := make([][]condition.Entry, len(p.States))
	for s, a := range policy {
		rows[s] = p.Choices[s][p.Find(s, a)].Next
	}
	return condition.Chain{Rows: rows}
}

// SolveAverage minimises the long-run average cost per period (the
// average-cost optimality equation g + h = min_a { c + P h }), with the
// bias normalised to 0 in state 0 (the best condition).
//
// It runs Howard's policy iteration for unichain models (Howard 1960, Ch. 4;
// Puterman 1994, §8.6), evaluating each policy exactly by a linear solve.
// If a policy with several closed classes turns up, it switches to
// relative value iteration on the aperiodic transform P' = (P + I)/2
// (Puterman 1994, §8.5.4), which has the same gain. Whatever the path, the
// answer carries the bounds min_s (Th - h)(s) <= g* <= max_s (Th - h)(s),
// valid for any h (Odoni 1969). When the best policy found has several
// closed classes, the criterion is not well defined and a
// *MultichainError explains why.
func SolveAverage(ctx context.Context, p *Problem, settings *Settings) (*AverageResult, error) {
	if err := p.Validate(false); err != nil {
		return nil, err
	}
	s := settings.withDefaults(len(p.States))
	const ref = 0
	policy, iters, err := averagePolicyIteration(ctx, p, &s, ref, nil)
	method := PolicyIteration
	if _, multi := err.(*MultichainError); multi {
		policy, iters, err = relativeValueIteration(ctx, p, &s, ref)
		method = ValueIteration
	}
	if err != nil {
		return nil, err
	}
	r, err := certifyAverage(p, policy, ref, &s)
	if err != nil {
		return nil, err
	}
	r.Method, r.Iterations = method, iters
	return r, nil
}

// evaluateAverage solves g + h = c_π + P_π h with h[ref] = 0 by LU; it
// returns a *MultichainError when the policy's chain has several closed
// classes (the system is then singular).
func evaluateAverage(p *Problem, policy []int, ref int) (float64, []float64, error) {
	classes, err := p.policyChain(policy).ClosedClasses()
	if err != nil {
		return 0, nil, err
	}
	if len(classes) > 1 {
		return 0, nil, &MultichainError{Policy: slices.Clone(policy), Classes: classes, States: p.States}
	}
	n := len(p.States)
	// Unknowns: x[j] = h[j] for j != ref, x[ref] = g.
	a := mat.NewDense(n, n, nil)
	b := mat.NewVecDense(n, nil)
	for s := range n {
		c := p.Choices[s][p.Find(s, policy[s])]
		a.Set(s, ref, 1)
		if s != ref {
			a.Set(s, s, a.At(s, s)+1)
		}
		for _, e := range c.Next {
			if e.To != ref {
				a.Set(s, e.To, a.At(s, e.To)-e.P)
			}
		}
		b.SetVec(s, c.Cost)
	}
	var lu mat.LU
	lu.Factorize(a)
	var x mat.VecDense
	if err := lu.SolveVecTo(&x, false, b); err != nil {
		return 0, nil, fmt.Errorf("optimize: average-cost evaluation: %w", err)
	}
	h := make([]float64, n)
	for j := range n {
		if j != ref {
			h[j] = x.AtVec(j)
		}
	}
	g := x.AtVec(ref)
	if math.IsNaN(g) || math.IsInf(g, 0) {
		return 0, nil, errNonFinite
	}
	return g, h, nil
}

// averageStep is one policy-iteration step, for tests against published
// iterates.
type averageStep struct {
	Policy []int
	Gain   float64
	Bias   []float64
}

// averagePolicyIteration is Howard's policy iteration for the average
// criterion from the least-immediate-cost policy. If path is not nil, each
// evaluated policy is appended to it.
func averagePolicyIteration(ctx context.Context, p *Problem, s *Settings, ref int, path *[]averageStep) ([]int, int, error) {
	n := len(p.States)
	policy := make([]int, n)
	greedy(p, make([]float64, n), policy, make([]float64, n))
	for step := 1; ; step++ {
		if err := ctx.Err(); err != nil {
			return nil, step, err
		}
		g, h, err := evaluateAverage(p, policy, ref)
		if err != nil {
			return nil, step, err
		}
		if path != nil {
			*path = append(*path, averageStep{Policy: slices.Clone(policy), Gain: g, Bias: h})
		}
		tie := tieTol(p, s, append(slices.Clone(h), g), 1)
		changed := 0
		worst := 0.0
		for st, cs := range p.Choices {
			cur := p.Find(st, policy[st])
			qCur := cs[cur].Cost + Expect(cs[cur].Next, h)
			best, arg := qCur, policy[st]
			for _, c := range cs {
				if q := c.Cost + Expect(c.Next, h); q < best {
					best, arg = q, c.Action
				}
			}
			worst = max(worst, qCur-best)
			if best < qCur-tie {
				policy[st] = arg
				changed++
			}
		}
		s.progress(PolicyIteration, step, worst)
		if changed == 0 || step >= s.MaxIterations {
			return policy, step, nil
		}
	}
}

// relativeValueIteration iterates w <- T'w - (T'w)(ref) on the aperiodic
// transform P' = (P + I)/2 until the gain bounds min/max (T'w - w) are
// within Tol, then returns the greedy policy. A span that never closes
// means the optimal gain differs between states: that surfaces in
// certifyAverage as a *MultichainError or an uncertified result.
func relativeValueIteration(ctx context.Context, p *Problem, s *Settings, ref int) ([]int, int, error) {
	n := len(p.States)
	w := make([]float64, n)
	tw := make([]float64, n)
	policy := make([]int, n)
	maxSweeps := max(s.MaxIterations, DefaultValueSweeps)
	for sweep := 1; ; sweep++ {
		if sweep%64 == 1 {
			if err := ctx.Err(); err != nil {
				return nil, sweep, err
			}
		}
		lo, hi := math.Inf(1), math.Inf(-1)
		for st, cs := range p.Choices {
			best, arg := math.Inf(1), -1
			for _, c := range cs {
				if q := c.Cost + 0.5*Expect(c.Next, w); q < best {
					best, arg = q, c.Action
				}
			}
			tw[st] = best + 0.5*w[st]
			policy[st] = arg
			d := tw[st] - w[st]
			lo, hi = min(lo, d), max(hi, d)
		}
		if math.IsNaN(hi-lo) || math.IsInf(hi-lo, 0) {
			return nil, sweep, errNonFinite
		}
		s.progress(ValueIteration, sweep, hi-lo)
		if hi-lo <= s.Tol/2 || sweep >= maxSweeps {
			return policy, sweep, nil
		}
		off := tw[ref]
		for st := range n {
			w[st] = tw[st] - off
		}
	}
}

// certifyAverage evaluates policy exactly, applies the tie rule, and
// computes the gain bounds, Q-values, runner-ups and margins.
func certifyAverage(p *Problem, policy []int, ref int, s *Settings) (*AverageResult, error) {
	policy = slices.Clone(policy)
	var (
		g   float64
		h   []float64
		q   [][]float64
		tie float64
		err error
	)
	for round := 0; ; round++ {
		if g, h, err = evaluateAverage(p, policy, ref); err != nil {
			return nil, err
		}
		q = make([][]float64, len(p.Choices))
		for st, cs := range p.Choices {
			q[st] = make([]float64, len(cs))
			for k, c := range cs {
				q[st][k] = c.Cost + Expect(c.Next, h)
			}
		}
		tie = tieTol(p, s, append(slices.Clone(h), g), 1)
		if round == 3 || !preferFirst(p, q, tie, policy) {
			break
		}
	}
	n := len(p.States)
	r := &AverageResult{Tol: s.Tol, Policy: policy, Gain: g, Bias: h, Ref: ref, Q: q, TieTol: tie,
		RunnerUp: make([]int, n), Margin: make([]float64, n)}
	lo, hi := math.Inf(1), math.Inf(-1)
	for st := range n {
		d := slices.Min(q[st]) - h[st]
		lo, hi = min(lo, d), max(hi, d)
		r.RunnerUp[st], r.Margin[st], r.Ties = runnerUp(p, q, tie, st, policy[st], r.Ties)
	}
	round := roundingError(p, append(slices.Clone(h), g))
	r.GainLower, r.GainUpper = min(lo, g)-round, max(hi, g)+round
	r.Status = Certified
	if !(r.GainUpper-r.GainLower <= s.Tol) {
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
