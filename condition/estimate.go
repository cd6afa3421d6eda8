package condition

import (
	"context"
	"errors"
	"fmt"
	"math"
	"slices"
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
	// 0.9); Workers is the number of goroutines (default 1). With fewer
	// than MinBootstrapUnits units the fit carries a warning.
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

// MinBootstrapUnits is the number of units below which the bootstrap over
// units is too coarse for its intervals to mean much (common practice, no
// source): it resamples whole units, so it shows the variation between
// units and, through them, within them; with one unit every replicate is
// the same data and every interval has zero width.
const MinBootstrapUnits = 30

// GoodnessOfFit is a likelihood-ratio (G) test of the fitted model
// against the observed transitions grouped by action, from-state,
// interval length (quarters of a period) and half of the observation
// window: G = 2 Σ O ln(O/E), on DF = Σ_groups (cells − 1) − parameters
// degrees of freedom, where a group's cells are the end states the model
// gives a positive probability. When DF would be 0 or less the test
// cannot be made: Skipped says why, DF is 0 and Statistic and PValue are
// NaN.
type GoodnessOfFit struct {
	Statistic float64
	DF        int
	PValue    float64
	Skipped   string
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
	// Counting). Generator[i] is nil when no interval without recorded work
	// starts in state i: the likelihood then bears on its rates only
	// through paths that pass through i, so they are not reported (the
	// fitted rows P use them as fitted).
	Generator [][]float64
	Fit       GoodnessOfFit
	// Units is the number of units whose transitions were used.
	Units    int
	Warnings []Warning
}

// InsufficientDataError is returned by Estimate when the panel cannot
// support the fit: no usable transition, or (generator method) no interval
// without recorded work. Warnings are the data problems Estimate found
// before it stopped (intervals it left out).
type InsufficientDataError struct {
	Msg      string
	Warnings []Warning
}

func (e *InsufficientDataError) Error() string { return "condition: estimate: " + e.Msg }

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
// come from a bootstrap over units. A panel that supports no fit gives an
// *InsufficientDataError.
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
		var log problemLog
		far := &problemKind{many: fmt.Sprintf("%%d intervals are more than %.0f%%%% away from one period (%.0f days) and are left out of the counting estimate",
			100*RegularTolerance, o.PeriodYears*DaysPerYear)}
		for i, t := range p.Transitions {
			if i%checkEvery == 0 {
				if err := ctx.Err(); err != nil {
					return nil, err
				}
			}
			if !regular(t.Days, o.PeriodYears) {
				log.add(far, t.Line, fmt.Sprintf("interval of %d days is more than %.0f%% away from one period (%.0f days); left out of the counting estimate",
					t.Days, 100*RegularTolerance, o.PeriodYears*DaysPerYear), fmt.Sprintf("(%d days)", t.Days))
				continue
			}
			used.Transitions = append(used.Transitions, t)
		}
		f.Warnings = log.warnings()
	}
	if len(used.Transitions) == 0 {
		return nil, &InsufficientDataError{Msg: "no usable transitions", Warnings: f.Warnings}
	}
	est := newEstimator(o, used)
	base, err := est.fit(ctx, used.Transitions, nil)
	var short *InsufficientDataError
	if errors.As(err, &short) {
		short.Warnings = f.Warnings
	}
	if err != nil {
		return nil, err
	}
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
	if base.q != nil {
		f.Generator = make([][]float64, o.States)
		for s, row := range base.q {
			if f.Rows[o.Passive][s] != nil {
				f.Generator[s] = slices.Clone(row)
			}
		}
	}
	units := make(map[int]bool)
	for _, t := range used.Transitions {
		units[t.Unit] = true
		if r := f.Rows[t.Action][t.From]; r != nil {
			r.ExposureYears += float64(t.Days) / DaysPerYear
		}
	}
	f.Units = len(units)
	if o.Bootstrap > 0 && f.Units < MinBootstrapUnits {
		units := fmt.Sprintf("%d units", f.Units)
		if f.Units == 1 {
			units = "1 unit"
		}
		f.Warnings = append(f.Warnings, Warning{0, fmt.Sprintf("the intervals resample units, and the transitions used come from %s, fewer than %d: "+
			"too few for the intervals to show the uncertainty (they understate it; with one unit every replicate is the same data and every interval has zero width)",
			units, MinBootstrapUnits)})
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
	if f.Fit, err = est.goodness(ctx, used.Transitions, base); err != nil {
		return nil, err
	}
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
// when not nil. It returns ctx.Err() once ctx is done (checked before the
// fit, at every iteration of the generator search and of the EM for the
// effects of work).
func (e *estimator) fit(ctx context.Context, ts []Transition, warm *model) (*model, error) {
	if err := ctx.Err(); err != nil {
		return nil, err
	}
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
	theta, err := e.fitGenerator(ctx, passive, counts, warm)
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
		if m.effect[a], err = e.fitEffect(ctx, ts, a, m.q); err != nil {
			return nil, err
		}
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
