package condition

import (
	"context"
	"errors"
	"fmt"
	"math"
	"sort"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize"
)

// generator builds Q (per year) from log-rates.
func (e *estimator) generator(theta []float64) [][]float64 {
	n := e.o.States
	q := make([][]float64, n)
	for i := range q {
		q[i] = make([]float64, n)
	}
	for k, pr := range e.pairs {
		// The cap (e^15 ≈ 3.3 million per year) keeps a wild line-search
		// step finite.
		r := math.Exp(min(theta[k], 15))
		q[pr[0]][pr[1]] = r
		q[pr[0]][pr[0]] -= r
	}
	return q
}

// dayData groups passive intervals by length: counts[k*n*n + i*n + j] is
// the number of intervals of length days[k] from i to j. ps and ws are
// scratch space for the likelihood passes.
type dayData struct {
	days   []int
	counts []float64
	ps, ws []float64
}

func (e *estimator) group(ts []Transition) *dayData {
	n := e.o.States
	nn := n * n
	d := &dayData{days: e.days, counts: make([]float64, len(e.days)*nn),
		ps: make([]float64, (len(e.days)+1)*nn), ws: make([]float64, (len(e.days)+1)*nn)}
	for _, t := range ts {
		d.counts[e.dayIndex[t.Days]*nn+t.From*n+t.To]++
	}
	return d
}

// A rate whose log falls below ridgeFloor (about 1e-5 per year) is
// pulled back by a quadratic penalty of weight ridge per observation: it
// keeps rates that the data put at zero finite without touching the
// others.
const (
	ridge      = 1e-3
	ridgeFloor = -11.5
)

// fitGenerator maximises the panel likelihood over the log-rates.
func (e *estimator) fitGenerator(ctx context.Context, passive []Transition, counts [][][]int, warm *model) ([]float64, error) {
	if len(passive) == 0 {
		return nil, &InsufficientDataError{Msg: "no intervals without recorded work, so no passive generator can be fitted"}
	}
	data := e.group(passive)
	x0 := make([]float64, len(e.pairs))
	if warm != nil && warm.theta != nil {
		copy(x0, warm.theta)
	} else {
		// Start from the counting rates per year of exposure, floored.
		exposure := make([]float64, e.o.States)
		flows := make(map[[2]int]float64)
		for _, t := range passive {
			exposure[t.From] += float64(t.Days) / DaysPerYear
			if t.From != t.To {
				flows[[2]int{t.From, t.To}]++
			}
		}
		for k, pr := range e.pairs {
			rate := 0.01
			if exposure[pr[0]] > 0 {
				rate = max(flows[pr]/exposure[pr[0]], 0.01)
			}
			x0[k] = math.Log(rate)
		}
	}
	nObs := float64(len(passive))
	prob := optimize.Problem{
		Func: func(x []float64) float64 { return e.negLogLik(x, nil, data, nObs) },
		Grad: func(grad, x []float64) { e.negLogLik(x, grad, data, nObs) },
	}
	res, err := optimize.Minimize(prob, x0, &optimize.Settings{
		GradientThreshold: 1e-6 * nObs,
		Converger:         &optimize.FunctionConverge{Absolute: 1e-10 * nObs, Relative: 1e-12, Iterations: 3},
		MajorIterations:   500,
		FuncEvaluations:   5000,
		Recorder:          ctxRecorder{ctx},
	}, &optimize.BFGS{})
	if err := ctx.Err(); err != nil {
		return nil, err
	}
	if res == nil {
		return nil, fmt.Errorf("condition: estimate: generator fit failed: %v", err)
	}
	// A line search that fails or cannot move the point any more stops
	// at the best point found: on these likelihoods that happens at the
	// optimum to rounding (tiny panels, rates at the ridge floor).
	if err != nil && !errors.Is(err, optimize.ErrLinesearcherFailure) && !errors.Is(err, optimize.ErrNoProgress) && res.Status != optimize.IterationLimit {
		return nil, fmt.Errorf("condition: estimate: generator fit: %w", err)
	}
	return res.X, nil
}

// ctxRecorder stops the generator search with ctx.Err() once ctx is done:
// gonum's Minimize asks its Recorder at every evaluation and iteration.
type ctxRecorder struct{ ctx context.Context }

func (r ctxRecorder) Init() error { return r.ctx.Err() }
func (r ctxRecorder) Record(*optimize.Location, optimize.Operation, *optimize.Stats) error {
	return r.ctx.Err()
}

// negLogLik returns -log L(θ) + ridge penalty and, when grad is not nil,
// its gradient. With distinct interval lengths d_1 < ... < d_K (days),
// P_k = P_{k-1} exp(A (d_k - d_{k-1})) and A = Q/365.25, the forward pass
// costs one n×n product per distinct length and one exponential per
// distinct gap; the adjoint pass runs the chain backwards and ends in one
// Fréchet derivative per distinct gap. Small matrices are plain row-major
// slices: gonum's general routines cost more than the arithmetic here.
func (e *estimator) negLogLik(theta, grad []float64, d *dayData, nObs float64) float64 {
	n := e.o.States
	nn := n * n
	q := e.generator(theta)
	const h = 1 / DaysPerYear
	a := scale(q, h)
	gaps := make(map[int][]float64)
	K := len(d.days)
	ps, ws := d.ps, d.ws
	clear(ps[:nn])
	for i := range n {
		ps[i*n+i] = 1
	}
	prev := 0
	for k, day := range d.days {
		g := day - prev
		gm := gaps[g]
		if gm == nil {
			var ga mat.Dense
			ga.Scale(float64(g), a)
			gm = expm(&ga).RawMatrix().Data
			gaps[g] = gm
		}
		mulInto(ps[(k+1)*nn:(k+2)*nn], ps[k*nn:(k+1)*nn], gm, n)
		prev = day
	}
	ll := 0.0
	clear(ws)
	for k := range K {
		pk, wk := ps[(k+1)*nn:(k+2)*nn], ws[(k+1)*nn:(k+2)*nn]
		for idx, c := range d.counts[k*nn : (k+1)*nn] {
			if c == 0 {
				continue
			}
			pij := pk[idx]
			if !(pij > 1e-300) {
				pij = 1e-300
			}
			ll += c * math.Log(pij)
			wk[idx] = c / pij
		}
	}
	pen := 0.0
	for _, t := range theta {
		if t < ridgeFloor {
			pen += ridge * nObs * (t - ridgeFloor) * (t - ridgeFloor)
		}
	}
	if grad == nil {
		return -ll + pen
	}
	// Adjoint pass (reverse mode): abar is dℓ/dP_k through P_k and every
	// later P; dℓ/dG_k = P_{k-1}ᵀ abar_k, summed by gap length.
	gapOf := func(k int) int { // k = 1..K
		if k == 1 {
			return d.days[0]
		}
		return d.days[k-1] - d.days[k-2]
	}
	sums := make(map[int][]float64)
	abar := make([]float64, nn)
	tmp := make([]float64, nn)
	for k := K; k >= 1; k-- {
		if k < K {
			mulTransBInto(tmp, abar, gaps[gapOf(k+1)], n)
			copy(abar, tmp)
		}
		for i, w := range ws[k*nn : (k+1)*nn] {
			abar[i] += w
		}
		g := gapOf(k)
		sum := sums[g]
		if sum == nil {
			sum = make([]float64, nn)
			sums[g] = sum
		}
		mulTransAAdd(sum, ps[(k-1)*nn:k*nn], abar, n)
	}
	dA := mat.NewDense(n, n, nil)
	// Sum in a fixed order: map order would change the rounding from run
	// to run.
	gapKeys := make([]int, 0, len(sums))
	for gap := range sums {
		gapKeys = append(gapKeys, gap)
	}
	sort.Ints(gapKeys)
	for _, gap := range gapKeys {
		sm := sums[gap]
		var ga mat.Dense
		ga.Scale(float64(gap), a.T())
		l := frechet(&ga, mat.NewDense(n, n, sm))
		l.Scale(float64(gap), l)
		dA.Add(dA, l)
	}
	for k, pr := range e.pairs {
		i, j := pr[0], pr[1]
		dq := h * (dA.At(i, j) - dA.At(i, i))
		grad[k] = -dq * math.Exp(theta[k])
		if theta[k] < ridgeFloor {
			grad[k] += 2 * ridge * nObs * (theta[k] - ridgeFloor)
		}
	}
	return -ll + pen
}
