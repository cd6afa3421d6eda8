package fleet

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize/convex/lp"
)

// denseLP agrees with gonum's simplex on random feasible bounded LPs, and
// its duals satisfy dual feasibility and strong duality.
func TestDenseLPAgreesWithGonum(t *testing.T) {
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
		x, got, y, err := denseLP(c, a, b)
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

func TestDenseLPInfeasible(t *testing.T) {
	// x1 + x2 = -1 with x >= 0.
	if _, _, _, err := denseLP([]float64{1, 1}, [][]float64{{1, 1}}, []float64{-1}); err != errInfeasible {
		t.Errorf("err = %v, want infeasible", err)
	}
}
