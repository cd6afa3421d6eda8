package optimize

import (
	"context"
	"math"
	"math/rand/v2"
	"strconv"
	"testing"

	"fixpoint/condition"
	"fixpoint/costs"
)

// randomComponent is an n-state component: a passive action that drifts
// down the scale (not admissible in the unsafe last state), a repair one
// or two states up, and a replacement; costs invented.
func randomComponent(rng *rand.Rand, name string, n, m int) Component {
	st := make([]condition.State, n)
	for i := range st {
		st[i] = condition.State{Name: "c" + strconv.Itoa(i), Unsafe: i == n-1}
	}
	model := &condition.Model{PeriodYears: 0.5, States: st}
	sched := &costs.Schedule{Currency: "EUR", Running: make([]float64, n)}
	for i := range n {
		sched.Running[i] = 10 * float64(i*i) * (0.5 + rng.Float64())
	}
	for a := range m {
		act := condition.Action{Name: "a" + strconv.Itoa(a), Passive: a == 0, Rows: make([][]condition.Entry, n)}
		cost := make([]float64, n)
		for x := range n {
			switch {
			case a == 0 && x < n-1:
				stay := 0.5 + 0.4*rng.Float64()
				act.Rows[x] = []condition.Entry{{To: x, P: stay}, {To: x + 1, P: 1 - stay}}
			case a == m-1:
				act.Rows[x] = []condition.Entry{{To: 0, P: 1}}
				cost[x] = 400 + 200*rng.Float64()
			case a > 0 && x > 0:
				up := max(0, x-a)
				act.Rows[x] = []condition.Entry{{To: up, P: 0.8}, {To: x, P: 0.2}}
				cost[x] = 60*float64(a) + 40*rng.Float64()
			}
		}
		model.Actions = append(model.Actions, act)
		sched.Action = append(sched.Action, cost)
	}
	return Component{Name: name, Model: model, Costs: sched}
}

func randomSystem(rng *rand.Rand, k, n, m int, shutdown, down float64) *System {
	sys := &System{Shutdown: shutdown, Down: down, DownOnUnsafe: down > 0, Discount: 0.95}
	for i := range k {
		sys.Components = append(sys.Components, randomComponent(rng, "part"+strconv.Itoa(i), n, m))
	}
	return sys
}

// The structured solver agrees with the flattened model solved by policy
// iteration and by the LP, to 1e-8.
func TestSystemMatchesFlattened(t *testing.T) {
	rng := rand.New(rand.NewPCG(61, 62))
	for trial := range 8 {
		k := 2 + trial%2
		sys := randomSystem(rng, k, 3+rng.IntN(2), 2+rng.IntN(2), 150, 300)
		flat, err := sys.Flatten(1000)
		if err != nil {
			t.Fatal(err)
		}
		r, err := SolveSystem(context.Background(), sys, &SystemSettings{Tol: 1e-8})
		if err != nil {
			t.Fatal(err)
		}
		if r.Status != Certified {
			t.Errorf("trial %d: structured solve not certified, gap %g", trial, r.Gap)
		}
		for _, m := range []Method{PolicyIteration, LinearProgram} {
			ref, err := Solve(context.Background(), flat, &Settings{Method: m, Tol: 1e-8})
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
	sys := randomSystem(rng, 3, 4, 3, 0, 0)
	sep, err := sys.Separate(context.Background())
	if err != nil {
		t.Fatal(err)
	}
	r, err := SolveSystem(context.Background(), sys, &SystemSettings{Tol: 1e-9})
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
	sys := randomSystem(rng, 3, 4, 3, 400, 1000)
	sep, err := sys.Separate(context.Background())
	if err != nil {
		t.Fatal(err)
	}
	r, err := SolveSystem(context.Background(), sys, &SystemSettings{Tol: 1e-6, Start: sys.SeparateStart(sep)})
	if err != nil {
		t.Fatal(err)
	}
	pols := make([][]int, len(sep))
	for i, s := range sep {
		pols[i] = s.Policy
	}
	ev, err := sys.EvaluateProduct(context.Background(), pols, nil, 1e-6)
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
	sys := randomSystem(rng, 3, 4, 3, 200, 500)
	sep, _ := sys.Separate(context.Background())
	cold, err := SolveSystem(context.Background(), sys, &SystemSettings{Tol: 1e-6})
	if err != nil {
		t.Fatal(err)
	}
	warm, err := SolveSystem(context.Background(), sys, &SystemSettings{Tol: 1e-6, Start: sys.SeparateStart(sep), Workers: 1})
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
