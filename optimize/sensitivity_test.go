package optimize

import (
	"context"
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// shifted returns a copy of p with the costs of the pairs moved by t.
func shifted(p *Problem, pairs []Pair, t float64) *Problem {
	q := *p
	q.Choices = make([][]Choice, len(p.Choices))
	for s, cs := range p.Choices {
		q.Choices[s] = slices.Clone(cs)
		for k, c := range cs {
			if slices.Contains(pairs, Pair{s, c.Action}) {
				q.Choices[s][k].Cost += t
			}
		}
	}
	return &q
}

// Inside a cost range the advice is unchanged; just beyond either end it
// changes, as the range says: checked by independent re-solves.
func TestCostRangesAgainstResolves(t *testing.T) {
	rng := rand.New(rand.NewPCG(51, 52))
	for trial := range 30 {
		n := 2 + rng.IntN(8)
		p := randomProblem(rng, n, 2+rng.IntN(3), 1+rng.IntN(n), 0.9, 100)
		r, err := Solve(context.Background(), p, nil)
		if err != nil {
			t.Fatal(err)
		}
		// One group: the costs of a random action wherever admissible.
		a := rng.IntN(len(p.Actions))
		var group []Pair
		for s, cs := range p.Choices {
			for _, c := range cs {
				if c.Action == a {
					group = append(group, Pair{s, a})
				}
			}
		}
		if len(group) == 0 {
			continue
		}
		ranges, err := CostRanges(context.Background(), p, r, [][]Pair{group})
		if err != nil {
			t.Fatal(err)
		}
		cr := ranges[0]
		policyAt := func(t0 float64) []int {
			r2, err := Solve(context.Background(), shifted(p, group, t0), &Settings{Tol: 1e-9})
			if err != nil {
				t.Fatal(err)
			}
			return r2.Policy
		}
		for _, end := range []struct {
			limit        float64
			state, actor int
			dir          float64
		}{{cr.Upper, cr.UpperState, cr.UpperAction, 1}, {cr.Lower, cr.LowerState, cr.LowerAction, -1}} {
			if math.IsInf(end.limit, 0) || math.Abs(end.limit) < 1e-3 {
				continue
			}
			eps := 1e-4 * (1 + math.Abs(end.limit))
			if inside := policyAt(end.limit - end.dir*eps); !slices.Equal(inside, r.Policy) {
				t.Errorf("trial %d: t=%g inside the range changed the advice: %v -> %v", trial, end.limit-end.dir*eps, r.Policy, inside)
			}
			if beyond := policyAt(end.limit + end.dir*eps); beyond[end.state] != end.actor {
				t.Errorf("trial %d: t=%g beyond the limit: state %d advised %d, range said %d", trial, end.limit+end.dir*eps, end.state, beyond[end.state], end.actor)
			}
		}
	}
}

// Two states, closed form: in s0, leave (cost 0, stay w.p. 0.5, else to
// s1) or fix (cost F, stay); s1 must be repaired (cost 10, back to s0).
// With γ = 0.5, leave costs v0 = 0.5(0.5 v0 + 0.5 v1), v1 = 10 + 0.5 v0,
// so v0 = 2.5/(1 - 0.25 - 0.125) = 4 and fix costs F + 0.5·4: fixing wins
// below F = 2, so the cost of fix can fall by F - 2.
func TestCostRangeClosedForm(t *testing.T) {
	p := handProblem([]string{"s0", "s1"}, []string{"leave", "fix", "repair"}, 0.5, [][]arm{
		{{0, 0, []float64{0.5, 0.5}}, {1, 7, []float64{1, 0}}},
		{{2, 10, []float64{1, 0}}},
	})
	r, err := Solve(context.Background(), p, &Settings{Tol: 1e-12})
	if err != nil {
		t.Fatal(err)
	}
	ranges, err := CostRanges(context.Background(), p, r, [][]Pair{{{0, 1}}})
	if err != nil {
		t.Fatal(err)
	}
	if cr := ranges[0]; math.Abs(cr.Lower-(-5)) > 1e-12 || !math.IsInf(cr.Upper, 1) || cr.LowerAction != 1 {
		t.Errorf("range %+v, want [-5, +Inf) with fix taking over", cr)
	}
}
