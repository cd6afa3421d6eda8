package robust

import (
	"context"
	"math"
	"math/rand/v2"
	"testing"

	"fixpoint/condition"
	"fixpoint/optimize"
)

// coverage is the outcome of one replication of the coverage study.
type coverage struct {
	// bounded: the true cost of the robust advice is at most its worst
	// case in every state; inside: every true row lies in its set;
	// nominal: the estimated nominal value bounds the nominal advice's
	// true cost in every state (for contrast).
	bounded, inside, nominal bool
}

// replicate simulates n one-period transitions from every admissible row
// of truth (a seeded PCG stream per replicate), estimates the rows by
// counting, widens each estimated row to the true row's support (the
// structure of the model is known, its probabilities are not), derives the
// sets at the given confidence and solves robustly.
func replicate(t *testing.T, truth *optimize.Problem, kind Kind, n int, confidence float64, seed, rep uint64) coverage {
	t.Helper()
	rng := rand.New(rand.NewPCG(seed, rep))
	ns := len(truth.States)
	est := &optimize.Problem{States: truth.States, Actions: truth.Actions, Discount: truth.Discount, Choices: make([][]optimize.Choice, ns)}
	obs := make([][]int, len(truth.Actions))
	widen := make([][][]int, len(truth.Actions))
	for a := range obs {
		obs[a] = make([]int, ns)
		widen[a] = make([][]int, ns)
	}
	counts := make([]int, ns)
	for s, cs := range truth.Choices {
		for _, c := range cs {
			clear(counts)
			condition.Multinomial(rng, n, c.Next, counts)
			var row []condition.Entry
			for j, x := range counts {
				if x > 0 {
					row = append(row, condition.Entry{To: j, P: float64(x) / float64(n)})
				}
			}
			for _, e := range c.Next {
				if e.P > 0 && counts[e.To] == 0 {
					widen[c.Action][s] = append(widen[c.Action][s], e.To)
				}
			}
			obs[c.Action][s] = n
			est.Choices[s] = append(est.Choices[s], optimize.Choice{Action: c.Action, Cost: c.Cost, Next: row})
		}
	}
	sets, err := FromCounts(est, kind, confidence, obs, &Options{Widen: widen})
	if err != nil {
		t.Fatal(err)
	}
	r, err := Solve(context.Background(), est, sets, &optimize.Settings{Tol: 1e-6})
	if err != nil {
		t.Fatal(err)
	}
	trueCost, err := optimize.Evaluate(truth, r.Policy)
	if err != nil {
		t.Fatal(err)
	}
	out := coverage{bounded: true, inside: true, nominal: true}
	for s := range trueCost {
		if trueCost[s] > r.WorstCase[s]+1e-9*r.WorstCase[s] {
			out.bounded = false
		}
	}
	for s, cs := range truth.Choices {
		for k, c := range cs {
			row := sets.Rows[s][k]
			if !inSet(kind, row, est.Choices[s][k].Next, c.Next) {
				out.inside = false
			}
		}
	}
	nom, err := optimize.Solve(context.Background(), est, nil)
	if err != nil {
		t.Fatal(err)
	}
	nomTrue, err := optimize.Evaluate(truth, nom.Policy)
	if err != nil {
		t.Fatal(err)
	}
	for s := range nomTrue {
		if nomTrue[s] > nom.Value[s] {
			out.nominal = false
		}
	}
	return out
}

// inSet reports whether the row truth lies in the set of row around
// center.
func inSet(kind Kind, row Row, center, truth []condition.Entry) bool {
	dense := func(r []condition.Entry) map[int]float64 {
		d := make(map[int]float64)
		for _, e := range r {
			d[e.To] += e.P
		}
		return d
	}
	p, q := dense(center), dense(truth)
	allowed := make(map[int]bool)
	for _, j := range row.Support {
		allowed[j] = true
	}
	dist := 0.0
	for j, x := range q {
		if x > 0 && !allowed[j] {
			return false
		}
		if kind == L1 {
			dist += math.Abs(x - p[j])
		}
	}
	for j, x := range p {
		switch {
		case kind == L1 && q[j] == 0:
			dist += x
		case kind == KL && x > 0:
			dist += x * math.Log(x/q[j])
		}
	}
	return dist <= row.Radius
}

// The coverage study: with sets derived at 90% confidence from simulated
// records of the (invented) pumps model, the true cost of the robust
// advice lies below its worst case in at least 90% of replications (the
// union bound's promise). The measured figures are logged; the nominal
// line shows how often the plain estimate bounds the truth, for contrast.
func TestCoverage(t *testing.T) {
	reps := 1000
	if testing.Short() {
		reps = 200
	}
	truth := pumps(t)
	for _, kind := range []Kind{L1, KL} {
		var bounded, inside, nominal int
		for rep := range reps {
			c := replicate(t, truth, kind, 100, 0.9, 2026, uint64(rep))
			if c.bounded {
				bounded++
			}
			if c.inside {
				inside++
			}
			if c.nominal {
				nominal++
			}
		}
		fb, fi, fn := float64(bounded)/float64(reps), float64(inside)/float64(reps), float64(nominal)/float64(reps)
		t.Logf("%v, 100 records per row, 90%% confidence, %d replications: worst case bounds the true cost in %.1f%%, every true row inside its set in %.1f%%; the nominal estimate bounds the nominal advice's true cost in %.1f%%",
			kind, reps, 100*fb, 100*fi, 100*fn)
		if fb < 0.9 || fi < 0.9 {
			t.Errorf("%v: coverage %.3f (bound) and %.3f (sets), want >= 0.9", kind, fb, fi)
		}
	}
}
