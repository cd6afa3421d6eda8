package robust

import (
	"context"
	"fmt"
	"math"
	"slices"
	"testing"

	"fixpoint/optimize"
)

// noPassiveInUnsafe fails the test when a policy leaves the pumps' unsafe
// failed state (index 4) as it is (action 0, passive).
func noPassiveInUnsafe(t *testing.T, what string, policy []int) {
	t.Helper()
	if policy[4] == 0 {
		t.Errorf("%s: the unsafe failed state is advised the passive action", what)
	}
}

// Analyze's figures against independent computations: the nominal cost of
// the robust advice by optimize.Evaluate, the price of robustness from it
// and optimize.Solve, the differing states, and every Settle entry against
// a cold solve of the problem with that row's radius replaced (PerRow).
func TestAnalyzeAgainstIndependentSolves(t *testing.T) {
	ctx := context.Background()
	p := pumps(t)
	obs := [][]int{{40, 30, 25, 12, 0}, {0, 25, 9, 0, 0}, {0, 0, 14, 6, 0}, nil}
	counted, err := FromCounts(p, L1, 0.9, obs, nil)
	if err != nil {
		t.Fatal(err)
	}
	random := fixtures(t)[2].p
	cases := []struct {
		p    *optimize.Problem
		sets *Sets
	}{{p, mustUniform(t, p, L1, 0.1)}, {p, mustUniform(t, p, KL, 0.02)}, {p, counted}, {random, mustUniform(t, random, L1, 0.1)}}
	screened := 0
	for i, tc := range cases {
		p, sets := tc.p, tc.sets
		name := fmt.Sprintf("%d/%v/%v", i, sets.Kind, sets.Source)
		settings := &optimize.Settings{Tol: 1e-6}
		a, err := Analyze(ctx, p, sets, settings)
		if err != nil {
			t.Fatal(err)
		}
		if i < 3 {
			noPassiveInUnsafe(t, name, a.Robust.Policy)
		}
		nominal, err := optimize.Solve(ctx, p, settings)
		if err != nil {
			t.Fatal(err)
		}
		cost, err := optimize.Evaluate(p, a.Robust.Policy)
		if err != nil {
			t.Fatal(err)
		}
		ev, err := Evaluate(ctx, p, sets, nominal.Policy, 1e-7)
		if err != nil {
			t.Fatal(err)
		}
		checkCloseRel(t, name+": NominalCost", a.NominalCost, cost, 1e-12)
		checkCloseRel(t, name+": NominalWorstCase", a.NominalWorstCase, ev.WorstCase, 1e-9)
		var differs []int
		price := math.Inf(-1)
		for s := range cost {
			if a.Robust.Policy[s] != nominal.Policy[s] {
				differs = append(differs, s)
			}
			want := cost[s] - nominal.Value[s]
			price = max(price, want)
			if math.Abs(a.Price[s]-want) > 1e-9*cost[s] {
				t.Errorf("%s: price[%d] = %g, want %g", name, s, a.Price[s], want)
			}
			if a.Robust.WorstCase[s] > a.NominalWorstCase[s]+a.Robust.Gap {
				t.Errorf("%s: state %d: robust worst case %g above the nominal advice's %g", name, s, a.Robust.WorstCase[s], a.NominalWorstCase[s])
			}
		}
		if !slices.Equal(a.Differs, differs) || math.Abs(a.PriceOfRobustness-price) > 1e-9*max(1, price) || a.Price[a.PriceState] != a.PriceOfRobustness {
			t.Errorf("%s: differs %v, price %g in %d; want %v, %g", name, a.Differs, a.PriceOfRobustness, a.PriceState, differs, price)
		}
		checkSettle(t, name, p, sets, a, i < 3)
		for _, g := range a.Settle {
			if g.Screened {
				screened++
			}
		}
	}
	if screened == 0 {
		t.Error("no Settle row was screened: the screening path is untested")
	}
}

func checkSettle(t *testing.T, name string, p *optimize.Problem, sets *Sets, a *Analysis, isPumps bool) {
	t.Helper()
	ctx := context.Background()
	if len(a.Settle) == 0 {
		t.Fatalf("%s: no Settle entries", name)
	}
	for i, g := range a.Settle {
		if i > 0 && g.MaxChange > a.Settle[i-1].MaxChange {
			t.Errorf("%s: Settle not ranked: entry %d change %g > entry %d change %g", name, i, g.MaxChange, i-1, a.Settle[i-1].MaxChange)
		}
		radius := make([][]float64, len(p.Actions))
		for act := range radius {
			radius[act] = make([]float64, len(p.States))
		}
		var row Row
		for s, rows := range sets.Rows {
			for _, r := range rows {
				radius[r.Action][s] = r.Radius
				if s == g.State && r.Action == g.Action {
					row = r
				}
			}
		}
		want := row.Radius / 2
		switch {
		case row.NoData:
			want = 0
		case sets.Kind == KL:
			want = row.Radius / 4
		}
		if sets.Source == Derived && !row.NoData {
			want = L1Radius(len(row.Support), 4*row.Observations, sets.RowMiss)
		}
		if g.Exact != row.NoData || math.Abs(g.NewRadius-want) > 1e-15 {
			t.Errorf("%s: row (%d, %d): new radius %g (exact %v), want %g (exact %v)", name, g.State, g.Action, g.NewRadius, g.Exact, want, row.NoData)
		}
		if math.IsInf(g.NewRadius, 0) || (sets.Kind == L1 && g.NewRadius > 2) {
			continue
		}
		radius[g.Action][g.State] = g.NewRadius
		shrunk, err := PerRow(p, sets.Kind, radius, nil)
		if err != nil {
			t.Fatal(err)
		}
		for s, rows := range shrunk.Rows {
			for k := range rows {
				if math.IsInf(sets.Rows[s][k].Radius, 1) {
					shrunk.Rows[s][k].Radius = math.Inf(1)
				}
			}
		}
		cold, err := Solve(ctx, p, shrunk, &optimize.Settings{Tol: 1e-6})
		if err != nil {
			t.Fatal(err)
		}
		if isPumps {
			noPassiveInUnsafe(t, name, cold.Policy)
		}
		for s := range cold.WorstCase {
			change := a.Robust.WorstCase[s] - cold.WorstCase[s]
			if math.Abs(g.Change[s]-change) > g.Accuracy+cold.Gap+1e-9*cold.WorstCase[s] {
				t.Errorf("%s: row (%d, %d): change[%d] = %.9g, a cold solve gives %.9g (accuracy %g)", name, g.State, g.Action, s, g.Change[s], change, g.Accuracy)
			}
			if g.Change[s] < -g.Accuracy {
				t.Errorf("%s: row (%d, %d): shrinking a set raised the worst case in %d by %g", name, g.State, g.Action, s, -g.Change[s])
			}
		}
		if !slices.Equal(g.Policy, cold.Policy) {
			t.Errorf("%s: row (%d, %d): new advice %v, cold solve %v", name, g.State, g.Action, g.Policy, cold.Policy)
		}
	}
}
