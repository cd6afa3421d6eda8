package simplex

import (
	"context"
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize/convex/lp"
)

// Solve agrees with gonum's simplex on random feasible bounded LPs, and
// its duals satisfy dual feasibility and strong duality.
func TestSolveAgreesWithGonum(t *testing.T) {
	rng := rand.New(rand.NewPCG(71, 72))
	for trial := range 60 {
		m, n := 2+rng.IntN(6), 8+rng.IntN(12)
		a := make([][]float64, m)
		flat := mat.NewDense(m, n, nil)
		x0 := make([]float64, n)
		for j := range x0 {
			x0[j] = rng.Float64()
		}
		b := make([]float64, m)
		for i := range a {
			a[i] = make([]float64, n)
			for j := range n {
				a[i][j] = rng.NormFloat64()
				flat.Set(i, j, a[i][j])
				b[i] += a[i][j] * x0[j]
			}
		}
		c := make([]float64, n)
		for j := range c {
			c[j] = rng.Float64() + 0.1 // positive: bounded below on x >= 0
		}
		want, _, err := lp.Simplex(c, flat, b, 1e-10, nil)
		if err != nil {
			t.Fatalf("trial %d: gonum: %v", trial, err)
		}
		x, got, y, err := Dense(context.Background(), c, a, b)
		if err != nil {
			t.Fatalf("trial %d: %v", trial, err)
		}
		if math.Abs(got-want) > 1e-8*(1+math.Abs(want)) {
			t.Errorf("trial %d: optimum %.12g, gonum %.12g", trial, got, want)
		}
		for i := range m {
			r := -b[i]
			for j := range n {
				r += a[i][j] * x[j]
			}
			if math.Abs(r) > 1e-8 {
				t.Errorf("trial %d: row %d violated by %g", trial, i, r)
			}
		}
		dual := 0.0
		for i := range m {
			dual += b[i] * y[i]
		}
		if math.Abs(dual-got) > 1e-7*(1+math.Abs(got)) {
			t.Errorf("trial %d: dual objective %g, primal %g", trial, dual, got)
		}
		for j := range n {
			rc := c[j]
			for i := range m {
				rc -= a[i][j] * y[i]
			}
			if rc < -1e-8 {
				t.Errorf("trial %d: reduced cost of column %d is %g", trial, j, rc)
			}
		}
	}
}

// beale is E. M. L. Beale's example of cycling (Naval Res. Logist. Quart.
// 2, 1955), in the form of Chvátal 1983, Ch. 3 (from memory): from the
// slack basis {x1, x2, x3}, Dantzig's rule with the smallest-index
// tie-break cycles with period 6. The optimum is checked against gonum's
// simplex, not remembered.
func beale() (c []float64, a [][]float64, b []float64) {
	c = []float64{0, 0, 0, -0.75, 20, -0.5, 6}
	a = [][]float64{
		{1, 0, 0, 0.25, -8, -1, 9},
		{0, 1, 0, 0.5, -12, -0.5, 3},
		{0, 0, 1, 0, 0, 1, 0},
	}
	b = []float64{0, 0, 1}
	return c, a, b
}

func TestSolveDoesNotCycleOnBeale(t *testing.T) {
	c, a, b := beale()
	flat := mat.NewDense(3, 7, nil)
	for i, row := range a {
		flat.SetRow(i, row)
	}
	want, _, err := lp.Simplex(c, flat, b, 1e-12, nil)
	if err != nil {
		t.Fatalf("gonum: %v", err)
	}
	r, err := Solve(context.Background(), c, a, b, &Settings{Basis: []int{0, 1, 2}, MaxPivots: 1000})
	if err != nil {
		t.Fatal(err)
	}
	if r.Status != Optimal {
		t.Fatalf("status %v after %d pivots, want optimal", r.Status, r.Pivots)
	}
	if math.Abs(r.Objective-want) > 1e-12 {
		t.Errorf("Solve(beale): objective %.15g, want %.15g (gonum; tol 1e-12)", r.Objective, want)
	}
}

func TestSolveErrors(t *testing.T) {
	tests := []struct {
		name string
		c    []float64
		a    [][]float64
		b    []float64
		want error
	}{
		// x1 + x2 = -1 with x >= 0.
		{"infeasible", []float64{1, 1}, [][]float64{{1, 1}}, []float64{-1}, ErrInfeasible},
		// min -x1 with x1 - x2 = 1: x1 grows without bound.
		{"unbounded", []float64{-1, 0}, [][]float64{{1, -1}}, []float64{1}, ErrUnbounded},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			if _, err := Solve(context.Background(), tc.c, tc.a, tc.b, nil); !errors.Is(err, tc.want) {
				t.Errorf("Solve(%s): err = %v, want %v", tc.name, err, tc.want)
			}
		})
	}
}

// A cap of one pivot ends phase 2 with the status and a feasible point.
func TestSolvePivotLimit(t *testing.T) {
	c, a, b := beale()
	r, err := Solve(context.Background(), c, a, b, &Settings{Basis: []int{0, 1, 2}, MaxPivots: 1})
	if err != nil {
		t.Fatal(err)
	}
	if r.Status != PivotLimit || r.Pivots != 1 {
		t.Errorf("status %v after %d pivots, want pivot limit after 1", r.Status, r.Pivots)
	}
	if _, _, _, err := Dense(context.Background(), []float64{1, 1}, [][]float64{{1, 2}}, []float64{1}); err != nil {
		t.Errorf("Dense: %v", err)
	}
}

func TestSolveCancelled(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	c, a, b := beale()
	if _, err := Solve(ctx, c, a, b, nil); !errors.Is(err, context.Canceled) {
		t.Errorf("Solve(cancelled): err = %v, want context.Canceled", err)
	}
}

// countdown is a context that reports context.Canceled from the after-th
// call of Err on and counts the calls, so that a test can cancel at a
// counted check instead of after a wall-clock time.
type countdown struct {
	context.Context
	after, calls int
}

func (c *countdown) Err() error {
	c.calls++
	if c.calls >= c.after {
		return context.Canceled
	}
	return nil
}

// occupationLP is the occupation-measure LP of a random discounted MDP
// (Puterman 1994, §6.9): one row per state, one column per (state,
// action); the columns of action 0 form a feasible starting basis.
func occupationLP(states, actions int, seed uint64) (c []float64, a [][]float64, b []float64, basis []int) {
	rng := rand.New(rand.NewPCG(seed, seed+1))
	a = make([][]float64, states)
	for i := range a {
		a[i] = make([]float64, states*actions)
	}
	b = make([]float64, states)
	for s := range states {
		b[s] = 1 / float64(states)
		basis = append(basis, s*actions)
		for k := range actions {
			col := s*actions + k
			c = append(c, rng.Float64()*10+float64(k))
			a[s][col] += 1
			p := make([]float64, states)
			tot := 0.0
			for j := range p {
				p[j] = rng.Float64()
				tot += p[j]
			}
			for j := range p {
				a[j][col] -= 0.9 * p[j] / tot
			}
		}
	}
	return c, a, b, basis
}

// The crash of a starting basis makes one dense pivot per row and the
// tableau is built row by row: both check ctx (so a large LP stops soon
// after an interrupt, not only once the phases start), and cancelling at
// any check returns context.Canceled with at most a few more checks.
func TestSolveCancelledAtEveryCheck(t *testing.T) {
	const states = 40
	c, a, b, basis := occupationLP(states, 3, 5)
	probe := &countdown{Context: context.Background(), after: 1 << 30}
	r, err := Solve(probe, c, a, b, &Settings{Basis: basis})
	if err != nil {
		t.Fatal(err)
	}
	total := probe.calls
	// At least one check per crash pivot, one per phase-2 pivot and one
	// before the tableau is built.
	if want := states + r.Pivots + 1; total < want {
		t.Fatalf("Solve checked ctx %d times for %d crash pivots and %d pivots, want at least %d", total, states, r.Pivots, want)
	}
	for at := 1; at <= total; at++ {
		ctx := &countdown{Context: context.Background(), after: at}
		if _, err := Solve(ctx, c, a, b, &Settings{Basis: basis}); !errors.Is(err, context.Canceled) {
			t.Errorf("Solve cancelled at check %d of %d: err = %v, want context.Canceled", at, total, err)
		}
		if ctx.calls > at+2 {
			t.Errorf("Solve cancelled at check %d: went on to check %d", at, ctx.calls)
		}
	}
}
