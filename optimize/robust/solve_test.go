package robust

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"fixpoint/condition"
	"fixpoint/optimize"
	"fixpoint/optimize/internal/mdptest"
)

// fixture is a named problem for the solver tests.
type fixture struct {
	name string
	p    *optimize.Problem
}

func fixtures(t testing.TB) []fixture {
	rng := rand.New(rand.NewPCG(2026, 13))
	return []fixture{
		{"pumps", pumps(t)},
		{"banded-30", bandedProblem(30, 0.95)},
		{"random-12", randomProblem(rng, 12, 3, 5, 0.9, 100)},
		{"random-40", randomProblem(rng, 40, 4, 8, 0.96, 1000)},
	}
}

var robustMethods = []optimize.Method{optimize.PolicyIteration, optimize.ValueIteration, optimize.Auto}

func solve(t testing.TB, p *optimize.Problem, sets *Sets, m optimize.Method, tol float64) *Result {
	t.Helper()
	r, err := Solve(context.Background(), p, sets, &optimize.Settings{Method: m, Tol: tol})
	if err != nil {
		t.Fatal(err)
	}
	if r.Status != optimize.Certified {
		t.Fatalf("Solve(%v, %v): not certified, gap %g > %g", sets.Kind, m, r.Gap, tol)
	}
	return r
}

// With radius 0 every set is the nominal row, so the robust answer is
// optimize.Solve's: the same advice and, within the tolerances, the same
// values and bounds.
func TestRadiusZeroIsNominal(t *testing.T) {
	for _, f := range fixtures(t) {
		want, err := optimize.Solve(context.Background(), f.p, &optimize.Settings{Tol: 1e-6})
		if err != nil {
			t.Fatal(err)
		}
		for _, kind := range []Kind{L1, KL} {
			for _, m := range robustMethods {
				name := fmt.Sprintf("%s/%v/%v", f.name, kind, m)
				r := solve(t, f.p, mustUniform(t, f.p, kind, 0), m, 1e-6)
				if !slices.Equal(r.Policy, want.Policy) {
					t.Errorf("Solve(%q): policy %v, want optimize.Solve's %v", name, r.Policy, want.Policy)
				}
				tol := 1e-9 * max(1, slices.Max(want.Value))
				for s := range want.Value {
					if math.Abs(r.WorstCase[s]-want.Value[s]) > tol || math.Abs(r.Attained[s]-want.Value[s]) > tol {
						t.Errorf("Solve(%q): worst case[%d] = %.12g (attained %.12g), want %.12g (tol %g)", name, s, r.WorstCase[s], r.Attained[s], want.Value[s], tol)
					}
					if r.Lower[s] > want.Upper[s]+tol || r.Upper[s] < want.Lower[s]-tol {
						t.Errorf("Solve(%q): bounds [%g, %g] miss optimize's [%g, %g] in state %d", name, r.Lower[s], r.Upper[s], want.Lower[s], want.Upper[s], s)
					}
				}
			}
		}
	}
}

// The worst-case cost grows with the radius: every set contains the sets
// of smaller radii, so nature has more room (monotonicity of the robust
// optimum in the sets).
func TestWorstCaseMonotoneInRadius(t *testing.T) {
	radii := map[Kind][]float64{L1: {0, 0.01, 0.05, 0.2, 0.6, 2}, KL: {0, 0.001, 0.01, 0.1, 0.5, 2}}
	for _, f := range fixtures(t) {
		for _, kind := range []Kind{L1, KL} {
			var prev *Result
			for _, r := range radii[kind] {
				res := solve(t, f.p, mustUniform(t, f.p, kind, r), optimize.PolicyIteration, 1e-6)
				if prev != nil {
					for s := range res.WorstCase {
						if res.WorstCase[s] < prev.WorstCase[s]-prev.Gap-res.Gap {
							t.Errorf("%s/%v: worst case[%d] = %.12g at radius %g, below %.12g at the smaller radius", f.name, kind, s, res.WorstCase[s], r, prev.WorstCase[s])
						}
					}
				}
				prev = res
			}
		}
	}
}

// Policy and value iteration reach the same robust optimum: each one's
// worst-case cost lies within the other's proven bounds.
func TestMethodsAgree(t *testing.T) {
	for _, f := range fixtures(t) {
		for _, kind := range []Kind{L1, KL} {
			sets := mustUniform(t, f.p, kind, map[Kind]float64{L1: 0.15, KL: 0.05}[kind])
			pi := solve(t, f.p, sets, optimize.PolicyIteration, 1e-6)
			vi := solve(t, f.p, sets, optimize.ValueIteration, 1e-6)
			for s := range pi.WorstCase {
				for _, pair := range [][2]*Result{{pi, vi}, {vi, pi}} {
					a, b := pair[0], pair[1]
					if a.WorstCase[s] < b.Lower[s]-1e-9 || a.Lower[s] > b.WorstCase[s]+1e-9 {
						t.Errorf("%s/%v: state %d: %v worst case %.12g outside %v bounds [%.12g, %.12g]", f.name, kind, s, a.Method, a.WorstCase[s], b.Method, b.Lower[s], b.WorstCase[s])
					}
				}
				if pi.Lower[s] > pi.WorstCase[s] || pi.WorstCase[s]-pi.Lower[s] > pi.Gap+1e-12 || pi.Attained[s] > pi.WorstCase[s] {
					t.Errorf("%s/%v: state %d: lower %g, attained %g, worst case %g, gap %g: out of order", f.name, kind, s, pi.Lower[s], pi.Attained[s], pi.WorstCase[s], pi.Gap)
				}
			}
		}
	}
}

// adversaryLP is the LP of nature's MDP for a fixed policy over L1 sets,
// with each inner maximum replaced by its LP dual (the robust
// counterpart): with y, λ, μ per state,
//
//	min Σ_s v_s  s.t.  v_s - γ(μ_s + Σ_j p̂_sj·y_sj + r_s·λ_s) >= c_s,
//	μ_s + y_sj - v_j >= 0,  λ_s - y_sj >= 0,  λ_s + y_sj >= 0  (j in the support),
//
// because max{q·v : q in the L1 set} = min{μ + Σ p̂_j y_j + rλ : μ + y_j >= v_j, |y_j| <= λ}
// (LP duality) and v >= T_π v implies v >= v_π for the monotone
// contraction T_π. Columns v1..vn come first.
func adversaryLP(p *optimize.Problem, sets *Sets, policy []int) string {
	var b strings.Builder
	n := len(p.States)
	b.WriteString("Minimize\n obj:")
	for s := range n {
		fmt.Fprintf(&b, " + v%d", s)
	}
	b.WriteString("\nSubject To\n")
	var bounds strings.Builder
	for s, cs := range p.Choices {
		for k, c := range cs {
			if c.Action != policy[s] {
				continue
			}
			row := sets.Rows[s][k]
			center := make(map[int]float64)
			for _, e := range c.Next {
				center[e.To] += e.P
			}
			g := p.Discount
			fmt.Fprintf(&b, " c%d: v%d - %.17g mu%d - %.17g lam%d", s, s, g, s, g*row.Radius, s)
			for _, j := range row.Support {
				if pj := center[j]; pj != 0 {
					fmt.Fprintf(&b, " - %.17g y%d_%d", g*pj, s, j)
				}
			}
			fmt.Fprintf(&b, " >= %.17g\n", c.Cost)
			for _, j := range row.Support {
				fmt.Fprintf(&b, " d%d_%d: mu%d + y%d_%d - v%d >= 0\n", s, j, s, s, j, j)
				fmt.Fprintf(&b, " e%d_%d: lam%d - y%d_%d >= 0\n", s, j, s, s, j)
				fmt.Fprintf(&b, " f%d_%d: lam%d + y%d_%d >= 0\n", s, j, s, s, j)
				fmt.Fprintf(&bounds, " y%d_%d free\n", s, j)
			}
			fmt.Fprintf(&bounds, " mu%d free\n", s)
		}
	}
	b.WriteString("Bounds\n")
	for s := range n {
		fmt.Fprintf(&b, " v%d free\n", s)
	}
	b.WriteString(bounds.String())
	b.WriteString("End\n")
	return b.String()
}

// The robust advice's worst case is no higher than the nominal advice's,
// each found independently by GLPK's glpsol on the LP of nature's MDP
// (adversaryLP); and Solve's worst case and Evaluate's agree with glpsol.
func TestRobustAdviceAgainstGLPK(t *testing.T) {
	bin := mdptest.Glpsol(t)
	rng := rand.New(rand.NewPCG(41, 3))
	for _, f := range fixtures(t) {
		nominal, err := optimize.Solve(context.Background(), f.p, nil)
		if err != nil {
			t.Fatal(err)
		}
		radius := make([][]float64, len(f.p.Actions))
		for a := range radius {
			radius[a] = make([]float64, len(f.p.States))
			for s := range radius[a] {
				radius[a][s] = 0.4 * rng.Float64()
			}
		}
		perRow, err := PerRow(f.p, L1, radius, nil)
		if err != nil {
			t.Fatal(err)
		}
		for _, sets := range []*Sets{mustUniform(t, f.p, L1, 0.1), perRow} {
			r := solve(t, f.p, sets, optimize.PolicyIteration, 1e-6)
			n := len(f.p.States)
			robust, _ := mdptest.SolveLP(t, bin, adversaryLP(f.p, sets, r.Policy), n)
			nom, _ := mdptest.SolveLP(t, bin, adversaryLP(f.p, sets, nominal.Policy), n)
			ev, err := Evaluate(context.Background(), f.p, sets, nominal.Policy, 1e-7)
			if err != nil {
				t.Fatal(err)
			}
			// glpsol prints 15 significant digits.
			tol := 1e-9 * max(1, slices.Max(nom))
			for s := range n {
				if robust[s] > nom[s]+tol {
					t.Errorf("%s/%v: state %d: robust advice's worst case %.12g (glpsol) > nominal advice's %.12g", f.name, sets.Source, s, robust[s], nom[s])
				}
				if math.Abs(r.WorstCase[s]-robust[s]) > tol {
					t.Errorf("Solve(%s/%v): worst case[%d] = %.12g, glpsol %.12g (tol %g)", f.name, sets.Source, s, r.WorstCase[s], robust[s], tol)
				}
				if math.Abs(ev.WorstCase[s]-nom[s]) > tol {
					t.Errorf("Evaluate(%s/%v, nominal advice)[%d] = %.12g, glpsol %.12g (tol %g)", f.name, sets.Source, s, ev.WorstCase[s], nom[s], tol)
				}
			}
		}
	}
}

// drawInside returns a random row of the set of (s, k): the nominal row
// moved towards a random point z of the simplex on the support (or, half
// the time, to the set's boundary along that direction).
func drawInside(rng *rand.Rand, kind Kind, row Row, center []condition.Entry) []condition.Entry {
	p := make([]float64, len(row.Support))
	for i, j := range row.Support {
		for _, e := range center {
			if e.To == j {
				p[i] += e.P
			}
		}
	}
	z := make([]float64, len(p))
	sum := 0.0
	for i := range z {
		z[i] = rng.ExpFloat64()
		sum += z[i]
	}
	d := make([]float64, len(p))
	for i := range z {
		d[i] = z[i]/sum - p[i]
	}
	// Largest step θ <= 1 keeping the row in the set (distance convex
	// along the segment, 0 at θ = 0): bisection.
	dist := func(th float64) float64 {
		x := 0.0
		for i := range p {
			q := p[i] + th*d[i]
			if kind == L1 {
				x += math.Abs(q - p[i])
			} else if p[i] > 0 {
				x += p[i] * math.Log(p[i]/q)
			}
		}
		return x
	}
	hi := 1.0
	if dist(1) > row.Radius {
		lo := 0.0
		for range 60 {
			mid := (lo + hi) / 2
			if dist(mid) <= row.Radius {
				lo = mid
			} else {
				hi = mid
			}
		}
		hi = lo
	}
	th := hi
	if rng.IntN(2) == 0 {
		th *= rng.Float64()
	}
	var out []condition.Entry
	for i, j := range row.Support {
		if q := p[i] + th*d[i]; q > 0 {
			out = append(out, condition.Entry{To: j, P: q})
		}
	}
	return out
}

// Monte Carlo: transition matrices drawn inside the sets never cost the
// robust advice more than its worst case, and the adversary's own matrix
// costs exactly Attained.
func TestMonteCarloInsideSets(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 70))
	for _, f := range fixtures(t) {
		for _, kind := range []Kind{L1, KL} {
			sets := mustUniform(t, f.p, kind, map[Kind]float64{L1: 0.2, KL: 0.1}[kind])
			r := solve(t, f.p, sets, optimize.PolicyIteration, 1e-6)
			got := evaluateRows(t, f.p, r.Policy, r.Adversary)
			checkCloseRel(t, fmt.Sprintf("%s/%v: cost under the adversary's rows", f.name, kind), got, r.Attained, 1e-9)
			for range 200 {
				rows := make([][]condition.Entry, len(f.p.States))
				for s, cs := range f.p.Choices {
					for k, c := range cs {
						if c.Action == r.Policy[s] {
							rows[s] = drawInside(rng, kind, sets.Rows[s][k], c.Next)
						}
					}
				}
				v := evaluateRows(t, f.p, r.Policy, rows)
				for s := range v {
					if v[s] > r.WorstCase[s]+1e-9*max(1, r.WorstCase[s]) {
						t.Fatalf("%s/%v: a matrix inside the sets costs %.12g from state %d > worst case %.12g", f.name, kind, v[s], s, r.WorstCase[s])
					}
				}
			}
		}
	}
}

func checkCloseRel(t *testing.T, what string, got, want []float64, rel float64) {
	t.Helper()
	for i := range want {
		if tol := rel * max(1, math.Abs(want[i])); math.Abs(got[i]-want[i]) > tol {
			t.Errorf("%s[%d] = %.12g, want %.12g (tol %g)", what, i, got[i], want[i], tol)
		}
	}
}

// Structural zeros stay zero: nature cannot send a unit to a state its
// nominal row never reaches, unless the support is widened, and then the
// worst case can only grow.
func TestWidenSupport(t *testing.T) {
	// Two states: "good" stays good with certainty when serviced, or may
	// fail when left; "failed" is expensive.
	p := &optimize.Problem{
		States: []string{"good", "failed"}, Actions: []string{"leave", "service", "repair"}, Discount: 0.9,
		Choices: [][]optimize.Choice{
			{{Action: 0, Cost: 0, Next: []condition.Entry{{To: 0, P: 0.8}, {To: 1, P: 0.2}}}, {Action: 1, Cost: 8, Next: []condition.Entry{{To: 0, P: 1}}}},
			{{Action: 2, Cost: 100, Next: []condition.Entry{{To: 0, P: 1}}}},
		},
	}
	plain := solve(t, p, mustUniform(t, p, L1, 0.2), optimize.PolicyIteration, 1e-9)
	for _, e := range plain.Adversary[0] {
		if e.To == 1 && plain.Policy[0] == 1 {
			t.Errorf("service row reaches the failed state without widening: %v", plain.Adversary[0])
		}
	}
	w := make([][][]int, 3)
	w[1] = [][]int{{1}, nil}
	wide, err := Uniform(p, L1, 0.2, &Options{Widen: w})
	if err != nil {
		t.Fatal(err)
	}
	if got := wide.Rows[0][1].Support; !slices.Equal(got, []int{0, 1}) || !slices.Equal(wide.Rows[0][1].Widened, []int{1}) {
		t.Errorf("widened support %v (widened %v), want [0 1] ([1])", got, wide.Rows[0][1].Widened)
	}
	r := solve(t, p, wide, optimize.PolicyIteration, 1e-9)
	for s := range r.WorstCase {
		if r.WorstCase[s] < plain.WorstCase[s]-1e-9 {
			t.Errorf("widened worst case[%d] = %g below the plain %g", s, r.WorstCase[s], plain.WorstCase[s])
		}
	}
	// Closed form: servicing, nature moves 0.1 to failed; with v = (x, y),
	// x = 8 + 0.9(0.9x + 0.1y), y = 100 + 0.9x; leaving, 0.1 more to
	// failed: x = 0.9(0.7x + 0.3y). Solved by hand.
	x := (8 + 0.09*100) / (1 - 0.81 - 0.081)
	xl := 0.27 * 100 / (1 - 0.63 - 0.243)
	if want := min(x, xl); math.Abs(r.WorstCase[0]-want) > 1e-7 {
		t.Errorf("widened worst case[0] = %.10g, want %.10g (closed form)", r.WorstCase[0], want)
	}
}

// Ties go to the lowest action index and are reported.
func TestTiesLowestIndex(t *testing.T) {
	row := []condition.Entry{{To: 0, P: 0.5}, {To: 1, P: 0.5}}
	p := &optimize.Problem{
		States: []string{"a", "b"}, Actions: []string{"x", "y", "z"}, Discount: 0.9,
		Choices: [][]optimize.Choice{
			{{Action: 0, Cost: 5, Next: row}, {Action: 1, Cost: 5, Next: row}, {Action: 2, Cost: 1, Next: []condition.Entry{{To: 1, P: 1}}}},
			{{Action: 1, Cost: 3, Next: row}, {Action: 2, Cost: 3, Next: row}},
		},
	}
	for _, m := range robustMethods {
		r := solve(t, p, mustUniform(t, p, L1, 0.3), m, 1e-9)
		if r.Policy[1] != 1 {
			t.Errorf("%v: state b advice %d, want 1 (lowest index of a tie)", m, r.Policy[1])
		}
		found := false
		for _, tie := range r.Ties {
			if tie.State == 1 && slices.Equal(tie.Actions, []int{1, 2}) {
				found = true
			}
		}
		if !found || r.RunnerUp[1] != 2 || math.Abs(r.Margin[1]) > 1e-9 {
			t.Errorf("%v: ties %v, runner-up %d margin %g; want the tie {1 [1 2]} reported, runner-up 2 at margin 0", m, r.Ties, r.RunnerUp[1], r.Margin[1])
		}
	}
}

// Reaching the cap is a status, not an error; cancellation is an error.
func TestCapAndCancel(t *testing.T) {
	p := bandedProblem(30, 0.99)
	sets := mustUniform(t, p, L1, 0.1)
	r, err := Solve(context.Background(), p, sets, &optimize.Settings{Method: optimize.ValueIteration, MaxIterations: 3, Tol: 1e-9})
	if err != nil {
		t.Fatalf("capped solve: %v, want no error", err)
	}
	if r.Status != optimize.NotCertified {
		t.Errorf("capped solve: status %v, want NotCertified", r.Status)
	}
	for s := range r.Lower {
		if r.Lower[s] > r.WorstCase[s] {
			t.Errorf("capped solve: lower[%d] = %g above worst case %g", s, r.Lower[s], r.WorstCase[s])
		}
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	for _, m := range robustMethods {
		if _, err := Solve(ctx, p, sets, &optimize.Settings{Method: m}); !errors.Is(err, context.Canceled) {
			t.Errorf("Solve(%v) with a cancelled context: err %v, want context.Canceled", m, err)
		}
	}
	if _, err := Analyze(ctx, p, sets, nil); !errors.Is(err, context.Canceled) {
		t.Errorf("Analyze with a cancelled context: err %v, want context.Canceled", err)
	}
}

// Bad specifications are errors naming the row.
func TestSetErrors(t *testing.T) {
	p := pumps(t)
	other := bandedProblem(4, 0.9)
	radius := make([][]float64, 4)
	for a := range radius {
		radius[a] = make([]float64, 5)
	}
	radius[2][3] = -0.1
	widen := make([][][]int, 4)
	widen[1] = make([][]int, 5)
	widen[1][0] = []int{2} // service is not admissible in sound
	widen[0] = make([][]int, 5)
	widen[0][1] = []int{9}
	obs := make([][]int, 4)
	obs[0] = []int{10, 10, 0, 10, 0}
	tests := []struct {
		name string
		err  func() error
		want string
	}{
		{"negative radius", func() error { _, err := Uniform(p, L1, -1, nil); return err }, "radius -1"},
		{"NaN radius", func() error { _, err := Uniform(p, KL, math.NaN(), nil); return err }, "radius NaN"},
		{"per-row negative", func() error { _, err := PerRow(p, L1, radius, nil); return err }, "state 3, action 2: l1 radius -0.1"},
		{"per-row shape", func() error { _, err := PerRow(p, L1, radius[:2], nil); return err }, "2 radius lists for 4 actions"},
		{"widen inadmissible", func() error { _, err := Uniform(p, L1, 0.1, &Options{Widen: widen}); return err }, "state 0, action 1: widen targets"},
		{"widen target", func() error { _, err := Uniform(p, L1, 0.1, &Options{Widen: widen}); return err }, "state 1, action 0: widen target 9"},
		{"confidence", func() error { _, err := FromCounts(p, L1, 1, obs, nil); return err }, "confidence 1 is not in (0, 1)"},
		{"refuse no data", func() error { _, err := FromCounts(p, L1, 0.9, obs, &Options{NoData: Refuse}); return err }, "state 2, action 0: no observations"},
		{"other problem", func() error {
			_, err := Solve(context.Background(), other, mustUniform(t, p, L1, 0.1), nil)
			return err
		}, "sets do not belong"},
		{"lp method", func() error {
			_, err := Solve(context.Background(), p, mustUniform(t, p, L1, 0.1), &optimize.Settings{Method: optimize.LinearProgram})
			return err
		}, "method lp is not available"},
		{"kind", func() error { _, err := ParseKind("wasserstein"); return err }, `unknown set "wasserstein"`},
	}
	for _, tt := range tests {
		err := tt.err()
		if err == nil || !strings.Contains(err.Error(), tt.want) || !strings.HasPrefix(err.Error(), "robust: ") {
			t.Errorf("%s: err %v, want a robust: error containing %q", tt.name, err, tt.want)
		}
	}
}

// FromCounts: the union bound shares 1 - confidence among the rows with
// data, each row's radius is its bound at that share, rows with one
// support state are exact and rows without data span the whole simplex.
func TestFromCounts(t *testing.T) {
	p := pumps(t)
	obs := [][]int{{40, 30, 0, 12, 0}, {0, 25, 9, 0, 0}, nil, {3, 3, 3, 3, 3}}
	for _, kind := range []Kind{L1, KL} {
		s, err := FromCounts(p, kind, 0.9, obs, nil)
		if err != nil {
			t.Fatal(err)
		}
		// Rows with data and >= 2 support states: leave in sound, light
		// wear, critical; service in light and heavy wear. Replace rows
		// have one support state; overhaul and leave in heavy wear have
		// none (no data: leave in heavy wear, overhaul in heavy wear and
		// critical).
		if s.Bounded != 5 || math.Abs(s.RowMiss-0.02) > 1e-15 {
			t.Errorf("%v: bounded %d, row miss %g; want 5, 0.02", kind, s.Bounded, s.RowMiss)
		}
		for st, rows := range s.Rows {
			for _, row := range rows {
				k, n := len(row.Support), row.Observations
				want := map[Kind]float64{L1: L1Radius(k, n, 0.02), KL: KLRadius(k, n, 0.02)}[kind]
				switch {
				case k == 1:
					want = 0
				case n == 0:
					want = map[Kind]float64{L1: 2, KL: math.Inf(1)}[kind]
					if !row.NoData {
						t.Errorf("%v: row (%d, %d) without data not marked NoData", kind, st, row.Action)
					}
				}
				if row.Radius != want && math.Abs(row.Radius-want) > 1e-15 {
					t.Errorf("%v: row (%d, %d) radius %g, want %g", kind, st, row.Action, row.Radius, want)
				}
			}
		}
		for _, phrase := range []string{"at least 90%", "every true transition row lies in its set", "worst-case costs bound the true expected costs", "3 rows without records"} {
			if !strings.Contains(s.Statement, phrase) {
				t.Errorf("%v: statement %q lacks %q", kind, s.Statement, phrase)
			}
		}
		if _, err := Solve(context.Background(), p, s, nil); err != nil {
			t.Errorf("%v: %v", kind, err)
		}
	}
}
