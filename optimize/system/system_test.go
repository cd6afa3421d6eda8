package system

import (
	"context"
	"fixpoint/optimize"
	"fixpoint/optimize/internal/mdptest"
	"math"
	"math/rand/v2"
	"strconv"
	"testing"
)

// separated is what the components alone give the joint solve: their
// results, the warm start Σ_k v_k(x_k) and their policies.
type separated struct {
	sep   []*optimize.Result
	start []float64
	pols  [][]int
}

func separate(tb testing.TB, sys *Machine) separated {
	tb.Helper()
	sep, err := sys.Separate(context.Background())
	if err != nil {
		tb.Fatal(err)
	}
	start, err := sys.SeparateStart(context.Background(), sep)
	if err != nil {
		tb.Fatal(err)
	}
	pols := make([][]int, len(sep))
	for i, r := range sep {
		pols[i] = r.Policy
	}
	return separated{sep, start, pols}
}

func randomMachine(rng *rand.Rand, k, n, m int, shutdown, down float64) *Machine {
	sys := &Machine{Shutdown: shutdown, Down: down, DownOnUnsafe: down > 0, Discount: mdptest.Factor(0.95, 0.5)}
	for i := range k {
		model, sched := mdptest.RandomClass(rng, n, m)
		sys.Components = append(sys.Components, Component{Name: "part" + strconv.Itoa(i), Model: model, Costs: sched})
	}
	return sys
}

// The structured solver agrees with the flattened model solved by policy
// iteration and by the LP, to 1e-8.
func TestSystemMatchesFlattened(t *testing.T) {
	rng := rand.New(rand.NewPCG(61, 62))
	for trial := range 8 {
		k := 2 + trial%2
		sys := randomMachine(rng, k, 3+rng.IntN(2), 2+rng.IntN(2), 150, 300)
		flat, err := sys.Flatten(context.Background(), 1000)
		if err != nil {
			t.Fatal(err)
		}
		r, err := Solve(context.Background(), sys, &Settings{Tol: 1e-8})
		if err != nil {
			t.Fatal(err)
		}
		if r.Status != optimize.Certified {
			t.Errorf("trial %d: structured solve not certified, gap %g", trial, r.Gap)
		}
		for _, m := range []optimize.Method{optimize.PolicyIteration, optimize.LinearProgram} {
			ref, err := optimize.Solve(context.Background(), flat, &optimize.Settings{Method: m, Tol: 1e-8})
			if err != nil {
				t.Fatal(err)
			}
			for s := range ref.Value {
				if d := math.Abs(ref.Value[s] - r.Value[s]); d > 1e-8 {
					t.Errorf("trial %d, %v: state %s value %g, structured %g", trial, m, flat.States[s], ref.Value[s], r.Value[s])
					break
				}
				if !(r.Lower[s] <= ref.Value[s]+1e-9 && ref.Value[s] <= r.Upper[s]+1e-9) {
					t.Errorf("trial %d: exact value %g outside the structured bracket [%g, %g]", trial, ref.Value[s], r.Lower[s], r.Upper[s])
					break
				}
			}
			for s := range ref.Policy {
				if int32(ref.Policy[s]) != r.Policy[s] && ref.Margin[s] > 1e-6 {
					t.Errorf("trial %d, %v: state %s: %s, structured %s", trial, m, flat.States[s], flat.Actions[ref.Policy[s]], flat.Actions[r.Policy[s]])
					break
				}
			}
		}
	}
}

// With no shared costs the problem decomposes: the joint policy is the
// product of the component policies and the joint value is the sum of the
// component values (independent additive problems).
func TestSystemDecomposesWithoutSharedCosts(t *testing.T) {
	rng := rand.New(rand.NewPCG(63, 64))
	sys := randomMachine(rng, 3, 4, 3, 0, 0)
	sep, err := sys.Separate(context.Background())
	if err != nil {
		t.Fatal(err)
	}
	r, err := Solve(context.Background(), sys, &Settings{Tol: 1e-9})
	if err != nil {
		t.Fatal(err)
	}
	n := len(r.Policy)
	for s := range n {
		xs := sys.Coords(s)
		acts := sys.ActionCoords(int(r.Policy[s]))
		sum := 0.0
		for i, x := range xs {
			sum += sep[i].Value[x]
			if acts[i] != sep[i].Policy[x] {
				t.Errorf("state %s: joint advice %s, component %d alone advises %d", sys.StateName(s), sys.ActionName(int(r.Policy[s])), i, sep[i].Policy[x])
			}
		}
		if math.Abs(sum-r.Value[s]) > 1e-8 {
			t.Errorf("state %s: joint value %g, sum of components %g", sys.StateName(s), r.Value[s], sum)
		}
	}
}

// Joint planning never loses against the separate policies evaluated in
// the joint system, and gains when a shutdown is costly.
func TestSystemSavingOverSeparate(t *testing.T) {
	rng := rand.New(rand.NewPCG(65, 66))
	sys := randomMachine(rng, 3, 4, 3, 400, 1000)
	sp := separate(t, sys)
	r, err := Solve(context.Background(), sys, &Settings{Tol: 1e-6, Start: sp.start})
	if err != nil {
		t.Fatal(err)
	}
	ev, err := sys.EvaluateProduct(context.Background(), sp.pols, nil, 1e-6)
	if err != nil {
		t.Fatal(err)
	}
	gain := 0.0
	for s := range r.Value {
		if ev.Upper[s] < r.Lower[s]-1e-6 {
			t.Errorf("state %s: separate policies %g beat the joint optimum %g", sys.StateName(s), ev.Upper[s], r.Lower[s])
		}
		gain = max(gain, ev.Value[s]-r.Value[s])
	}
	if gain < 1 {
		t.Errorf("joint planning saves at most %g with a shutdown cost of 400", gain)
	}
}

// Value iteration from the separate values gives the same answer as from
// zero, with no more sweeps.
func TestSystemWarmStart(t *testing.T) {
	rng := rand.New(rand.NewPCG(67, 68))
	sys := randomMachine(rng, 3, 4, 3, 200, 500)
	start := separate(t, sys).start
	cold, err := Solve(context.Background(), sys, &Settings{Tol: 1e-6})
	if err != nil {
		t.Fatal(err)
	}
	warm, err := Solve(context.Background(), sys, &Settings{Tol: 1e-6, Start: start, Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	if warm.Sweeps > cold.Sweeps {
		t.Errorf("warm start took %d sweeps, cold %d", warm.Sweeps, cold.Sweeps)
	}
	for s := range cold.Value {
		if math.Abs(cold.Value[s]-warm.Value[s]) > 2e-6 || cold.Policy[s] != warm.Policy[s] {
			t.Fatalf("state %d: cold %g %d, warm %g %d", s, cold.Value[s], cold.Policy[s], warm.Value[s], warm.Policy[s])
		}
	}
}
