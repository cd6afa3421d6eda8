package condition

import (
	"context"
	"math"

	"gonum.org/v1/gonum/mat"
)

// fitEffect fits the immediate effect A of action a (a row per
// from-state, a distribution of the condition just after the work) by EM
// on the mixture P(j | i, t) = Σ_k A(i,k) exp(Q t)(k, j) (Dempster, Laird
// & Rubin 1977).
// It returns ctx.Err() once ctx is done, checked at every EM iteration.
func (e *estimator) fitEffect(ctx context.Context, ts []Transition, a int, q [][]float64) ([][]float64, error) {
	n := e.o.States
	type obs struct{ from, to, days int }
	var data []obs
	for _, t := range ts {
		if t.Action == a {
			data = append(data, obs{t.From, t.To, t.Days})
		}
	}
	if len(data) == 0 {
		return make([][]float64, n), nil
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
		if err := ctx.Err(); err != nil {
			return nil, err
		}
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
	return eff, nil
}
