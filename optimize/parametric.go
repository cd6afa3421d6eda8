package optimize

import (
	"context"
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/mat"
)

// Segment is a range of discount factors over which one policy is
// optimal (ties resolved by the rule of Solve).
type Segment struct {
	Lo, Hi float64
	Policy []int
}

// Switch is a discount factor at which the advice in one state changes.
type Switch struct {
	Discount float64
	State    int
	// Below is the advice for discount factors just below Discount (higher
	// interest rates), Above the advice just above it.
	Below, Above int
}

// pathStep is how far past a breakpoint, relative to the range searched,
// the next policy is found: two breakpoints closer than that are reported
// as one.
const pathStep = 1e-10

// DiscountPath follows the optimal policy of p over the discount factors
// [lo, hi] (0 < lo < hi <= 1) and returns the segments of constant advice
// and the switches between them.
//
// The optimal policy is piecewise constant in γ (Blackwell 1962). From an
// optimal policy π at γ0, each reduced cost δ(s,b; γ) = c(s,b) +
// γ P_b v_π(γ) - v_π(γ)(s) is a rational function of γ, and δ·det(I - γP_π)
// is a polynomial of degree at most n (Cramer's rule). fixpoint samples
// those polynomials exactly at n+1 Chebyshev points of [γ0, hi] (one LU
// per point), and finds the first sign change from non-negative to
// negative by Chebyshev subdivision with the coefficient bound
// |c0| > Σ|ck| to exclude roots (Boyd 2014, Solving Transcendental
// Equations, SIAM, Ch. 2 and 6). There π stops being optimal; the next
// policy is found by policy iteration just past the breakpoint, and the
// search resumes. A breakpoint is polished by bisection on the reduced cost
// itself. Cost per segment: n+1 dense LU factorisations plus the
// subdivisions, O(n³) each. ctx is checked before every factorisation and
// every 16 subdivision steps (O(n²) each), so cancellation is seen within
// one LU of the largest problem.
func DiscountPath(ctx context.Context, p *Problem, lo, hi float64, settings *Settings) ([]Segment, []Switch, error) {
	if !(lo > 0 && lo < hi && hi <= 1) {
		return nil, nil, fmt.Errorf("optimize: discount range [%v, %v] is not inside (0, 1]", lo, hi)
	}
	q := *p
	q.Discount = lo
	if err := q.Validate(true); err != nil {
		return nil, nil, err
	}
	s := settings.withDefaults(len(p.States))
	s.Method = PolicyIteration
	// Just past a breakpoint the new action is better by a hair; policy
	// iteration there must not treat that as a tie.
	strict := s
	strict.TieTol = math.SmallestNonzeroFloat64
	policy, err := strictOptimum(ctx, p, lo, nil, &strict)
	if err != nil {
		return nil, nil, err
	}
	var segs []Segment
	from, g := lo, lo
	for len(segs) < 10000 {
		if err := ctx.Err(); err != nil {
			return nil, nil, err
		}
		next, err := nextBreak(ctx, p, policy, g, hi)
		if err != nil {
			return nil, nil, err
		}
		if next >= hi {
			segs = append(segs, Segment{Lo: from, Hi: hi, Policy: policy})
			return tieRule(ctx, p, segs, &s)
		}
		past := min(next+pathStep*(hi-lo), (next+hi)/2, math.Nextafter(1, 0))
		np, err := strictOptimum(ctx, p, past, policy, &strict)
		if err != nil {
			return nil, nil, err
		}
		if slices.Equal(np, policy) {
			// A touch, not a crossing: the policy stays optimal beyond.
			g = past
			continue
		}
		segs = append(segs, Segment{Lo: from, Hi: next, Policy: policy})
		policy, from, g = np, next, next
	}
	return nil, nil, fmt.Errorf("optimize: more than 10000 segments of constant advice; the model is degenerate")
}

// strictOptimum returns the optimal policy at discount factor g by policy
// iteration from start (nil: the least-immediate-cost policy).
func strictOptimum(ctx context.Context, p *Problem, g float64, start []int, s *Settings) ([]int, error) {
	q := *p
	q.Discount = g
	policy, _, _, err := policyIterationFrom(ctx, &q, s, start)
	return policy, err
}

// tieRule replaces each segment's policy by the one Solve reports at the
// segment's middle (the tie rule applied), merges neighbours that then
// agree, and lists the switches between segments.
func tieRule(ctx context.Context, p *Problem, segs []Segment, s *Settings) ([]Segment, []Switch, error) {
	var out []Segment
	for _, sg := range segs {
		q := *p
		q.Discount = (sg.Lo + sg.Hi) / 2
		r, err := certify(ctx, &q, sg.Policy, nil, nil, s, false)
		if err != nil {
			return nil, nil, err
		}
		sg.Policy = r.Policy
		if k := len(out) - 1; k >= 0 && slices.Equal(out[k].Policy, sg.Policy) {
			out[k].Hi = sg.Hi
			continue
		}
		out = append(out, sg)
	}
	var switches []Switch
	for i := 1; i < len(out); i++ {
		for st := range out[i].Policy {
			if a, b := out[i-1].Policy[st], out[i].Policy[st]; a != b {
				switches = append(switches, Switch{Discount: out[i].Lo, State: st, Below: a, Above: b})
			}
		}
	}
	return out, switches, ctx.Err()
}

// reducedCosts evaluates policy exactly at discount factor g and returns,
// for every non-policy choice (s, k) in pairs order, the reduced cost
// δ = Q(s,k) - v(s), the rounding scale |Q| + |v| of that difference, and
// log det(I - gP_π).
func reducedCosts(p *Problem, policy []int, g float64, pairs [][2]int) (delta, scale []float64, logDet float64, err error) {
	n := len(p.States)
	b := mat.NewVecDense(n, nil)
	for s := range n {
		b.SetVec(s, p.Choices[s][p.Find(s, policy[s])].Cost)
	}
	var lu mat.LU
	lu.Factorize(policyMatrix(p, policy, g))
	var x mat.VecDense
	if err := lu.SolveVecTo(&x, false, b); err != nil {
		return nil, nil, 0, fmt.Errorf("optimize: policy evaluation at γ = %v: %w", g, err)
	}
	v := x.RawVector().Data
	logDet, sign := lu.LogDet()
	if sign <= 0 {
		return nil, nil, 0, fmt.Errorf("optimize: det(I - γP) is not positive at γ = %v", g)
	}
	delta = make([]float64, len(pairs))
	scale = make([]float64, len(pairs))
	for i, pr := range pairs {
		c := p.Choices[pr[0]][pr[1]]
		qv := c.Cost + g*Expect(c.Next, v)
		delta[i] = qv - v[pr[0]]
		scale[i] = math.Abs(c.Cost) + math.Abs(qv) + math.Abs(v[pr[0]])
	}
	return delta, scale, logDet, nil
}

// nextBreak returns the smallest γ in (g0, hi) at which a reduced cost of
// policy turns negative, or hi when there is none.
func nextBreak(ctx context.Context, p *Problem, policy []int, g0, hi float64) (float64, error) {
	var pairs [][2]int
	for s, cs := range p.Choices {
		for k, c := range cs {
			if c.Action != policy[s] {
				pairs = append(pairs, [2]int{s, k})
			}
		}
	}
	if len(pairs) == 0 {
		return hi, nil
	}
	n := len(p.States)
	m := n + 1
	ch := newCheb(m)
	mid, half := (g0+hi)/2, (hi-g0)/2
	f := make([][]float64, len(pairs)) // f[pair][node]
	for i := range f {
		f[i] = make([]float64, m)
	}
	noise := make([]float64, len(pairs))
	logDets := make([]float64, m)
	deltas := make([][]float64, m)
	scales := make([][]float64, m)
	for k, x := range ch.nodes {
		if err := ctx.Err(); err != nil {
			return 0, err
		}
		d, sc, ld, err := reducedCosts(p, policy, mid+half*x, pairs)
		if err != nil {
			return 0, err
		}
		deltas[k], scales[k], logDets[k] = d, sc, ld
	}
	top := slices.Max(logDets)
	for k := range m {
		w := math.Exp(logDets[k] - top)
		for i := range pairs {
			f[i][k] = deltas[k][i] * w
			noise[i] = max(noise[i], 1e-10*scales[k][i]*w)
		}
	}
	best := hi
	for i, pr := range pairs {
		coef := ch.coefficients(f[i])
		// The first point where δ·D < -noise is the first root of the
		// shifted polynomial; touches of zero (ties) do not count.
		coef[0] += noise[i]
		x, ok := ch.firstDescent(ctx, coef, -1, (best-mid)/half)
		if err := ctx.Err(); err != nil {
			return 0, err
		}
		if !ok {
			continue
		}
		root := polishBreak(ctx, p, policy, pr, mid+half*x, g0, best)
		if err := ctx.Err(); err != nil {
			return 0, err
		}
		if root > g0 && root < best {
			best = root
		}
	}
	return best, nil
}

// cheb holds the Chebyshev points of the first kind x_k = cos(π(k+½)/m)
// and the cosine table of the discrete cosine transform at them.
type cheb struct {
	nodes []float64
	cos   [][]float64 // cos[j][k] = cos(π j (k+½)/m) = T_j(x_k)
}

func newCheb(m int) *cheb {
	c := &cheb{nodes: make([]float64, m), cos: make([][]float64, m)}
	for k := range m {
		c.nodes[k] = cosNode(k, m)
	}
	for j := range m {
		c.cos[j] = make([]float64, m)
		for k := range m {
			c.cos[j][k] = math.Cos(math.Pi * float64(j) * (float64(k) + 0.5) / float64(m))
		}
	}
	return c
}

func cosNode(k, m int) float64 { return math.Cos(math.Pi * (float64(k) + 0.5) / float64(m)) }

// coefficients returns the Chebyshev coefficients of the polynomial of
// degree < m taking the values f at the nodes (a discrete cosine
// transform, O(m²)).
func (ch *cheb) coefficients(f []float64) []float64 {
	m := len(f)
	c := make([]float64, m)
	for j := range m {
		sum := 0.0
		for k, fk := range f {
			sum += fk * ch.cos[j][k]
		}
		c[j] = 2 * sum / float64(m)
	}
	c[0] /= 2
	return c
}

// clenshaw evaluates Σ c_j T_j(x).
func clenshaw(c []float64, x float64) float64 {
	var b1, b2 float64
	for j := len(c) - 1; j >= 1; j-- {
		b1, b2 = 2*x*b1-b2+c[j], b1
	}
	return x*b1 - b2 + c[0]
}

// firstDescent returns the smallest x in (a, b) where the polynomial with
// Chebyshev coefficients c (on [-1, 1]) goes from >= 0 to < 0, by
// subdivision: on an interval the polynomial is re-expanded at its
// Chebyshev points, and |c0| > Σ|ck| proves that it has no root there. It
// gives up (false) when ctx is done; the caller checks ctx.
func (ch *cheb) firstDescent(ctx context.Context, c []float64, a, b float64) (float64, bool) {
	if !(b > a) {
		return 0, false
	}
	m := len(c)
	vals := make([]float64, m)
	type span struct{ a, b float64 }
	stack := []span{{a, b}}
	for budget := 0; len(stack) > 0 && budget < 20000; budget++ {
		if budget%16 == 15 && ctx.Err() != nil {
			return 0, false
		}
		sp := stack[len(stack)-1]
		stack = stack[:len(stack)-1]
		mid, half := (sp.a+sp.b)/2, (sp.b-sp.a)/2
		for k, x := range ch.nodes {
			vals[k] = clenshaw(c, mid+half*x)
		}
		local := ch.coefficients(vals)
		rest := 0.0
		for _, x := range local[1:] {
			rest += math.Abs(x)
		}
		switch {
		case math.Abs(local[0]) > rest:
			// No root: the sign is that of local[0] throughout. Spans are
			// taken left to right, so a negative one starts the descent.
			if local[0] < 0 {
				return sp.a, true
			}
		case sp.b-sp.a < 1e-14:
			if clenshaw(c, sp.b) < 0 {
				return sp.b, true
			}
		default:
			// Left half last, so that it is taken first.
			stack = append(stack, span{mid, sp.b}, span{sp.a, mid})
		}
	}
	return 0, false
}

// polishBreak refines a breakpoint of the pair pr near g by bisection on
// its reduced cost within (lo, hi): the bracket is widened from g until the
// reduced cost is >= 0 on its left and < 0 on its right. It returns g when
// no such bracket exists, or when ctx is done (the caller checks ctx).
func polishBreak(ctx context.Context, p *Problem, policy []int, pr [2]int, g, lo, hi float64) float64 {
	hi = min(hi, math.Nextafter(1, 0))
	at := func(x float64) float64 {
		if ctx.Err() != nil {
			return math.NaN()
		}
		d, _, _, err := reducedCosts(p, policy, x, [][2]int{pr})
		if err != nil {
			return math.NaN()
		}
		return d[0]
	}
	a, b := g, g
	for w := 1e-12 * max(1e-3, hi-lo); ; w *= 4 {
		a, b = max(lo, g-w), min(hi, g+w)
		if at(a) >= 0 && at(b) < 0 {
			break
		}
		if (a == lo && b == hi) || ctx.Err() != nil {
			return g
		}
	}
	for range 80 {
		m := (a + b) / 2
		if m <= a || m >= b || ctx.Err() != nil {
			break
		}
		if at(m) >= 0 {
			a = m
		} else {
			b = m
		}
	}
	return (a + b) / 2
}
