package condition

import (
	"context"
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"
)

// goodness computes the G test of the model on the transitions; it
// returns ctx.Err() once ctx is done (checked every checkEvery
// transitions).
func (e *estimator) goodness(ctx context.Context, ts []Transition, m *model) (GoodnessOfFit, error) {
	n := e.o.States
	if len(ts) == 0 {
		return GoodnessOfFit{Statistic: math.NaN(), PValue: math.NaN(), Skipped: "not tested: no transitions"}, nil
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
	for i, t := range ts {
		if i%checkEvery == 0 {
			if err := ctx.Err(); err != nil {
				return GoodnessOfFit{}, err
			}
		}
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
	params := e.params(m)
	if df <= params {
		return GoodnessOfFit{Statistic: math.NaN(), PValue: math.NaN(),
			Skipped: fmt.Sprintf("not tested: the grouped counts have %d degrees of freedom and the model %d free parameters, which leaves none for a test; more records are needed", df, params)}, nil
	}
	df -= params
	out := GoodnessOfFit{Statistic: max(g, 0), DF: df}
	out.PValue = distuv.ChiSquared{K: float64(df)}.Survival(out.Statistic)
	return out, nil
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
