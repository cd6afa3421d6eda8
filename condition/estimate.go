package condition

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"sort"
	"sync"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize"
	"gonum.org/v1/gonum/stat"
	"gonum.org/v1/gonum/stat/distuv"
)

// DaysPerYear converts inspection dates to years.
const DaysPerYear = 365.25

// FitMethod is a way to estimate transition matrices from a panel.
type FitMethod int

const (
	// Counting is the maximum-likelihood estimate n_ij / n_i, valid when
	// inspections are one period apart.
	Counting FitMethod = iota
	// Generator fits a continuous-time generator Q by maximum likelihood on
	// the panel and reports P = exp(Q·period).
	Generator
)

func (m FitMethod) String() string {
	if m == Generator {
		return "generator"
	}
	return "counting"
}

// Structure restricts the generator of the passive action.
type Structure int

const (
	// AnyChange allows every transition rate.
	AnyChange Structure = iota
	// DeteriorationOnly allows only moves to worse states.
	DeteriorationOnly
	// OneStep allows only moves to the next worse state.
	OneStep
)

// RegularTolerance is how far, relative to one period, an interval may be
// from the period for the counting method: 10%.
const RegularTolerance = 0.10

// FitOptions controls Estimate.
type FitOptions struct {
	States      int
	PeriodYears float64
	Actions     []string
	Passive     int
	Method      FitMethod
	// Structure applies to the passive generator (Generator method).
	Structure Structure
	// Bootstrap is the number of bootstrap replicates over units (0 for
	// none); Seed seeds them; Level is the interval's coverage (default
	// 0.9); Workers is the number of goroutines (default 1).
	Bootstrap int
	Seed      uint64
	Level     float64
	Workers   int
}

// RowEstimate is the estimate of one transition row.
type RowEstimate struct {
	// N is the number of observed intervals from this state under the
	// action; ExposureYears their total length.
	N             int
	ExposureYears float64
	// P is the one-period row; Lower and Upper the bootstrap percentile
	// interval at the requested level (NaN without bootstrap).
	P, Lower, Upper []float64
	// ESS is the effective sample size: the number of exact one-period
	// observations that would give the same precision, the median over
	// entries of p(1-p)/Var (bootstrap), or N without bootstrap.
	ESS float64
}

// GoodnessOfFit is a likelihood-ratio (G) test of the fitted model
// against the observed transitions grouped by action, from-state,
// interval length (quarters of a period) and half of the observation
// window: G = 2 Σ O ln(O/E), with DF degrees of freedom.
type GoodnessOfFit struct {
	Statistic float64
	DF        int
	PValue    float64
}

// Fit is the estimate of the transition rows of every action with
// records.
type Fit struct {
	Method      FitMethod
	PeriodYears float64
	Actions     []string
	// Rows[a][s] is nil when there are no records of action a from s.
	Rows [][]*RowEstimate
	// Counts[a][i][j] are the observed transitions used.
	Counts [][][]int
	// Generator is the fitted passive generator per year (nil for
	// Counting).
	Generator [][]float64
	Fit       GoodnessOfFit
	Warnings  []Warning
}

// IntervalsRegular reports whether every interval is within
// RegularTolerance of one period.
func (p *Panel) IntervalsRegular(periodYears float64) bool {
	for _, t := range p.Transitions {
		if !regular(t.Days, periodYears) {
			return false
		}
	}
	return true
}

func regular(days int, periodYears float64) bool {
	return math.Abs(float64(days)/DaysPerYear/periodYears-1) <= RegularTolerance
}

// Estimate estimates the one-period transition rows of every action with
// records in the panel. Counting uses the intervals within 10% of one
// period (others are reported and left out). Generator fits the passive
// action's generator Q by maximum likelihood on all its intervals
// (Kalbfleisch & Lawless, J. Amer. Statist. Assoc. 80, 1985), with the
// gradient by the adjoint of the matrix exponential's Fréchet derivative
// (Van Loan 1978, block-triangular form) and BFGS on log-rates; a
// recorded action's rows are A·exp(Q·period), with A the immediate effect
// of the work, fitted by EM as a mixture given Q. Confidence intervals
// come from a bootstrap over units.
func Estimate(ctx context.Context, p *Panel, o FitOptions) (*Fit, error) {
	if o.States < 1 || !(o.PeriodYears > 0) || o.Passive < 0 || o.Passive >= len(o.Actions) {
		return nil, errors.New("condition: estimate: bad options")
	}
	if o.Level == 0 {
		o.Level = 0.9
	}
	o.Workers = max(o.Workers, 1)
	f := &Fit{Method: o.Method, PeriodYears: o.PeriodYears, Actions: o.Actions}
	used := p
	if o.Method == Counting {
		used = &Panel{Units: p.Units}
		for _, t := range p.Transitions {
			if !regular(t.Days, o.PeriodYears) {
				f.Warnings = append(f.Warnings, Warning{t.Line, fmt.Sprintf("interval of %d days is more than %.0f%% away from one period (%.0f days); left out of the counting estimate",
					t.Days, 100*RegularTolerance, o.PeriodYears*DaysPerYear)})
				continue
			}
			used.Transitions = append(used.Transitions, t)
		}
	}
	if len(used.Transitions) == 0 {
		return nil, errors.New("condition: estimate: no usable transitions")
	}
	est := newEstimator(o, used)
	base, err := est.fit(used.Transitions, nil)
	if err != nil {
		return nil, err
	}
	f.Generator = base.q
	f.Counts = est.counts(used.Transitions)
	f.Rows = make([][]*RowEstimate, len(o.Actions))
	for a := range o.Actions {
		f.Rows[a] = make([]*RowEstimate, o.States)
		for s := range o.States {
			n := 0
			for _, c := range f.Counts[a][s] {
				n += c
			}
			if n == 0 {
				continue
			}
			f.Rows[a][s] = &RowEstimate{N: n, P: base.p[a][s], ESS: float64(n)}
		}
	}
	for _, t := range used.Transitions {
		if r := f.Rows[t.Action][t.From]; r != nil {
			r.ExposureYears += float64(t.Days) / DaysPerYear
		}
	}
	if o.Bootstrap > 0 {
		if err := est.bootstrap(ctx, f, base); err != nil {
			return nil, err
		}
	} else {
		for _, rows := range f.Rows {
			for _, r := range rows {
				if r != nil {
					r.Lower, r.Upper = nanRow(o.States), nanRow(o.States)
				}
			}
		}
	}
	f.Fit = est.goodness(used.Transitions, base)
	return f, nil
}

func nanRow(n int) []float64 {
	r := make([]float64, n)
	for i := range r {
		r[i] = math.NaN()
	}
	return r
}

// estimator fits one method to sets of transitions.
type estimator struct {
	o     FitOptions
	panel *Panel
	pairs [][2]int // free rates of the passive generator
	// days lists the distinct interval lengths of the panel, dayIndex
	// their positions, so that every resample shares one chain of
	// lengths.
	days     []int
	dayIndex map[int]int
}

// model is one fitted model: one-period rows p[a][s] (nil where there are
// no data), and for the generator method Q per year and the immediate
// effect of each action.
type model struct {
	p      [][][]float64
	q      [][]float64
	effect [][][]float64
	theta  []float64
}

func newEstimator(o FitOptions, p *Panel) *estimator {
	e := &estimator{o: o, panel: p, dayIndex: make(map[int]int)}
	for _, t := range p.Transitions {
		if _, ok := e.dayIndex[t.Days]; !ok {
			e.dayIndex[t.Days] = 0
			e.days = append(e.days, t.Days)
		}
	}
	sort.Ints(e.days)
	for i, d := range e.days {
		e.dayIndex[d] = i
	}
	for i := range o.States {
		for j := range o.States {
			switch {
			case i == j:
			case o.Structure == OneStep && j != i+1:
			case o.Structure == DeteriorationOnly && j < i:
			default:
				e.pairs = append(e.pairs, [2]int{i, j})
			}
		}
	}
	return e
}

func (e *estimator) counts(ts []Transition) [][][]int {
	c := make([][][]int, len(e.o.Actions))
	for a := range c {
		c[a] = make([][]int, e.o.States)
		for s := range c[a] {
			c[a][s] = make([]int, e.o.States)
		}
	}
	for _, t := range ts {
		c[t.Action][t.From][t.To]++
	}
	return c
}

// fit estimates a model from ts, starting the generator search at warm
// when not nil.
func (e *estimator) fit(ts []Transition, warm *model) (*model, error) {
	n := e.o.States
	m := &model{p: make([][][]float64, len(e.o.Actions))}
	counts := e.counts(ts)
	if e.o.Method == Counting {
		for a := range m.p {
			m.p[a] = make([][]float64, n)
			for s := range n {
				tot := 0
				for _, c := range counts[a][s] {
					tot += c
				}
				if tot == 0 {
					continue
				}
				m.p[a][s] = make([]float64, n)
				for j, c := range counts[a][s] {
					m.p[a][s][j] = float64(c) / float64(tot)
				}
			}
		}
		return m, nil
	}
	var passive []Transition
	for _, t := range ts {
		if t.Action == e.o.Passive {
			passive = append(passive, t)
		}
	}
	theta, err := e.fitGenerator(passive, counts, warm)
	if err != nil {
		return nil, err
	}
	m.theta = theta
	m.q = e.generator(theta)
	period := expm(scale(m.q, e.o.PeriodYears))
	m.effect = make([][][]float64, len(e.o.Actions))
	for a := range m.p {
		m.p[a] = make([][]float64, n)
		if a == e.o.Passive {
			for s := range n {
				if rowTotal(counts[a][s]) > 0 {
					m.p[a][s] = rowOf(period, s)
				}
			}
			continue
		}
		m.effect[a] = e.fitEffect(ts, a, m.q)
		for s := range n {
			if m.effect[a][s] == nil {
				continue
			}
			row := make([]float64, n)
			for k, w := range m.effect[a][s] {
				for j := range n {
					row[j] += w * period.At(k, j)
				}
			}
			m.p[a][s] = row
		}
	}
	return m, nil
}

func rowTotal(c []int) int {
	t := 0
	for _, x := range c {
		t += x
	}
	return t
}

func rowOf(a *mat.Dense, s int) []float64 {
	_, n := a.Dims()
	r := make([]float64, n)
	for j := range n {
		r[j] = max(0, a.At(s, j))
	}
	return r
}

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

func scale(q [][]float64, t float64) *mat.Dense {
	n := len(q)
	a := mat.NewDense(n, n, nil)
	for i := range n {
		for j := range n {
			a.Set(i, j, q[i][j]*t)
		}
	}
	return a
}

func expm(a *mat.Dense) *mat.Dense {
	var e mat.Dense
	e.Exp(a)
	return &e
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
func (e *estimator) fitGenerator(passive []Transition, counts [][][]int, warm *model) ([]float64, error) {
	if len(passive) == 0 {
		return nil, errors.New("condition: estimate: no intervals without recorded work, so no passive generator can be fitted")
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
	}, &optimize.BFGS{})
	if res == nil {
		return nil, fmt.Errorf("condition: estimate: generator fit failed: %v", err)
	}
	if err != nil && !errors.Is(err, optimize.ErrLinesearcherFailure) && res.Status != optimize.IterationLimit {
		return nil, fmt.Errorf("condition: estimate: generator fit: %w", err)
	}
	return res.X, nil
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

// mulInto sets dst = a·b for n×n row-major matrices.
func mulInto(dst, a, b []float64, n int) {
	for i := range n {
		row := dst[i*n : (i+1)*n]
		clear(row)
		for k := range n {
			aik := a[i*n+k]
			if aik == 0 {
				continue
			}
			bk := b[k*n : (k+1)*n]
			for j := range n {
				row[j] += aik * bk[j]
			}
		}
	}
}

// mulTransBInto sets dst = a·bᵀ.
func mulTransBInto(dst, a, b []float64, n int) {
	for i := range n {
		for j := range n {
			s := 0.0
			for k := range n {
				s += a[i*n+k] * b[j*n+k]
			}
			dst[i*n+j] = s
		}
	}
}

// mulTransAAdd adds aᵀ·b to dst.
func mulTransAAdd(dst, a, b []float64, n int) {
	for k := range n {
		for i := range n {
			aki := a[k*n+i]
			if aki == 0 {
				continue
			}
			for j := range n {
				dst[i*n+j] += aki * b[k*n+j]
			}
		}
	}
}

// frechet returns L(B, E), the Fréchet derivative of exp at B in the
// direction E: the upper-right block of exp([[B, E], [0, B]]).
func frechet(b *mat.Dense, e *mat.Dense) *mat.Dense {
	n, _ := b.Dims()
	big := mat.NewDense(2*n, 2*n, nil)
	for i := range n {
		for j := range n {
			big.Set(i, j, b.At(i, j))
			big.Set(n+i, n+j, b.At(i, j))
			big.Set(i, n+j, e.At(i, j))
		}
	}
	x := expm(big)
	out := mat.NewDense(n, n, nil)
	for i := range n {
		for j := range n {
			out.Set(i, j, x.At(i, n+j))
		}
	}
	return out
}

// fitEffect fits the immediate effect A of action a (a row per
// from-state, a distribution of the condition just after the work) by EM
// on the mixture P(j | i, t) = Σ_k A(i,k) exp(Q t)(k, j) (Dempster, Laird
// & Rubin 1977).
func (e *estimator) fitEffect(ts []Transition, a int, q [][]float64) [][]float64 {
	n := e.o.States
	type obs struct{ from, to, days int }
	var data []obs
	for _, t := range ts {
		if t.Action == a {
			data = append(data, obs{t.From, t.To, t.Days})
		}
	}
	if len(data) == 0 {
		return make([][]float64, n)
	}
	mats := make(map[int]*mat.Dense)
	for _, o := range data {
		if mats[o.days] == nil {
			mats[o.days] = expm(scale(q, float64(o.days)/DaysPerYear))
		}
	}
	eff := make([][]float64, n)
	for _, o := range data {
		if eff[o.from] == nil {
			eff[o.from] = make([]float64, n)
			for k := range eff[o.from] {
				eff[o.from][k] = 1 / float64(n)
			}
		}
	}
	next := make([][]float64, n)
	for iter := 0; iter < 500; iter++ {
		for i := range next {
			next[i] = nil
			if eff[i] != nil {
				next[i] = make([]float64, n)
			}
		}
		tot := make([]float64, n)
		for _, o := range data {
			em := mats[o.days]
			den := 0.0
			for k, w := range eff[o.from] {
				den += w * em.At(k, o.to)
			}
			if den <= 0 {
				continue
			}
			for k, w := range eff[o.from] {
				next[o.from][k] += w * em.At(k, o.to) / den
			}
			tot[o.from]++
		}
		change := 0.0
		for i := range n {
			if next[i] == nil || tot[i] == 0 {
				continue
			}
			for k := range next[i] {
				next[i][k] /= tot[i]
				change = max(change, math.Abs(next[i][k]-eff[i][k]))
			}
			copy(eff[i], next[i])
		}
		if change < 1e-10 {
			break
		}
	}
	return eff
}

// bootstrap resamples units with replacement, refits, and fills the
// percentile intervals and effective sample sizes of f.
func (e *estimator) bootstrap(ctx context.Context, f *Fit, base *model) error {
	o := e.o
	byUnit := make([][]Transition, len(e.panel.Units))
	for _, t := range e.panel.Transitions {
		byUnit[t.Unit] = append(byUnit[t.Unit], t)
	}
	reps := make([]*model, o.Bootstrap)
	errs := make([]error, o.Bootstrap)
	var wg sync.WaitGroup
	next := make(chan int)
	for range o.Workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for b := range next {
				if ctx.Err() != nil {
					errs[b] = ctx.Err()
					continue
				}
				// Each replicate has its own stream, so results do not
				// depend on the number of workers.
				rng := rand.New(rand.NewPCG(o.Seed, uint64(b)+1))
				ts := make([]Transition, 0, len(e.panel.Transitions)+len(e.panel.Transitions)/8)
				for range byUnit {
					ts = append(ts, byUnit[rng.IntN(len(byUnit))]...)
				}
				reps[b], errs[b] = e.fit(ts, base)
			}
		}()
	}
	for b := range o.Bootstrap {
		next <- b
	}
	close(next)
	wg.Wait()
	if err := ctx.Err(); err != nil {
		return err
	}
	if err := errors.Join(errs...); err != nil {
		return err
	}
	lo, hi := (1-o.Level)/2, 1-(1-o.Level)/2
	for a, rows := range f.Rows {
		for s, r := range rows {
			if r == nil {
				continue
			}
			r.Lower, r.Upper = nanRow(o.States), nanRow(o.States)
			var ess []float64
			for j := range o.States {
				var xs []float64
				for _, m := range reps {
					if m.p[a][s] != nil {
						xs = append(xs, m.p[a][s][j])
					}
				}
				if len(xs) < 2 {
					continue
				}
				slices.Sort(xs)
				r.Lower[j], r.Upper[j] = quantile(xs, lo), quantile(xs, hi)
				if p, v := r.P[j], stat.Variance(xs, nil); p > 0.001 && p < 0.999 && v > 0 {
					ess = append(ess, p*(1-p)/v)
				}
			}
			if len(ess) > 0 {
				slices.Sort(ess)
				r.ESS = quantile(ess, 0.5)
			}
		}
	}
	return nil
}

// quantile is the linear-interpolation quantile of sorted xs.
func quantile(xs []float64, q float64) float64 {
	pos := q * float64(len(xs)-1)
	i := int(math.Floor(pos))
	if i+1 >= len(xs) {
		return xs[len(xs)-1]
	}
	return xs[i] + (pos-float64(i))*(xs[i+1]-xs[i])
}

// goodness computes the G test of the model on the transitions.
func (e *estimator) goodness(ts []Transition, m *model) GoodnessOfFit {
	n := e.o.States
	if len(ts) == 0 {
		return GoodnessOfFit{PValue: math.NaN()}
	}
	ends := make([]int, len(ts))
	for i, t := range ts {
		ends[i] = t.End
	}
	slices.Sort(ends)
	mid := ends[len(ends)/2]
	type key struct{ a, from, bin, half int }
	obs := make(map[key][]float64)
	exp := make(map[key][]float64)
	probs := make(map[int]*mat.Dense)
	for _, t := range ts {
		k := key{t.Action, t.From, int(math.Round(4 * float64(t.Days) / DaysPerYear / e.o.PeriodYears)), 0}
		if t.End > mid {
			k.half = 1
		}
		if obs[k] == nil {
			obs[k], exp[k] = make([]float64, n), make([]float64, n)
		}
		obs[k][t.To]++
		row := e.predict(m, t, probs)
		for j := range n {
			exp[k][j] += row[j]
		}
	}
	g, df := 0.0, 0
	keys := make([]key, 0, len(obs))
	for k := range obs {
		keys = append(keys, k)
	}
	slices.SortFunc(keys, func(x, y key) int {
		for _, d := range [][2]int{{x.a, y.a}, {x.from, y.from}, {x.bin, y.bin}, {x.half, y.half}} {
			if d[0] != d[1] {
				return d[0] - d[1]
			}
		}
		return 0
	})
	for _, k := range keys {
		o := obs[k]
		cats := 0
		for j := range n {
			if exp[k][j] > 1e-12 {
				cats++
				if o[j] > 0 {
					g += 2 * o[j] * math.Log(o[j]/exp[k][j])
				}
			}
		}
		df += max(cats-1, 0)
	}
	df -= e.params(m)
	out := GoodnessOfFit{Statistic: max(g, 0), DF: df, PValue: math.NaN()}
	if df > 0 {
		out.PValue = distuv.ChiSquared{K: float64(df)}.Survival(out.Statistic)
	}
	return out
}

// predict returns the model's distribution of the condition at the end of
// the interval of t.
func (e *estimator) predict(m *model, t Transition, cache map[int]*mat.Dense) []float64 {
	n := e.o.States
	if e.o.Method == Counting {
		return m.p[t.Action][t.From]
	}
	em := cache[t.Days]
	if em == nil {
		em = expm(scale(m.q, float64(t.Days)/DaysPerYear))
		cache[t.Days] = em
	}
	if t.Action == e.o.Passive {
		return rowOf(em, t.From)
	}
	row := make([]float64, n)
	for k, w := range m.effect[t.Action][t.From] {
		for j := range n {
			row[j] += w * em.At(k, j)
		}
	}
	return row
}

// params counts the free parameters of the model.
func (e *estimator) params(m *model) int {
	n := e.o.States
	k := 0
	if e.o.Method == Generator {
		k = len(e.pairs)
	}
	for a := range m.p {
		if e.o.Method == Generator && a == e.o.Passive {
			continue
		}
		for s := range n {
			row := m.p[a][s]
			if e.o.Method == Generator && m.effect[a] != nil {
				row = m.effect[a][s]
			}
			if row == nil {
				continue
			}
			nz := 0
			for _, x := range row {
				if x > 1e-12 {
					nz++
				}
			}
			k += max(nz-1, 0)
		}
	}
	return k
}
