package condition

import (
	"context"
	"errors"
	"fmt"
	"math"
	"sort"
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
