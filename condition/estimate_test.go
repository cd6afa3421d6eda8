package condition

import (
	"context"
	"math"
	"math/rand/v2"
	"strconv"
	"testing"
)

// trueQ is a deterioration generator per year on 4 states (invented).
var trueQ = [][]float64{
	{-0.5, 0.4, 0.1, 0},
	{0, -0.6, 0.5, 0.1},
	{0, 0, -0.8, 0.8},
	{0, 0, 0, 0},
}

// simulatePanel draws units inspected at intervals of the given lengths
// (days, chosen by gap) from the chain exp(Q t), starting in state 0.
func simulatePanel(rng *rand.Rand, q [][]float64, units, inspections int, gap func() int) *Panel {
	p := &Panel{}
	cache := map[int][][]Entry{}
	rows := func(days int) [][]Entry {
		if r, ok := cache[days]; ok {
			return r
		}
		e := expm(scale(q, float64(days)/DaysPerYear))
		n := len(q)
		r := make([][]Entry, n)
		for i := range n {
			for j := range n {
				if v := e.At(i, j); v > 0 {
					r[i] = append(r[i], Entry{To: j, P: v})
				}
			}
		}
		cache[days] = r
		return r
	}
	for u := range units {
		p.Units = append(p.Units, "u"+strconv.Itoa(u))
		s, day := rng.IntN(2), 0
		for range inspections - 1 {
			d := gap()
			day += d
			next := Step(rows(d)[s], rng)
			p.Transitions = append(p.Transitions, Transition{Unit: u, From: s, To: next, Days: d, End: day, Line: len(p.Transitions) + 2})
			s = next
			if s == len(q)-1 {
				s = 0 // a failed unit is replaced by a new one
			}
		}
	}
	return p
}

func genOpts(n int, bootstrap int) FitOptions {
	return FitOptions{States: n, PeriodYears: 1, Actions: []string{"leave"}, Passive: 0, Method: Generator,
		Structure: DeteriorationOnly, Bootstrap: bootstrap, Seed: 3, Workers: 2}
}

// The analytic gradient of the panel log-likelihood agrees with central
// finite differences.
func TestGeneratorGradient(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 1))
	p := simulatePanel(rng, trueQ, 200, 6, func() int { return 200 + rng.IntN(400) })
	for _, st := range []Structure{AnyChange, DeteriorationOnly, OneStep} {
		o := genOpts(4, 0)
		o.Structure = st
		e := newEstimator(o, p)
		d := e.group(p.Transitions)
		theta := make([]float64, len(e.pairs))
		for k := range theta {
			theta[k] = -1 + 0.1*float64(k%5)
		}
		grad := make([]float64, len(theta))
		e.negLogLik(theta, grad, d, 1000)
		for k := range theta {
			h := 1e-6
			tp, tm := append([]float64(nil), theta...), append([]float64(nil), theta...)
			tp[k] += h
			tm[k] -= h
			num := (e.negLogLik(tp, nil, d, 1000) - e.negLogLik(tm, nil, d, 1000)) / (2 * h)
			if math.Abs(num-grad[k]) > 1e-4*(1+math.Abs(num)) {
				t.Errorf("structure %d, θ[%d]: gradient %g, finite difference %g", st, k, grad[k], num)
			}
		}
	}
}

// Two states, equal intervals t: with n0 intervals starting in state 0 of
// which n00 end there, the maximum-likelihood rate of leaving is
// λ = -ln(n00/n0)/t (the exponential model with interval-censored data at
// equal spacing; Kalbfleisch & Lawless 1985, §2, from memory; also a
// closed form by hand: P00(t) = exp(-λt)).
func TestGeneratorTwoStateClosedForm(t *testing.T) {
	p := &Panel{Units: []string{"a"}}
	n00, n01 := 70, 30
	for i := range n00 + n01 {
		to := 0
		if i >= n00 {
			to = 1
		}
		p.Transitions = append(p.Transitions, Transition{From: 0, To: to, Days: 730, End: i})
	}
	f, err := Estimate(context.Background(), p, FitOptions{States: 2, PeriodYears: 1, Actions: []string{"leave"}, Method: Generator, Structure: OneStep})
	if err != nil {
		t.Fatal(err)
	}
	want := -math.Log(float64(n00)/float64(n00+n01)) / (730 / DaysPerYear)
	if got := f.Generator[0][1]; math.Abs(got-want) > 1e-6*want {
		t.Errorf("rate %.9g, want %.9g", got, want)
	}
}

// With one-period intervals, exp(Q) of the generator fit is close to the
// counting estimate when that estimate is embeddable (the generator MLE is
// then its matrix logarithm).
func TestGeneratorMatchesCountingOnRegularData(t *testing.T) {
	rng := rand.New(rand.NewPCG(2, 2))
	year := 365
	p := simulatePanel(rng, trueQ, 3000, 5, func() int { return year })
	count, err := Estimate(context.Background(), p, FitOptions{States: 4, PeriodYears: float64(year) / DaysPerYear, Actions: []string{"leave"}, Method: Counting})
	if err != nil {
		t.Fatal(err)
	}
	o := genOpts(4, 0)
	o.PeriodYears = float64(year) / DaysPerYear
	gen, err := Estimate(context.Background(), p, o)
	if err != nil {
		t.Fatal(err)
	}
	for s := range 3 {
		for j := range 4 {
			if d := math.Abs(count.Rows[0][s].P[j] - gen.Rows[0][s].P[j]); d > 0.01 {
				t.Errorf("P[%d][%d]: counting %.4f, generator %.4f", s, j, count.Rows[0][s].P[j], gen.Rows[0][s].P[j])
			}
		}
	}
}

// Recovery: as records grow the estimate converges to the truth, for
// regular (counting) and irregular (generator) intervals.
func TestEstimateRecovers(t *testing.T) {
	for _, tc := range []struct {
		name   string
		method FitMethod
		gap    func(*rand.Rand) int
	}{
		{"regular", Counting, func(*rand.Rand) int { return 365 }},
		{"irregular", Generator, func(r *rand.Rand) int { return 150 + r.IntN(600) }},
	} {
		t.Run(tc.name, func(t *testing.T) {
			var errs []float64
			for _, units := range []int{100, 3000} {
				rng := rand.New(rand.NewPCG(5, uint64(units)))
				p := simulatePanel(rng, trueQ, units, 6, func() int { return tc.gap(rng) })
				o := genOpts(4, 0)
				o.Method = tc.method
				o.PeriodYears = 365 / DaysPerYear
				f, err := Estimate(context.Background(), p, o)
				if err != nil {
					t.Fatal(err)
				}
				truth := expm(scale(trueQ, o.PeriodYears))
				worst := 0.0
				for s := range 3 {
					for j := range 4 {
						worst = max(worst, math.Abs(f.Rows[0][s].P[j]-truth.At(s, j)))
					}
				}
				errs = append(errs, worst)
			}
			if !(errs[1] < errs[0]/2 && errs[1] < 0.03) {
				t.Errorf("max error %g with 100 units, %g with 3000: not converging", errs[0], errs[1])
			}
		})
	}
}

// The 90% bootstrap intervals cover the true entries in roughly 90% of
// replicates, for regular intervals (counting) and irregular ones
// (generator); tested between 75% and 99% to stay stable.
func TestBootstrapCoverage(t *testing.T) {
	if testing.Short() {
		t.Skip("coverage study")
	}
	period := 365 / DaysPerYear
	truth := expm(scale(trueQ, period))
	for _, tc := range []struct {
		name   string
		method FitMethod
		gap    func(*rand.Rand) int
	}{
		{"counting", Counting, func(*rand.Rand) int { return 365 }},
		{"generator", Generator, func(r *rand.Rand) int { return 200 + r.IntN(400) }},
	} {
		covered, total := 0, 0
		reps := 16
		if raceEnabled && tc.method == Generator {
			reps = 2 // the race detector checks the code paths; the coverage is checked without it
		}
		for rep := range reps {
			rng := rand.New(rand.NewPCG(9, uint64(rep)))
			p := simulatePanel(rng, trueQ, 300, 5, func() int { return tc.gap(rng) })
			o := genOpts(4, 100)
			o.Method, o.PeriodYears, o.Seed = tc.method, period, uint64(rep)
			f, err := Estimate(context.Background(), p, o)
			if err != nil {
				t.Fatal(err)
			}
			for s := range 3 {
				for j := s; j < 4; j++ {
					if truth.At(s, j) < 0.02 {
						continue
					}
					total++
					if r := f.Rows[0][s]; truth.At(s, j) >= r.Lower[j] && truth.At(s, j) <= r.Upper[j] {
						covered++
					}
				}
			}
		}
		share := float64(covered) / float64(total)
		t.Logf("%s: 90%% intervals covered %d of %d true entries (%.0f%%)", tc.name, covered, total, 100*share)
		if reps < 16 {
			continue
		}
		if share < 0.75 || share > 0.99 {
			t.Errorf("%s: coverage %.0f%%, want about 90%%", tc.name, 100*share)
		}
	}
}
