package condition

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"sync"

	"gonum.org/v1/gonum/stat"
)

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
				reps[b], errs[b] = e.fit(ctx, ts, base)
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
	// One error for all failed replicates: they fail alike, typically when
	// a resample of few units draws no interval without recorded work.
	failed, first := 0, -1
	for b, err := range errs {
		if err != nil {
			failed++
			if first < 0 {
				first = b
			}
		}
	}
	if failed > 0 {
		return fmt.Errorf("condition: estimate: bootstrap: %d of %d replicates could not be fitted (replicate %d: %s); the bootstrap over these %d units cannot run; fit without one",
			failed, o.Bootstrap, first, strings.TrimPrefix(errs[first].Error(), "condition: estimate: "), f.Units)
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
