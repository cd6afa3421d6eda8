// Package simplex is a dense two-phase tableau simplex method for small and
// medium linear programs in standard form,
//
//	minimise cᵀx  subject to  A x = b,  x >= 0,
//
// that returns the row duals y (c - Aᵀy >= 0 at an optimum), accepts a
// starting basis, bounds its work and checks a context between pivots.
// The fleet planner's column-generation master and the LP method of
// optimize both use it; gonum's lp.Simplex returns no duals, takes no
// context and has no pivot cap.
//
// Pivot rule. Dantzig's rule (most negative reduced cost), switched to
// Bland's smallest-index rule for both the entering and the leaving column
// after a run of degenerate pivots (Bland 1977, Math. Oper. Res. 2; V.
// Chvátal, Linear Programming, Freeman 1983, Ch. 3). A cycle of the
// simplex method consists of degenerate pivots only (any other pivot lowers
// the objective strictly), and Bland's rule cannot cycle, so the method
// terminates. Reduced costs above -CostTol and pivot entries below the
// pivot tolerance count as zero, so columns that tie exactly (two actions
// with the same cost and transitions) never trade places on rounding noise.
//
// Work. One pivot costs O(m·(n+m)) for m rows and n columns; the number of
// pivots is capped (Settings.MaxPivots). Reaching the cap in phase 2 is a
// status (PivotLimit) with the last feasible basic solution; reaching it in
// phase 1 is the error ErrPivotLimit. ctx is checked before every pivot
// (of the crash basis, both phases and the drive-out of artificials) and
// every rowCheck rows while the tableau is built.
package simplex

import (
	"context"
	"errors"
	"fmt"
	"math"
)

var (
	// ErrInfeasible: no x >= 0 satisfies A x = b.
	ErrInfeasible = errors.New("simplex: linear program is infeasible")
	// ErrUnbounded: the objective has no lower bound on the feasible set.
	ErrUnbounded = errors.New("simplex: linear program is unbounded")
	// ErrPivotLimit: the pivot cap was reached before a feasible basis
	// was found.
	ErrPivotLimit = errors.New("simplex: pivot limit reached before a feasible basis was found")
)

// Status says how Solve ended.
type Status int

const (
	// Optimal: no reduced cost is below -CostTol.
	Optimal Status = iota
	// PivotLimit: the pivot cap was reached in phase 2; the result holds
	// the last basic feasible solution, which need not be optimal.
	PivotLimit
)

func (s Status) String() string {
	if s == Optimal {
		return "optimal"
	}
	return "pivot limit"
}

// Settings controls Solve. A nil *Settings means the defaults.
type Settings struct {
	// MaxPivots caps the pivots of both phases together. Zero means
	// DefaultMaxPivots(m, n).
	MaxPivots int
	// Basis, if not nil, lists m columns forming a basis whose basic
	// solution B⁻¹b is feasible (>= 0); phase 1 then starts from it. A
	// basis that turns out singular or infeasible is ignored.
	Basis []int
}

// DefaultMaxPivots is the default pivot cap for m rows and n columns:
// 50·(m + n), far above the few·m pivots the simplex method takes in
// practice (common practice, no source).
func DefaultMaxPivots(m, n int) int { return 50 * (m + n) }

// Result is the answer of Solve.
type Result struct {
	Status Status
	// X is the primal solution, Objective = cᵀX.
	X         []float64
	Objective float64
	// Dual[i] is the dual price y_i of row i: c - Aᵀy >= -CostTol at an
	// optimum, and bᵀy = Objective.
	Dual []float64
	// Basis[i] is the column basic in row i, or -1 for a redundant row
	// whose artificial variable stayed basic at zero.
	Basis []int
	// Pivots counts the pivots of both phases.
	Pivots int
}

// Solve minimises cᵀx subject to A x = b, x >= 0 (a has one slice per row,
// each of len(c) entries). Rows are equilibrated (each divided by its
// largest entry) before the tableau is built; duals are scaled back.
// Errors: ErrInfeasible, ErrUnbounded, ErrPivotLimit, ctx.Err(), and
// shape faults.
func Solve(ctx context.Context, c []float64, a [][]float64, b []float64, s *Settings) (*Result, error) {
	m, n := len(a), len(c)
	if len(b) != m {
		return nil, fmt.Errorf("simplex: %d right-hand sides for %d rows", len(b), m)
	}
	for i, row := range a {
		if len(row) != n {
			return nil, fmt.Errorf("simplex: row %d has %d entries, want %d", i, len(row), n)
		}
	}
	var set Settings
	if s != nil {
		set = *s
	}
	if set.MaxPivots <= 0 {
		set.MaxPivots = DefaultMaxPivots(m, n)
	}
	t, err := newTableau(ctx, c, a, b)
	if err != nil {
		return nil, err
	}
	if set.Basis != nil {
		ok, err := t.crash(ctx, set.Basis)
		if err != nil {
			return nil, err
		}
		if !ok {
			if t, err = newTableau(ctx, c, a, b); err != nil {
				return nil, err
			}
		}
	}
	limit := set.MaxPivots
	if !t.feasibleStart {
		st, err := t.phase1(ctx, limit)
		if err != nil {
			return nil, err
		}
		if st == PivotLimit {
			return nil, ErrPivotLimit
		}
	}
	st, err := t.phase2(ctx, limit)
	if err != nil {
		return nil, err
	}
	return t.result(st), nil
}

// Dense is Solve with the default settings for callers that need an
// optimum: it returns x, the objective and the duals, and ErrPivotLimit
// when the cap is reached in either phase.
func Dense(ctx context.Context, c []float64, a [][]float64, b []float64) (x []float64, obj float64, y []float64, err error) {
	r, err := Solve(ctx, c, a, b, nil)
	if err != nil {
		return nil, 0, nil, err
	}
	if r.Status != Optimal {
		return nil, 0, nil, ErrPivotLimit
	}
	return r.X, r.Objective, r.Dual, nil
}

// tableau is the dense simplex tableau [A | I | b] of the equilibrated,
// sign-normalised rows, with the reduced-cost row last.
type tableau struct {
	m, n     int // rows, structural columns
	t        [][]float64
	basis    []int
	c        []float64
	rowScale []float64 // row i was divided by rowScale[i]·sign[i]
	sign     []float64
	tol      float64 // pivot tolerance
	costTol  float64 // reduced costs above -costTol count as zero
	bScale   float64
	pivots   int
	// feasibleStart: a crashed starting basis is feasible, phase 1 is not
	// needed.
	feasibleStart bool
}

// rowCheck is how many rows newTableau builds between checks of ctx.
const rowCheck = 64

func newTableau(ctx context.Context, c []float64, a [][]float64, b []float64) (*tableau, error) {
	m, n := len(a), len(c)
	w := n + m + 1
	tb := &tableau{m: m, n: n, t: make([][]float64, m+1), basis: make([]int, m), c: c,
		rowScale: make([]float64, m), sign: make([]float64, m)}
	scale := 1.0
	for i, row := range a {
		if i%rowCheck == 0 {
			if err := ctx.Err(); err != nil {
				return nil, err
			}
		}
		big := 0.0
		for _, v := range row {
			big = max(big, math.Abs(v))
		}
		if big == 0 {
			big = 1
		}
		tb.rowScale[i] = big
		tb.sign[i] = 1
		if b[i] < 0 {
			tb.sign[i] = -1
		}
		f := tb.sign[i] / big
		r := make([]float64, w)
		for j, v := range row {
			r[j] = f * v
			scale = max(scale, math.Abs(r[j]))
		}
		r[n+i] = 1
		r[w-1] = f * b[i]
		tb.bScale = max(tb.bScale, math.Abs(r[w-1]))
		tb.t[i] = r
		tb.basis[i] = n + i
	}
	tb.t[m] = make([]float64, w)
	tb.tol = 1e-11 * scale
	tb.costTol = 1e-11 * max(1, maxAbs(c))
	return tb, nil
}

// crash pivots the given columns into the basis, one per row (the row
// whose artificial is basic with the largest entry of the column), and
// reports whether the result is a full, feasible basis. Each pivot costs
// O(m·(n+m)), so ctx is checked before every one.
func (tb *tableau) crash(ctx context.Context, cols []int) (bool, error) {
	if len(cols) != tb.m {
		return false, nil
	}
	w := len(tb.t[0])
	for _, j := range cols {
		if err := ctx.Err(); err != nil {
			return false, err
		}
		if j < 0 || j >= tb.n {
			return false, nil
		}
		row, big := -1, tb.tol
		for i, bi := range tb.basis {
			if bi >= tb.n && math.Abs(tb.t[i][j]) > big {
				row, big = i, math.Abs(tb.t[i][j])
			}
		}
		if row < 0 {
			return false, nil
		}
		tb.pivot(row, j)
	}
	for i := range tb.m {
		if tb.t[i][w-1] < -1e-9*max(1, tb.bScale) {
			return false, nil
		}
		tb.t[i][w-1] = max(0, tb.t[i][w-1])
	}
	tb.feasibleStart = true
	return true, nil
}

// phase1 minimises the sum of the artificials, then drives artificials
// out of the basis where a structural column can replace them.
func (tb *tableau) phase1(ctx context.Context, limit int) (Status, error) {
	m, n := tb.m, tb.n
	w := len(tb.t[0])
	obj := tb.t[m]
	clear(obj)
	for i := range m {
		if tb.basis[i] < n {
			continue
		}
		for j := range w {
			if j < n || j == w-1 {
				obj[j] -= tb.t[i][j]
			}
		}
	}
	st, err := tb.pivotAll(ctx, n+m, tb.tol, limit)
	if err != nil || st != Optimal {
		return st, err
	}
	if -obj[w-1] > 1e-9*max(1, tb.bScale) {
		return Optimal, ErrInfeasible
	}
	for i, bi := range tb.basis {
		if bi < n {
			continue
		}
		if err := ctx.Err(); err != nil {
			return Optimal, err
		}
		for j := range n {
			if math.Abs(tb.t[i][j]) > tb.tol {
				tb.pivot(i, j)
				break
			}
		}
	}
	return Optimal, nil
}

// phase2 minimises the real objective; artificial columns may not enter.
func (tb *tableau) phase2(ctx context.Context, limit int) (Status, error) {
	m, n := tb.m, tb.n
	w := len(tb.t[0])
	obj := tb.t[m]
	clear(obj)
	copy(obj, tb.c)
	for i, bi := range tb.basis {
		if bi < n && tb.c[bi] != 0 {
			f := tb.c[bi]
			for j := range w {
				obj[j] -= f * tb.t[i][j]
			}
		}
	}
	return tb.pivotAll(ctx, n, tb.costTol, limit)
}

// pivotAll pivots until no column below enterLimit has a reduced cost
// below -costTol, the pivot count reaches limit, or ctx is done.
func (tb *tableau) pivotAll(ctx context.Context, enterLimit int, costTol float64, limit int) (Status, error) {
	m := tb.m
	w := len(tb.t[0])
	obj := tb.t[m]
	// After this many degenerate pivots in a row, Bland's rule takes over
	// until a pivot makes progress.
	const degenerateRun = 50
	degenerate := 0
	for {
		if err := ctx.Err(); err != nil {
			return Optimal, err
		}
		bland := degenerate > degenerateRun
		enter, best := -1, -costTol
		for j := range enterLimit {
			if rc := obj[j]; rc < best {
				enter, best = j, rc
				if bland {
					break
				}
			}
		}
		if enter < 0 {
			return Optimal, nil
		}
		if tb.pivots >= limit {
			return PivotLimit, nil
		}
		leave, ratio := -1, math.Inf(1)
		for i := range m {
			a := tb.t[i][enter]
			if a <= tb.tol {
				continue
			}
			r := tb.t[i][w-1] / a
			if leave < 0 {
				leave, ratio = i, r
				continue
			}
			// Ties within rounding go to the smallest basic index (Bland).
			slack := 1e-12 * max(1, math.Abs(ratio))
			if r < ratio-slack || (r <= ratio+slack && tb.basis[i] < tb.basis[leave]) {
				leave, ratio = i, r
			}
		}
		if leave < 0 {
			return Optimal, ErrUnbounded
		}
		if ratio <= tb.tol {
			degenerate++
		} else {
			degenerate = 0
		}
		tb.pivot(leave, enter)
		tb.pivots++
	}
}

// pivot makes column c basic in row r.
func (tb *tableau) pivot(r, c int) {
	t := tb.t
	w := len(t[0])
	pr := t[r]
	p := pr[c]
	for j := range w {
		pr[j] /= p
	}
	pr[c] = 1
	for i := range t {
		if i == r {
			continue
		}
		row := t[i]
		f := row[c]
		if f == 0 {
			continue
		}
		for j := range w {
			row[j] -= f * pr[j]
		}
		row[c] = 0
	}
	tb.basis[r] = c
}

// result reads x, the objective and the duals off the tableau. The
// reduced cost of the artificial column of row i is 0 - ŷ_i in the
// equilibrated, signed rows, and row i was multiplied by
// sign_i/rowScale_i, so y_i = ŷ_i·sign_i/rowScale_i in the original rows.
func (tb *tableau) result(st Status) *Result {
	m, n := tb.m, tb.n
	w := len(tb.t[0])
	r := &Result{Status: st, X: make([]float64, n), Dual: make([]float64, m), Basis: make([]int, m), Pivots: tb.pivots}
	for i, bi := range tb.basis {
		r.Basis[i] = -1
		if bi < n {
			r.X[bi] = max(0, tb.t[i][w-1])
			r.Basis[i] = bi
		}
	}
	for j, x := range r.X {
		r.Objective += tb.c[j] * x
	}
	for i := range m {
		r.Dual[i] = -tb.t[m][n+i] * tb.sign[i] / tb.rowScale[i]
	}
	return r
}

func maxAbs(v []float64) float64 {
	m := 0.0
	for _, x := range v {
		m = max(m, math.Abs(x))
	}
	return m
}
