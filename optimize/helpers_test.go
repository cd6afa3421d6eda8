package optimize

import (
	"math"
	"math/rand/v2"
	"strconv"
	"testing"

	"fixpoint/condition"
	"fixpoint/optimize/internal/mdptest"
)

// arm is one action of a hand-written test problem.
type arm struct {
	action int
	cost   float64
	p      []float64 // dense next-state distribution
}

// handProblem builds a Problem from dense rows; arms[s] lists the choices
// of state s in increasing action order.
func handProblem(states, actions []string, gamma float64, arms [][]arm) *Problem {
	p := &Problem{States: states, Actions: actions, Discount: gamma, Choices: make([][]Choice, len(states))}
	for s, as := range arms {
		for _, a := range as {
			var next []condition.Entry
			for j, pr := range a.p {
				if pr != 0 {
					next = append(next, condition.Entry{To: j, P: pr})
				}
			}
			p.Choices[s] = append(p.Choices[s], Choice{Action: a.action, Cost: a.cost, Next: next})
		}
	}
	return p
}

// randomProblem returns a problem of n states and m actions in which each
// action is admissible in a state with probability 0.7 (the first
// admissible action always), each row has up to k non-zero entries, and
// costs are uniform on [-scale, scale]. The source is seeded by the caller.
func randomProblem(rng *rand.Rand, n, m, k int, gamma, scale float64) *Problem {
	p := &Problem{Discount: gamma, Choices: make([][]Choice, n)}
	for s := range n {
		p.States = append(p.States, "s"+strconv.Itoa(s))
	}
	for a := range m {
		p.Actions = append(p.Actions, "a"+strconv.Itoa(a))
	}
	for s := range n {
		for a := range m {
			if len(p.Choices[s]) > 0 && rng.Float64() > 0.7 {
				continue
			}
			p.Choices[s] = append(p.Choices[s], Choice{Action: a, Cost: scale * (2*rng.Float64() - 1), Next: randomRow(rng, n, k)})
		}
	}
	return p
}

func randomRow(rng *rand.Rand, n, k int) []condition.Entry { return mdptest.RandomRow(rng, n, k) }

// bellman applies T to v and returns Tv.
func bellman(p *Problem, v []float64) []float64 {
	tv := make([]float64, len(v))
	greedy(p, v, make([]int, len(v)), tv)
	return tv
}

func maxAbsDiff(a, b []float64) float64 {
	d := 0.0
	for i := range a {
		d = max(d, math.Abs(a[i]-b[i]))
	}
	return d
}

func checkClose(t *testing.T, what string, got, want []float64, tol float64) {
	t.Helper()
	for i := range want {
		if math.Abs(got[i]-want[i]) > tol {
			t.Errorf("%s[%d] = %.12g, want %.12g (tol %g)", what, i, got[i], want[i], tol)
		}
	}
}
