package fleet

import (
	"context"
	"math"
	"math/rand/v2"
	"slices"
	"sync"

	"gonum.org/v1/gonum/stat"

	"fixpoint/condition"
	"fixpoint/optimize"
)

// Quantiles summarises a simulated quantity: its mean, the standard error
// of the mean, and the 10th, 50th and 90th percentiles.
type Quantiles struct {
	Mean, SE      float64
	P10, P50, P90 float64
}

// Simulation is a Monte-Carlo of a fleet under a plan or under the
// unconstrained advice.
type Simulation struct {
	Runs int
	// Spend[t] is the action spend of year t+1, Total[t] spend plus
	// running costs, Units[c][t][s] the units of class c in condition s at
	// the start of year t+1.
	Spend, Total []Quantiles
	Units        [][][]Quantiles
	// Expected holds the expected-count forecast of the same rule, for
	// comparison: ExpectedSpend[t] and ExpectedUnits[c][t][s].
	ExpectedSpend []float64
	ExpectedUnits [][][]float64
}

// Simulate draws runs futures of the fleet. Each year, the units of a
// class in a condition are split over actions by one multinomial draw with
// the rule's shares (so the simulation's mean is the expected-count
// forecast), and each group moves by one multinomial draw of its
// transition row (conditional binomials, not unit by unit). useAdvice follows the classes'
// unconstrained advice instead of the plan. Run r uses its own random
// stream (seed, r), so results do not depend on the number of workers;
// progress, if not nil, is called with the runs done.
func Simulate(ctx context.Context, f *Problem, plan *Plan, useAdvice bool, runs int, seed uint64, workers int, progress func(int)) (*Simulation, error) {
	T := len(f.Budget)
	classes := make([]*fleetClass, len(f.Classes))
	for ci, fc := range f.Classes {
		p, err := optimize.Build(fc.Model, fc.Costs, f.Discount.Factor())
		if err != nil {
			return nil, err
		}
		classes[ci] = &fleetClass{Class: fc, p: p, advice: plan.Advice[ci], running: fc.Costs.Running}
	}
	shares := func(ci, t, s int) []float64 {
		if !useAdvice {
			return plan.Shares[ci][t][s]
		}
		sh := make([]float64, len(f.Classes[ci].Model.Actions))
		sh[plan.Advice[ci].Policy[s]] = 1
		return sh
	}
	// Per run: spend, total and the units of every class and condition.
	spend := make([][]float64, runs)
	total := make([][]float64, runs)
	units := make([][][][]int, runs)
	workers = max(1, workers)
	next := make(chan int)
	var wg sync.WaitGroup
	var mu sync.Mutex
	done := 0
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for r := range next {
				rng := rand.New(rand.NewPCG(seed, uint64(r)+1))
				spend[r], total[r], units[r] = simulateRun(rng, classes, shares, T)
				if progress != nil {
					mu.Lock()
					done++
					progress(done)
					mu.Unlock()
				}
			}
		}()
	}
	var err error
	for r := range runs {
		if err = ctx.Err(); err != nil {
			break
		}
		next <- r
	}
	close(next)
	wg.Wait()
	if err != nil {
		return nil, err
	}
	sim := &Simulation{Runs: runs, Spend: make([]Quantiles, T), Total: make([]Quantiles, T), Units: make([][][]Quantiles, len(classes))}
	col := make([]float64, runs)
	for t := range T {
		for r := range runs {
			col[r] = spend[r][t]
		}
		sim.Spend[t] = summarise(col)
		for r := range runs {
			col[r] = total[r][t]
		}
		sim.Total[t] = summarise(col)
	}
	for ci, c := range classes {
		sim.Units[ci] = make([][]Quantiles, T)
		for t := range T {
			sim.Units[ci][t] = make([]Quantiles, len(c.p.States))
			for s := range c.p.States {
				for r := range runs {
					col[r] = float64(units[r][ci][t][s])
				}
				sim.Units[ci][t][s] = summarise(col)
			}
		}
	}
	sim.expected(classes, shares, T)
	return sim, nil
}

// simulateRun draws one future.
func simulateRun(rng *rand.Rand, classes []*fleetClass, shares func(ci, t, s int) []float64, T int) ([]float64, []float64, [][][]int) {
	spend, total := make([]float64, T), make([]float64, T)
	units := make([][][]int, len(classes))
	for ci, c := range classes {
		n := len(c.p.States)
		units[ci] = make([][]int, T)
		cur := make([]int, n)
		for s, x := range c.Counts {
			cur[s] = int(math.Round(x))
		}
		for t := range T {
			units[ci][t] = cur
			next := make([]int, n)
			split := make([]int, len(c.Model.Actions))
			for s, m := range cur {
				if m == 0 {
					continue
				}
				clear(split)
				condition.Multinomial(rng, m, shareRow(shares(ci, t, s)), split)
				for a, k := range split {
					if k == 0 {
						continue
					}
					cost := c.Costs.Action[a][s]
					spend[t] += float64(k) * cost
					total[t] += float64(k) * (cost + c.running[s])
					condition.Multinomial(rng, k, c.p.Choices[s][c.p.Find(s, a)].Next, next)
				}
			}
			cur = next
		}
	}
	return spend, total, units
}

// shareRow writes action shares as a row for Multinomial.
func shareRow(sh []float64) []condition.Entry {
	row := make([]condition.Entry, 0, len(sh))
	for a, x := range sh {
		if x > 0 {
			row = append(row, condition.Entry{To: a, P: x})
		}
	}
	return row
}

// expected fills the expected-count forecast of the same rule.
func (sim *Simulation) expected(classes []*fleetClass, shares func(ci, t, s int) []float64, T int) {
	sim.ExpectedSpend = make([]float64, T)
	sim.ExpectedUnits = make([][][]float64, len(classes))
	for ci, c := range classes {
		cur := slices.Clone(c.Counts)
		sim.ExpectedUnits[ci] = make([][]float64, T)
		for t := range T {
			sim.ExpectedUnits[ci][t] = cur
			next := make([]float64, len(cur))
			for s, x := range cur {
				for a, sh := range shares(ci, t, s) {
					if sh == 0 || x == 0 {
						continue
					}
					sim.ExpectedSpend[t] += x * sh * c.Costs.Action[a][s]
					for _, e := range c.p.Choices[s][c.p.Find(s, a)].Next {
						next[e.To] += x * sh * e.P
					}
				}
			}
			cur = next
		}
	}
}

func summarise(xs []float64) Quantiles {
	s := slices.Clone(xs)
	slices.Sort(s)
	q := Quantiles{P10: pct(s, 0.1), P50: pct(s, 0.5), P90: pct(s, 0.9)}
	mean, v := stat.MeanVariance(s, nil)
	q.Mean = mean
	if len(s) > 1 {
		q.SE = math.Sqrt(v / float64(len(s)))
	}
	return q
}

// pct is the linear-interpolation percentile of sorted xs.
func pct(xs []float64, p float64) float64 {
	pos := p * float64(len(xs)-1)
	i := int(math.Floor(pos))
	if i+1 >= len(xs) {
		return xs[len(xs)-1]
	}
	return xs[i] + (pos-float64(i))*(xs[i+1]-xs[i])
}
