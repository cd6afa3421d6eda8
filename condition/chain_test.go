package condition

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"
)

// dense turns dense rows into a Chain.
func dense(rows [][]float64) Chain {
	c := Chain{Rows: make([][]Entry, len(rows))}
	for s, row := range rows {
		if row == nil {
			continue
		}
		c.Rows[s] = []Entry{}
		for t, p := range row {
			if p != 0 {
				c.Rows[s] = append(c.Rows[s], Entry{To: t, P: p})
			}
		}
	}
	return c
}

// drunkard is the Drunkard's Walk of C. M. Grinstead & J. L. Snell,
// Introduction to Probability, 2nd rev. ed., AMS 1997, §11.2, Example 11.13:
// corners 0 and 4 absorbing, a step left or right with probability p / 1-p.
func drunkard(right float64) Chain {
	l := 1 - right
	return dense([][]float64{
		{1, 0, 0, 0, 0},
		{l, 0, right, 0, 0},
		{0, l, 0, right, 0},
		{0, 0, l, 0, right},
		{0, 0, 0, 0, 1},
	})
}

func TestFundamentalMatrixDrunkardsWalk(t *testing.T) {
	tests := []struct {
		name  string
		right float64
		n     [][]float64
		times []float64
		b     [][]float64
		tol   float64
	}{
		// Grinstead & Snell §11.2 (Example 11.13 continued): N, t = Nc =
		// (3, 4, 3), B = NR; book values from memory.
		{"p=1/2", 0.5,
			[][]float64{{1.5, 1, 0.5}, {1, 2, 1}, {0.5, 1, 1.5}},
			[]float64{3, 4, 3},
			[][]float64{{0.75, 0.25}, {0.5, 0.5}, {0.25, 0.75}}, 1e-12},
		// Grinstead & Snell §11.2 Exercise 8 (step right with probability
		// 2/3): N, t and B as given in third-party worked solutions of the
		// exercise (not the book's printed answers).
		{"p=2/3", 2.0 / 3,
			[][]float64{{1.4, 1.2, 0.8}, {0.6, 1.8, 1.2}, {0.2, 0.6, 1.4}},
			[]float64{3.4, 3.6, 2.2},
			[][]float64{{7.0 / 15, 8.0 / 15}, {0.2, 0.8}, {1.0 / 15, 14.0 / 15}}, 1e-12},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			c := drunkard(tc.right)
			n, err := c.Fundamental([]int{1, 2, 3})
			if err != nil {
				t.Fatal(err)
			}
			b, err := c.Absorption([]int{1, 2, 3}, []int{0, 4})
			if err != nil {
				t.Fatal(err)
			}
			for i := range 3 {
				for j := range 3 {
					if got := n.At(i, j); math.Abs(got-tc.n[i][j]) > tc.tol {
						t.Errorf("N[%d][%d] = %g, want %g", i, j, got, tc.n[i][j])
					}
				}
				for k := range 2 {
					if got := b.At(i, k); math.Abs(got-tc.b[i][k]) > tc.tol {
						t.Errorf("B[%d][%d] = %g, want %g", i, k, got, tc.b[i][k])
					}
				}
			}
			p, err := c.FirstPassage([]bool{true, false, false, false, true})
			if err != nil {
				t.Fatal(err)
			}
			for i, want := range tc.times {
				if got := p.Periods[i+1]; math.Abs(got-want) > tc.tol {
					t.Errorf("t[%d] = %g, want %g", i+1, got, want)
				}
				if got := p.Probability[i+1]; math.Abs(got-1) > tc.tol {
					t.Errorf("hit probability [%d] = %g, want 1", i+1, got)
				}
			}
		})
	}
}

// oz is the Land of Oz weather chain (rain, nice, snow) of J. G. Kemeny &
// J. L. Snell, Finite Markov Chains, Van Nostrand 1960 (also Grinstead &
// Snell 1997, Example 11.1).
var oz = dense([][]float64{{0.5, 0.25, 0.25}, {0.5, 0, 0.5}, {0.25, 0.25, 0.5}})

func TestStationaryLandOfOz(t *testing.T) {
	// Stationary vector (0.4, 0.2, 0.4): Grinstead & Snell 1997, Ch. 11
	// (from memory), confirmed by solving πP = π by hand.
	pi, err := oz.Stationary()
	if err != nil {
		t.Fatal(err)
	}
	for s, want := range []float64{0.4, 0.2, 0.4} {
		if math.Abs(pi[s]-want) > 1e-12 {
			t.Errorf("π[%d] = %g, want %g", s, pi[s], want)
		}
	}
}

func TestMeanFirstPassageLandOfOz(t *testing.T) {
	// Kemeny & Snell, Finite Markov Chains, p. 218 (mean first passage
	// matrix with mean recurrence times on the diagonal), as printed in the
	// documentation of the open-source giddy library (fmpt).
	want := [][]float64{{2.5, 4, 3.33333333}, {2.66666667, 5, 2.66666667}, {3.33333333, 4, 2.5}}
	m, err := oz.MeanFirstPassage()
	if err != nil {
		t.Fatal(err)
	}
	for i := range want {
		for j := range want[i] {
			if math.Abs(m[i][j]-want[i][j]) > 1e-8 {
				t.Errorf("M[%d][%d] = %.9g, want %g", i, j, m[i][j], want[i][j])
			}
		}
	}
}

func TestFirstPassageClassifiesStates(t *testing.T) {
	// 0 -> {0,1}; 1 -> {2 target}; 3 is closed away from the target;
	// 4 -> {3, 2}: may never arrive; 5 has no row; 6 -> 5 or 2.
	c := dense([][]float64{
		{0.5, 0.5, 0, 0, 0, 0, 0},
		{0, 0, 1, 0, 0, 0, 0},
		{0, 0, 1, 0, 0, 0, 0},
		{0, 0, 0, 1, 0, 0, 0},
		{0, 0, 0.5, 0.5, 0, 0, 0},
		nil,
		{0, 0, 0.5, 0, 0, 0.5, 0},
	})
	p, err := c.FirstPassage([]bool{false, false, true, false, false, false, false})
	if err != nil {
		t.Fatal(err)
	}
	// From 0: geometric wait (mean 2) then one step: 3 periods.
	if math.Abs(p.Periods[0]-3) > 1e-12 || p.Periods[1] != 1 || p.Periods[2] != 0 {
		t.Errorf("periods %v", p.Periods)
	}
	if !math.IsInf(p.Periods[3], 1) || !math.IsInf(p.Periods[4], 1) {
		t.Errorf("states that may never arrive: %v, want +Inf", p.Periods[3:5])
	}
	if !math.IsNaN(p.Periods[5]) || !math.IsNaN(p.Periods[6]) {
		t.Errorf("states that may leave the chain: %v, want NaN", p.Periods[5:])
	}
	for s, want := range []float64{1, 1, 1, 0, 0.5, 0, 0.5} {
		if math.Abs(p.Probability[s]-want) > 1e-12 {
			t.Errorf("probability[%d] = %g, want %g", s, p.Probability[s], want)
		}
	}
}

// The survival curve sums to the expected passage time:
// E[τ] = Σ_{k>=0} P(τ > k) (a closed-form identity), on random chains.
func TestSurvivalSumsToPassageTime(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 1))
	for trial := range 20 {
		n := 2 + rng.IntN(8)
		rows := make([][]float64, n)
		for s := range rows {
			rows[s] = make([]float64, n)
			sum := 0.0
			for t := range rows[s] {
				rows[s][t] = rng.Float64()
				sum += rows[s][t]
			}
			for t := range rows[s] {
				rows[s][t] /= sum
			}
		}
		c := dense(rows)
		targets := make([]bool, n)
		targets[n-1] = true
		p, err := c.FirstPassage(targets)
		if err != nil {
			t.Fatal(err)
		}
		surv := c.Survival(targets, 4000)
		for s := range n {
			sum := 0.0
			for _, x := range surv[s] {
				sum += x
			}
			if math.Abs(sum-p.Periods[s]) > 1e-8*(1+p.Periods[s]) {
				t.Errorf("trial %d, state %d: Σ survival %g, passage %g", trial, s, sum, p.Periods[s])
			}
		}
	}
}

func TestStationarySeveralClasses(t *testing.T) {
	c := dense([][]float64{{1, 0, 0}, {0.5, 0, 0.5}, {0, 0, 1}})
	_, err := c.Stationary()
	var ce *ClassesError
	if !errors.As(err, &ce) || len(ce.Classes) != 2 {
		t.Fatalf("err = %v, want two closed classes", err)
	}
	// Transient states get probability 0.
	c = dense([][]float64{{0.5, 0.5, 0}, {0, 0.5, 0.5}, {0, 0.5, 0.5}})
	pi, err := c.Stationary()
	if err != nil || pi[0] != 0 || math.Abs(pi[1]-0.5) > 1e-12 {
		t.Errorf("π = %v, %v; want (0, 0.5, 0.5)", pi, err)
	}
}

// A 1e-17 probability of failing per period (/work/shared/repro's fp case)
// is a path on the graph and an expected life of 1e17 periods, not a
// singular system: 1 - (1 - 1e-17) is 0 in float64, the sum of the exit
// probabilities is not.
func TestFirstPassageTinyProbability(t *testing.T) {
	c := Chain{Rows: [][]Entry{
		{{To: 0, P: 1}, {To: 1, P: 1e-17}},
		{{To: 0, P: 1}},
	}}
	p, err := c.FirstPassage([]bool{false, true})
	if err != nil {
		t.Fatal(err)
	}
	// Closed form: a geometric stay with exit probability
	// 1e-17/(1 + 1e-17) once the row is divided by its sum.
	want := (1 + 1e-17) / 1e-17
	if math.Abs(p.Periods[0]-want) > 1e-12*want {
		t.Errorf("FirstPassage(fp): periods[0] = %g, want %g (rel tol 1e-12)", p.Periods[0], want)
	}
	if math.Abs(p.Probability[0]-1) > 1e-15 {
		t.Errorf("FirstPassage(fp): probability[0] = %g, want 1", p.Probability[0])
	}
	pi, err := c.Stationary()
	if err != nil {
		t.Fatal(err)
	}
	// Closed form for two states: π1/π0 = P(0→1)/P(1→0) = 1e-17/(1+1e-17).
	if r := pi[1] / pi[0]; math.Abs(r-1e-17) > 1e-12*1e-17 {
		t.Errorf("Stationary(fp): π1/π0 = %g, want 1e-17 (rel tol 1e-12)", r)
	}
}

// A 500-state scale that wears one state at a time, with staying
// probabilities from 0.5 to 1 - 1e-15: expected first-passage times to the
// last state against the closed form Σ_{k>=s} 1/(1 - p_k) of a pure-birth
// chain, and the stationary distribution of a birth-death chain against
// detailed balance π_{k+1}/π_k = up_k/down_{k+1} (both e.g. Kemeny & Snell
// 1960, Ch. 5, closed forms).
func TestChainAnalyticsLongScale(t *testing.T) {
	const n = 500
	rng := rand.New(rand.NewPCG(81, 82))
	stay := make([]float64, n)
	birth := Chain{Rows: make([][]Entry, n)}
	for k := range n - 1 {
		stay[k] = 1 - math.Pow(10, -0.3-14.7*rng.Float64())
		birth.Rows[k] = []Entry{{To: k, P: stay[k]}, {To: k + 1, P: 1 - stay[k]}}
	}
	birth.Rows[n-1] = []Entry{{To: 0, P: 1}}
	target := make([]bool, n)
	target[n-1] = true
	p, err := birth.FirstPassage(target)
	if err != nil {
		t.Fatal(err)
	}
	want := 0.0
	for s := n - 2; s >= 0; s-- {
		row := birth.Rows[s]
		want += (row[0].P + row[1].P) / row[1].P
		if math.Abs(p.Periods[s]-want) > 1e-12*want {
			t.Errorf("FirstPassage(500): periods[%d] = %.15g, want %.15g (rel tol 1e-12)", s, p.Periods[s], want)
		}
	}

	bd := Chain{Rows: make([][]Entry, n)}
	up, down := make([]float64, n), make([]float64, n)
	for k := range n {
		if k < n-1 {
			up[k] = math.Pow(10, -1-6*rng.Float64())
		}
		if k > 0 {
			down[k] = math.Pow(10, -1-6*rng.Float64())
		}
		row := []Entry{{To: k, P: 1 - up[k] - down[k]}}
		if k > 0 {
			row = append(row, Entry{To: k - 1, P: down[k]})
		}
		if k < n-1 {
			row = append(row, Entry{To: k + 1, P: up[k]})
		}
		bd.Rows[k] = row
	}
	pi, err := bd.Stationary()
	if err != nil {
		t.Fatal(err)
	}
	for k := range n - 1 {
		if pi[k] == 0 || pi[k+1] == 0 {
			continue // underflow of the tail, below 1e-308
		}
		r, w := pi[k+1]/pi[k], up[k]/down[k+1]
		if math.Abs(r-w) > 1e-9*w {
			t.Errorf("Stationary(500): π%d/π%d = %g, want %g (rel tol 1e-9)", k+1, k, r, w)
		}
	}
}

// A time beyond float64's range is NaN with a *NumericError, not +Inf
// (which means "never") and not a lost answer for the other states.
func TestFirstPassageOverflow(t *testing.T) {
	c := Chain{Rows: [][]Entry{
		{{To: 0, P: 1}, {To: 2, P: 1e-320}},
		{{To: 2, P: 0.5}, {To: 1, P: 0.5}},
		{{To: 0, P: 1}},
	}}
	p, err := c.FirstPassage([]bool{false, false, true})
	var ne *NumericError
	if !errors.As(err, &ne) || ne.State != 0 {
		t.Fatalf("FirstPassage(overflow): err = %v, want a *NumericError for state 0", err)
	}
	if !math.IsNaN(p.Periods[0]) || math.Abs(p.Periods[1]-2) > 1e-12 {
		t.Errorf("FirstPassage(overflow): periods %v, want [NaN 2 0]", p.Periods)
	}
}
