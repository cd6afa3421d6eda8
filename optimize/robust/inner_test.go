package robust

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/optimize"

	"fixpoint/optimize/internal/mdptest"
)

// innerCase is one random inner problem: nominal row p on support 0..k-1
// (zeros are widened targets), values v, radius r.
type innerCase struct {
	p, v []float64
	r    float64
}

// randomInner draws a case with k support states; with probability 1/4
// one entry is a widened target (p = 0), and with probability 1/4 the
// values are integers (ties).
func randomInner(rng *rand.Rand, k int, maxRadius float64) innerCase {
	c := innerCase{p: make([]float64, k), v: make([]float64, k), r: maxRadius * rng.Float64()}
	sum := 0.0
	for i := range k {
		c.p[i] = rng.ExpFloat64()
	}
	if k > 1 && rng.IntN(4) == 0 {
		c.p[rng.IntN(k)] = 0
	}
	for _, x := range c.p {
		sum += x
	}
	ties := rng.IntN(4) == 0
	for i := range k {
		c.p[i] /= sum
		c.v[i] = 1 + 99*rng.Float64()
		if ties {
			c.v[i] = float64(1 + rng.IntN(4))
		}
	}
	if rng.IntN(10) == 0 {
		c.r = 0
	}
	return c
}

// l1LP appends to b the LP form of one L1 inner problem (block i):
//
//	max Σ_j v_j q_j  s.t.  Σ_j q_j = 1,  q_j - u_j <= p_j,  -q_j - u_j <= -p_j,
//	Σ_j u_j <= r,  q, u >= 0,
//
// u_j >= |q_j - p_j| the L1 deviation (the standard linearisation).
func l1LP(obj, rows *strings.Builder, i int, c innerCase) {
	for j, v := range c.v {
		fmt.Fprintf(obj, " + %.17g q%d_%d", v, i, j)
	}
	fmt.Fprintf(rows, " s%d:", i)
	for j := range c.v {
		fmt.Fprintf(rows, " + q%d_%d", i, j)
	}
	rows.WriteString(" = 1\n")
	for j, p := range c.p {
		fmt.Fprintf(rows, " a%d_%d: q%d_%d - u%d_%d <= %.17g\n", i, j, i, j, i, j, p)
		fmt.Fprintf(rows, " b%d_%d: - q%d_%d - u%d_%d <= %.17g\n", i, j, i, j, i, j, -p)
	}
	fmt.Fprintf(rows, " r%d:", i)
	for j := range c.v {
		fmt.Fprintf(rows, " + u%d_%d", i, j)
	}
	fmt.Fprintf(rows, " <= %.17g\n", c.r)
}

// The L1 inner problem (sort and shift) against GLPK's glpsol on its LP
// form, an independent LP solver: 3,000 random rows of 1 to 8 support
// states, radii in [0, 2.5], batched 100 independent blocks to an LP file
// (the optimum of a sum of independent blocks is optimal in each; small
// files keep glpsol's simplex fast).
func TestL1InnerAgainstGLPK(t *testing.T) {
	bin := mdptest.Glpsol(t)
	rng := rand.New(rand.NewPCG(31, 7))
	for batch := range 30 {
		var cases []innerCase
		var obj, rows strings.Builder
		obj.WriteString("Maximize\n obj:")
		nq := 0
		for i := range 100 {
			c := randomInner(rng, 1+rng.IntN(8), 2.5)
			cases = append(cases, c)
			l1LP(&obj, &rows, i, c)
			nq += len(c.p)
		}
		lp := obj.String() + "\nSubject To\n" + rows.String() + "End\n"
		q, _ := mdptest.SolveLP(t, bin, lp, nq)
		at := 0
		for i, c := range cases {
			want := 0.0
			for j, v := range c.v {
				want += v * q[at+j]
			}
			at += len(c.p)
			m := singleRow(L1, c.p, c.r)
			got := make([]float64, len(c.p))
			lo, hi := m.inner(0, c.v, got)
			// glpsol writes 15 significant digits; values are below 100.
			if math.Abs(lo-want) > 1e-9 || lo != hi {
				t.Errorf("batch %d, case %d: L1 inner = [%.15g, %.15g], glpsol %.15g (tol 1e-9); p %v v %v r %g", batch, i, lo, hi, want, c.p, c.v, c.r)
			}
			checkRow(t, fmt.Sprintf("batch %d, case %d", batch, i), L1, c, got, lo)
		}
	}
}

// checkRow checks that q is a member of the set of c worth value.
func checkRow(t *testing.T, what string, kind Kind, c innerCase, q []float64, value float64) {
	t.Helper()
	sum, dist, val := 0.0, 0.0, 0.0
	for j := range q {
		if q[j] < -1e-15 {
			t.Errorf("%s: q[%d] = %g < 0", what, j, q[j])
		}
		sum += q[j]
		val += q[j] * c.v[j]
		switch kind {
		case L1:
			dist += math.Abs(q[j] - c.p[j])
		case KL:
			if c.p[j] > 0 {
				dist += c.p[j] * math.Log(c.p[j]/q[j])
			}
		}
	}
	if math.Abs(sum-1) > 1e-12 {
		t.Errorf("%s: worst row sums to %.17g, want 1 (tol 1e-12)", what, sum)
	}
	if dist > c.r*(1+1e-9)+1e-12 {
		t.Errorf("%s: worst row is at distance %.17g > radius %g", what, dist, c.r)
	}
	if math.Abs(val-value) > 1e-9*max(1, math.Abs(value)) {
		t.Errorf("%s: worst row is worth %.15g, reported %.15g", what, val, value)
	}
}

// klDiv is KL(p‖q) = Σ p_j ln(p_j/q_j) (+Inf when q_j <= 0 < p_j).
func klDiv(p, q []float64) float64 {
	d := 0.0
	for j := range p {
		if p[j] > 0 {
			if q[j] <= 0 {
				return math.Inf(1)
			}
			d += p[j] * math.Log(p[j]/q[j])
		}
	}
	return d
}

// boundary returns the largest s in [0, sMax] with KL(p‖p + s·d) <= r, by
// bisection (the divergence is convex along the ray and 0 at s = 0).
func boundary(p, d []float64, r, sMax float64) float64 {
	q := make([]float64, len(p))
	at := func(s float64) float64 {
		for j := range p {
			q[j] = p[j] + s*d[j]
		}
		return klDiv(p, q)
	}
	if at(sMax) <= r {
		return sMax
	}
	lo, hi := 0.0, sMax
	for range 64 {
		mid := (lo + hi) / 2
		if at(mid) <= r {
			lo = mid
		} else {
			hi = mid
		}
	}
	return lo
}

// rayValue is the value of the boundary point of the KL set of c on the
// ray from p in direction d (d sums to 0).
func rayValue(c innerCase, d []float64) float64 {
	sMax := math.Inf(1)
	for j := range d {
		if d[j] < 0 {
			sMax = min(sMax, -c.p[j]/d[j])
		}
	}
	s := boundary(c.p, d, c.r, sMax)
	val := 0.0
	for j := range c.p {
		val += (c.p[j] + s*d[j]) * c.v[j]
	}
	return val
}

// The KL inner problem against a direct search of the primal, which uses
// no duality: for two support states the set is an interval of q_0 whose
// ends are found by bisection on the divergence, and the maximum of a
// linear function is at an end; for three, the maximum over boundary
// points of 720 rays from the nominal row, refined by golden-section
// search on the angle. The search only finds feasible points, so it must
// never beat our dual (upper) value, and must come within 1e-7 of it.
func TestKLInnerAgainstSearch(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 55))
	cases := 0
	for cases < 2000 {
		k := 2
		if cases >= 1900 {
			k = 3
		}
		c := randomInner(rng, k, 1.5)
		if c.r == 0 {
			continue // no room to search; radius 0 is tested by the solves
		}
		cases++
		var want float64
		if k == 2 {
			want = max(rayValue(c, []float64{1, -1}), rayValue(c, []float64{-1, 1}))
		} else {
			// Directions in the plane Σ d = 0: d(θ) = cos θ·e1 + sin θ·e2
			// with e1 = (1,-1,0)/√2, e2 = (1,1,-2)/√6.
			dir := func(th float64) []float64 {
				a, b := math.Cos(th)/math.Sqrt2, math.Sin(th)/math.Sqrt(6)
				return []float64{a + b, -a + b, -2 * b}
			}
			best, arg := math.Inf(-1), 0.0
			for i := range 720 {
				th := 2 * math.Pi * float64(i) / 720
				if v := rayValue(c, dir(th)); v > best {
					best, arg = v, th
				}
			}
			a, b := arg-2*math.Pi/720, arg+2*math.Pi/720
			phi := (math.Sqrt(5) - 1) / 2
			for range 60 {
				x1, x2 := b-phi*(b-a), a+phi*(b-a)
				if rayValue(c, dir(x1)) > rayValue(c, dir(x2)) {
					b = x2
				} else {
					a = x1
				}
			}
			want = max(best, rayValue(c, dir((a+b)/2)))
		}
		m := singleRow(KL, c.p, c.r)
		q := make([]float64, k)
		lo, hi := m.inner(0, c.v, q)
		what := fmt.Sprintf("KL inner (p %v, v %v, r %g)", c.p, c.v, c.r)
		if want > hi+1e-10*max(1, math.Abs(hi)) {
			t.Errorf("%s: a feasible point is worth %.15g > upper bound %.15g", what, want, hi)
		}
		if lo < want-1e-7*max(1, math.Abs(want)) {
			t.Errorf("%s: lower bound %.15g, search found %.15g (tol 1e-7)", what, lo, want)
		}
		if hi-lo > 1e-10 {
			t.Errorf("%s: bounds [%.15g, %.15g] wider than eps 1e-12 + rounding", what, lo, hi)
		}
		checkRow(t, what, KL, c, q, lo)
	}
}

// The one-dimensional dual minimised by gonum's Nelder-Mead (an
// optimiser outside the project) in u = ln t agrees with the Newton
// iteration on 1,000 random rows of up to six states; since every dual
// point is an upper bound, gonum's minimum may not lie below our lower
// bound.
func TestKLDualAgainstGonum(t *testing.T) {
	rng := rand.New(rand.NewPCG(8, 88))
	for i := range 1000 {
		c := randomInner(rng, 2+rng.IntN(5), 1)
		if c.r == 0 {
			continue
		}
		vmax := 0.0
		for _, x := range c.v {
			vmax = max(vmax, x)
		}
		// Φ(t) = t - e^(-r) Π (t + g_j)^p_j, directly from its definition.
		phi := func(x []float64) float64 {
			t := math.Exp(x[0])
			lg := 0.0
			for j := range c.p {
				if c.p[j] > 0 {
					lg += c.p[j] * math.Log(t+vmax-c.v[j])
				}
			}
			return vmax + t - math.Exp(lg-c.r)
		}
		res, err := optimize.Minimize(optimize.Problem{Func: phi}, []float64{0}, &optimize.Settings{Converger: &optimize.FunctionConverge{Absolute: 1e-13, Iterations: 200}}, &optimize.NelderMead{})
		if err != nil {
			t.Fatalf("case %d: gonum: %v", i, err)
		}
		want := res.F
		// The boundary t -> 0 when the largest value is only at a widened
		// target: Φ(0) = -e^(-r) Π g_j^p_j.
		lg0 := 0.0
		for j := range c.p {
			if c.p[j] > 0 {
				lg0 += c.p[j] * math.Log(vmax-c.v[j])
			}
		}
		want = min(want, vmax-math.Exp(lg0-c.r))
		m := singleRow(KL, c.p, c.r)
		lo, hi := m.inner(0, c.v, nil)
		tol := 1e-8 * max(1, math.Abs(want))
		if want < lo-tol || math.Abs(hi-want) > tol {
			t.Errorf("case %d (p %v, v %v, r %g): inner [%.12g, %.12g], gonum's dual minimum %.12g (tol %g)", i, c.p, c.v, c.r, lo, hi, want, tol)
		}
	}
}
