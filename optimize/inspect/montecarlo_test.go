package inspect

import (
	"context"
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"gonum.org/v1/gonum/stat"

	"fixpoint/condition"
	"fixpoint/optimize"
)

// unit simulates one unit of a class under the advice period by period
// with condition.Step, from the model's rows and the plan directly (not
// from the kernels Build computes).
type unit struct {
	cl               *class
	r                *Result
	hidden, announce []bool
}

func newUnit(cl *class, r *Result) *unit {
	n := len(cl.m.States)
	u := &unit{cl: cl, r: r, hidden: make([]bool, n), announce: make([]bool, n)}
	for _, s := range cl.plan.Hidden {
		u.hidden[s] = true
	}
	for s, st := range cl.m.States {
		u.announce[s] = st.Unsafe && !u.hidden[s]
	}
	return u
}

// tally is what one simulated path records from period burn on.
type tally struct {
	cost                     float64 // discounted from t = 0
	periods, hiddenPeriods   float64
	inspections, unsafeFound float64 // scheduled inspections and those finding the unit unsafe
}

// run follows the unit from an epoch in s0 for periods periods.
func (u *unit) run(rng *rand.Rand, s0, periods, burn int) tally {
	m, c, pl, g := u.cl.m, u.cl.c, &u.cl.plan, u.cl.gamma
	pass := m.Actions[m.Passive()].Rows
	risk := func(x int) float64 {
		if pl.RiskCost == nil {
			return 0
		}
		return pl.RiskCost[x]
	}
	var out tally
	x, t, disc, scheduled := s0, 0, 1.0, false
	for t < periods {
		a, k := u.r.Action[x], u.r.Interval[x]
		if t >= burn {
			out.periods++
			if scheduled {
				out.inspections++
				if m.States[x].Unsafe {
					out.unsafeFound++
				}
			}
		}
		out.cost += disc * (pl.Cost + pl.Downtime + c.Action[a][x] + c.Running[x])
		x = condition.Step(m.Actions[a].Rows[x], rng)
		t++
		disc *= g
		scheduled = true
		for i := 1; i < k && t < periods; i++ {
			if u.announce[x] {
				scheduled = false
				break
			}
			out.cost += disc * (c.Running[x] + risk(x))
			if t >= burn {
				out.periods++
				if u.hidden[x] {
					out.hiddenPeriods++
				}
			}
			if !u.hidden[x] {
				x = condition.Step(pass[x], rng)
			}
			t++
			disc *= g
		}
	}
	return out
}

// Simulated units under the advice reproduce the expected discounted cost
// from an epoch, the long-run share of time in a hidden failure and the
// probability that a scheduled inspection finds the unit unsafe, within 3
// standard errors (seeded PCG streams, one per replicate).
func TestMonteCarlo(t *testing.T) {
	cls := []*class{reliefValves(), testClasses()[5]} // random-12 has hidden exposure too
	for ci, cl := range cls {
		p := cl.build(t)
		r, err := Solve(context.Background(), p, &optimize.Settings{Tol: 1e-6})
		if err != nil {
			t.Fatal(err)
		}
		lr, err := p.LongRun(r.Policy)
		if err != nil {
			t.Fatal(err)
		}
		u := newUnit(cl, r)
		// The tail beyond the horizon is at most γ^T·max|c|/(1-γ) (max|c|
		// the largest one-period charge), added to the tolerance.
		horizon := int(math.Ceil(math.Log(1e-6) / math.Log(cl.gamma)))
		maxCharge := cl.plan.Cost + cl.plan.Downtime + slices.Max(cl.c.Running)
		for _, row := range cl.c.Action {
			maxCharge = max(maxCharge, cl.plan.Cost+cl.plan.Downtime+slices.Max(row)+slices.Max(cl.c.Running))
		}
		if cl.plan.RiskCost != nil {
			maxCharge += slices.Max(cl.plan.RiskCost)
		}
		tail := math.Pow(cl.gamma, float64(horizon)) * maxCharge / (1 - cl.gamma)
		const runs = 2500
		for _, s0 := range []int{0, len(p.States) - 1} {
			costs := make([]float64, runs)
			for i := range costs {
				rng := rand.New(rand.NewPCG(uint64(1000*ci+s0), uint64(i)))
				costs[i] = u.run(rng, s0, horizon, horizon).cost
			}
			mean, v := stat.MeanVariance(costs, nil)
			se := math.Sqrt(v / runs)
			if math.Abs(mean-r.Value[s0]) > 3*se+tail {
				t.Errorf("%s: simulated cost from state %d = %.2f ± %.2f (SE), want %.2f within 3 SE + tail %.2g", cl.name, s0, mean, se, r.Value[s0], tail)
			}
		}
		const reps, periods, burn = 60, 20000, 500
		hidden := make([]float64, reps)
		unsafe := make([]float64, reps)
		perYear := make([]float64, reps)
		for i := range reps {
			rng := rand.New(rand.NewPCG(uint64(1000*ci+99), uint64(i)))
			tl := u.run(rng, 0, periods, burn)
			hidden[i] = tl.hiddenPeriods / tl.periods
			unsafe[i] = tl.unsafeFound / tl.inspections
			perYear[i] = tl.inspections / (tl.periods * cl.m.PeriodYears)
		}
		for _, tc := range []struct {
			what   string
			sample []float64
			want   float64
		}{
			{"HiddenShare", hidden, lr.HiddenShare},
			{"UnsafeAtInspection", unsafe, lr.UnsafeAtInspection},
			{"InspectionsPerYear", perYear, lr.InspectionsPerYear},
		} {
			mean, v := stat.MeanVariance(tc.sample, nil)
			se := math.Sqrt(v / reps)
			if math.Abs(mean-tc.want) > 3*se+1e-12*math.Abs(tc.want) {
				t.Errorf("%s: simulated %s = %.6g ± %.2g (SE), want %.6g within 3 SE", cl.name, tc.what, mean, se, tc.want)
			}
		}
		if !(lr.HiddenShare > 0.001) {
			t.Errorf("%s: hidden share %g: the check of hidden-failure time cannot fail", cl.name, lr.HiddenShare)
		}
	}
}
