package fleet

import (
	"errors"
	"math"
)

var (
	errInfeasible = errors.New("fleet: linear program is infeasible")
	errUnbounded  = errors.New("fleet: linear program is unbounded")
	errPivots     = errors.New("fleet: simplex pivot limit reached")
)

// denseLP solves min cᵀx subject to A x = b, x >= 0 by the two-phase
// tableau simplex (Dantzig's rule, with Bland's rule after a run of
// degenerate pivots so that it cannot cycle; Chvátal 1983, Ch. 2-3). It
// returns x, the optimum, and the duals y of the rows (c - Aᵀy >= 0 at the
// optimum). It is meant for small, dense problems: a column-generation
// master with tens of rows; gonum's simplex does not return duals.
func denseLP(c []float64, a [][]float64, b []float64) (x []float64, obj float64, y []float64, err error) {
	m, n := len(a), len(c)
	// Equilibrate rows: row i is divided by its largest entry, and its dual
	// scaled back at the end.
	rowScale := make([]float64, m)
	scaled := make([][]float64, m)
	sb := make([]float64, m)
	for i, row := range a {
		big := 0.0
		for _, v := range row {
			big = max(big, math.Abs(v))
		}
		if big == 0 {
			big = 1
		}
		rowScale[i] = big
		scaled[i] = make([]float64, n)
		for j, v := range row {
			scaled[i][j] = v / big
		}
		sb[i] = b[i] / big
	}
	x, obj, y, err = denseLPScaled(c, scaled, sb)
	for i := range y {
		y[i] /= rowScale[i]
	}
	return x, obj, y, err
}

// denseLPScaled is denseLP on equilibrated rows.
func denseLPScaled(c []float64, a [][]float64, b []float64) (x []float64, obj float64, y []float64, err error) {
	m, n := len(a), len(c)
	// Columns: n structural, then m artificial; last column the right side.
	w := n + m + 1
	t := make([][]float64, m+1)
	sign := make([]float64, m)
	for i := range m {
		t[i] = make([]float64, w)
		sign[i] = 1
		if b[i] < 0 {
			sign[i] = -1
		}
		for j := range n {
			t[i][j] = sign[i] * a[i][j]
		}
		t[i][n+i] = 1
		t[i][w-1] = sign[i] * b[i]
	}
	t[m] = make([]float64, w)
	basis := make([]int, m)
	for i := range basis {
		basis[i] = n + i
	}
	scale := 1.0
	for i := range m {
		for j := range n {
			scale = max(scale, math.Abs(t[i][j]))
		}
	}
	tol := 1e-11 * scale

	// Phase 1: minimise the sum of the artificials.
	for j := range w {
		t[m][j] = 0
	}
	for i := range m {
		for j := range w {
			if j < n || j == w-1 {
				t[m][j] -= t[i][j]
			}
		}
	}
	if err := pivotAll(t, basis, n+m, tol, tol); err != nil {
		return nil, 0, nil, err
	}
	if -t[m][w-1] > 1e-9*max(1, maxAbs(b)) {
		return nil, 0, nil, errInfeasible
	}
	// Drive artificials out of the basis where a structural column can
	// replace them; rows where none can are redundant and stay.
	for i, bi := range basis {
		if bi < n {
			continue
		}
		for j := range n {
			if math.Abs(t[i][j]) > tol {
				pivot(t, basis, i, j)
				break
			}
		}
	}
	// Phase 2: the real costs; artificial columns may not enter.
	for j := range w {
		t[m][j] = 0
	}
	copy(t[m], c)
	for i, bi := range basis {
		if bi < n && c[bi] != 0 {
			f := c[bi]
			for j := range w {
				t[m][j] -= f * t[i][j]
			}
		}
	}
	if err := pivotAll(t, basis, n, tol, 1e-11*max(1, maxAbs(c))); err != nil {
		return nil, 0, nil, err
	}
	x = make([]float64, n)
	for i, bi := range basis {
		if bi < n {
			x[bi] = t[i][w-1]
		}
	}
	obj = -t[m][w-1]
	// The reduced cost of artificial column i is 0 - yᵀ(sign_i e_i): the
	// tableau holds -sign_i·y_i there.
	y = make([]float64, m)
	for i := range m {
		y[i] = -t[m][n+i] * sign[i]
	}
	return x, obj, y, nil
}

func maxAbs(v []float64) float64 {
	m := 0.0
	for _, x := range v {
		m = max(m, math.Abs(x))
	}
	return m
}

// pivotAll pivots until no column below limit has a reduced cost below
// -costTol; tol is the pivot tolerance.
func pivotAll(t [][]float64, basis []int, limit int, tol, costTol float64) error {
	m := len(basis)
	w := len(t[0])
	degenerate := 0
	for iter := 0; iter < 50000; iter++ {
		enter := -1
		best := -costTol
		bland := degenerate > 50
		for j := range limit {
			if rc := t[m][j]; rc < best {
				enter, best = j, rc
				if bland {
					break
				}
			}
		}
		if enter < 0 {
			return nil
		}
		leave, ratio := -1, math.Inf(1)
		for i := range m {
			if a := t[i][enter]; a > tol {
				r := t[i][w-1] / a
				if r < ratio-1e-12 || (r <= ratio+1e-12 && leave >= 0 && basis[i] < basis[leave]) {
					leave, ratio = i, r
				}
			}
		}
		if leave < 0 {
			return errUnbounded
		}
		if ratio <= tol {
			degenerate++
		} else {
			degenerate = 0
		}
		pivot(t, basis, leave, enter)
	}
	return errPivots
}

func pivot(t [][]float64, basis []int, r, c int) {
	w := len(t[0])
	p := t[r][c]
	for j := range w {
		t[r][j] /= p
	}
	for i := range t {
		if i == r {
			continue
		}
		f := t[i][c]
		if f == 0 {
			continue
		}
		row := t[i]
		for j := range w {
			row[j] -= f * t[r][j]
		}
	}
	basis[r] = c
}
