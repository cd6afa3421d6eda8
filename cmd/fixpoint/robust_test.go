package main

import (
	"bytes"
	"context"
	"encoding/json"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"

	"fixpoint/cmd/internal/modelfile"
	"fixpoint/optimize"
)

// robustDoc is the part of solve --robust's JSON the tests read.
type robustDoc struct {
	States []struct {
		State            string  `json:"state"`
		Unsafe           bool    `json:"unsafe"`
		Action           string  `json:"action"`
		WorstCase        float64 `json:"worst_case"`
		Lower            float64 `json:"lower"`
		Upper            float64 `json:"upper"`
		Nominal          float64 `json:"nominal"`
		NominalAction    string  `json:"nominal_action"`
		NominalValue     float64 `json:"nominal_value"`
		NominalWorstCase float64 `json:"nominal_worst_case"`
		Price            float64 `json:"price"`
	} `json:"states"`
	Robust struct {
		Set               string   `json:"set"`
		Radius            *float64 `json:"radius"`
		Confidence        *float64 `json:"confidence"`
		PriceOfRobustness float64  `json:"price_of_robustness"`
		Differs           []string `json:"differs"`
	} `json:"robust"`
	Certificate struct {
		Status string  `json:"status"`
		MaxGap float64 `json:"max_gap"`
	} `json:"certificate"`
	Statement string `json:"statement"`
	Settle    []struct {
		State     string  `json:"state"`
		Action    string  `json:"action"`
		MaxChange float64 `json:"max_change"`
		Screened  bool    `json:"screened"`
	} `json:"settle"`
	Caution string `json:"caution"`
}

func solveRobustJSON(t *testing.T, args ...string) robustDoc {
	t.Helper()
	var d robustDoc
	runJSON(t, &d, append(append([]string{"solve"}, args...), "--format", "json")...)
	return d
}

// fittedDemo is the demo config with the rows fitted from the demo's
// inspection records merged in, and the transitions behind each
// (uncertainty.observations), as fit --merge writes it
// (TestFitMergeWritesObservations keeps it current).
const fittedDemo = "testdata/golden/fit-merge-pumps.yaml"

func TestSolveRobustGolden(t *testing.T) {
	for _, tc := range []struct {
		name string
		args []string
	}{
		{"solve-pumps-robust", []string{demo, "--robust-radius", "0.1"}},
		{"solve-pumps-fitted-robust", []string{fittedDemo, "--robust-confidence", "0.9"}},
	} {
		for _, format := range []string{"table", "json", "csv"} {
			t.Run(tc.name+"."+format, func(t *testing.T) {
				code, out, errOut := runCLI(t, append(append([]string{"solve"}, tc.args...), "--format", format)...)
				if code != 0 {
					t.Fatalf("exit %d: %s", code, errOut)
				}
				golden(t, tc.name+"."+format, out)
			})
		}
	}
}

// fit --merge writes the transitions behind every merged row (and only
// those) under uncertainty.observations; the merged file is the fitted
// demo the robust goldens read.
func TestFitMergeWritesObservations(t *testing.T) {
	dir := t.TempDir()
	out := filepath.Join(dir, "fitted.yaml")
	if code, _, stderr := runCLI(t, "fit", demoRecords, "--config", demo, "--merge", "-o", out); code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	data, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	golden(t, "fit-merge-pumps.yaml", string(data))
	f, err := modelfile.Load(context.Background(), out, modelfile.Options{})
	if err != nil {
		t.Fatal(err)
	}
	u := f.Class.Uncertainty
	if u == nil || u.Observations == nil {
		t.Fatalf("merged config has no observations:\n%s", data)
	}
	m := f.Class.Model
	// The counts printed by fit (n) for the rows with at least 30
	// transitions; leave in critical (3) and the others below 30 are kept
	// from the config and get no count.
	for _, tc := range []struct {
		action, state string
		n             int
	}{
		{"leave", "sound", 670}, {"leave", "light_wear", 112}, {"leave", "heavy_wear", 36}, {"leave", "critical", 0},
		{"service", "light_wear", 195}, {"overhaul", "heavy_wear", 82}, {"overhaul", "critical", 0},
	} {
		a, s := m.ActionIndex(tc.action), m.StateIndex(tc.state)
		got := 0
		if u.Observations[a] != nil {
			got = u.Observations[a][s]
		}
		if got != tc.n {
			t.Errorf("observations of %s in %s = %d, want %d", tc.action, tc.state, got, tc.n)
		}
	}
	if bad := f.Class.NotCounted(); len(bad) > 0 {
		t.Errorf("merged rows are not counting estimates of their observations: %v", bad)
	}
}

// fit --format yaml prints the observations block beside the rows, and a
// reason instead of it for a generator fit.
func TestFitYAMLObservations(t *testing.T) {
	code, out, stderr := runCLI(t, "fit", demoRecords, "--config", demo, "--format", "yaml", "--bootstrap", "0")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	const want = "uncertainty:\n  observations:\n    leave: {sound: 670, light_wear: 112, heavy_wear: 36, critical: 3}\n"
	if !strings.Contains(out, want) {
		t.Errorf("fit --format yaml lacks %q:\n%s", want, out)
	}
	code, out, stderr = runCLI(t, "fit", demoRecords, "--config", demo, "--format", "yaml", "--bootstrap", "0", "--estimator", "generator")
	if code != 0 {
		t.Fatalf("generator: exit %d: %s", code, stderr)
	}
	if strings.Contains(out, "uncertainty:") || !strings.Contains(out, "a generator estimate is not a count") {
		t.Errorf("generator fit: want no observations block and the reason:\n%s", out)
	}
}

// Radius 0 is the nominal problem: the same advice in every state and
// the same values as the nominal solve by the simplex method (gonum's LP
// solver, an independent method), within the tolerances.
func TestSolveRobustRadiusZero(t *testing.T) {
	const tol = 1e-6
	var nominal solveDoc
	runJSON(t, &nominal, "solve", demo, "--format", "json", "--method", "lp")
	d := solveRobustJSON(t, demo, "--robust-radius", "0", "--tol", "1e-7")
	if len(d.States) != len(nominal.States) {
		t.Fatalf("%d states, want %d", len(d.States), len(nominal.States))
	}
	for i, s := range d.States {
		want := nominal.States[i]
		if s.Action != want.Action || s.NominalAction != want.Action {
			t.Errorf("radius 0: state %s: robust advice %s, nominal advice %s, want %s", s.State, s.Action, s.NominalAction, want.Action)
		}
		for name, got := range map[string]float64{"worst_case": s.WorstCase, "lower": s.Lower, "upper": s.Upper, "nominal": s.Nominal, "nominal_value": s.NominalValue} {
			if math.Abs(got-want.Value) > tol {
				t.Errorf("radius 0: state %s: %s = %.9f, want %.9f (tol %g)", s.State, name, got, want.Value, tol)
			}
		}
	}
	if math.Abs(d.Robust.PriceOfRobustness) > tol || len(d.Robust.Differs) != 0 {
		t.Errorf("radius 0: price %g, differs %v; want 0 and none", d.Robust.PriceOfRobustness, d.Robust.Differs)
	}
	if d.Robust.Radius == nil || *d.Robust.Radius != 0 || d.Robust.Confidence != nil || d.Robust.Set != "l1" {
		t.Errorf("radius 0: robust = %+v, want set l1, radius 0, confidence null", d.Robust)
	}
}

// The JSON carries exactly the keys the issue fixes, for every state and
// at the top level, and the statement and caution; no unsafe state is
// advised the passive action; the worst case is at least the nominal cost
// of the same advice (the nominal matrices lie in the sets) and the
// nominal advice's worst case at least the robust advice's.
func TestSolveRobustJSONKeys(t *testing.T) {
	for _, args := range [][]string{
		{demo, "--robust-radius", "0.5"},
		{fittedDemo, "--robust-confidence", "90%"},
		{fittedDemo, "--robust-confidence", "0.9", "--robust-set", "kl"},
	} {
		code, out, stderr := runCLI(t, append(append([]string{"solve"}, args...), "--format", "json")...)
		if code != 0 {
			t.Fatalf("%v: exit %d: %s", args, code, stderr)
		}
		var doc map[string]any
		if err := json.Unmarshal([]byte(out), &doc); err != nil {
			t.Fatal(err)
		}
		rob, ok := doc["robust"].(map[string]any)
		if !ok {
			t.Fatalf("%v: no robust object:\n%s", args, out)
		}
		keys := make([]string, 0, len(rob))
		for k := range rob {
			keys = append(keys, k)
		}
		slices.Sort(keys)
		if want := []string{"confidence", "differs", "price_of_robustness", "radius", "set"}; !slices.Equal(keys, want) {
			t.Errorf("%v: robust keys %v, want exactly %v", args, keys, want)
		}
		for _, st := range doc["states"].([]any) {
			m := st.(map[string]any)
			for _, k := range []string{"state", "action", "worst_case", "lower", "upper", "nominal"} {
				if _, ok := m[k]; !ok {
					t.Errorf("%v: state %v lacks %q", args, m["state"], k)
				}
			}
		}
		var d robustDoc
		if err := json.Unmarshal([]byte(out), &d); err != nil {
			t.Fatal(err)
		}
		wantSet := "l1"
		if slices.Contains(args, "kl") {
			wantSet = "kl"
		}
		if d.Robust.Set != wantSet {
			t.Errorf("%v: set %q, want %q", args, d.Robust.Set, wantSet)
		}
		if slices.Contains(args, "--robust-confidence") && (d.Robust.Confidence == nil || math.Abs(*d.Robust.Confidence-0.9) > 1e-12 || d.Robust.Radius != nil) {
			t.Errorf("%v: confidence %v, radius %v; want 0.9 and null", args, d.Robust.Confidence, d.Robust.Radius)
		}
		if d.Statement == "" || !strings.Contains(d.Caution, "Advisory only") {
			t.Errorf("%v: statement %q, caution %q", args, d.Statement, d.Caution)
		}
		const tol = 1e-6
		maxPrice := math.Inf(-1)
		for _, s := range d.States {
			if s.Unsafe && s.Action == "leave" {
				t.Errorf("%v: unsafe state %s advised the passive action", args, s.State)
			}
			if s.WorstCase < s.Nominal-tol || s.Lower > s.WorstCase+tol {
				t.Errorf("%v: state %s: lower %.6f, worst case %.6f, nominal %.6f: want lower <= worst case and nominal <= worst case", args, s.State, s.Lower, s.WorstCase, s.Nominal)
			}
			if s.NominalWorstCase < s.WorstCase-d.Certificate.MaxGap-tol {
				t.Errorf("%v: state %s: the nominal advice's worst case %.6f is below the robust advice's %.6f", args, s.State, s.NominalWorstCase, s.WorstCase)
			}
			if math.Abs(s.Price-(s.Nominal-s.NominalValue)) > tol {
				t.Errorf("%v: state %s: price %.6f, want nominal - nominal_value = %.6f", args, s.State, s.Price, s.Nominal-s.NominalValue)
			}
			maxPrice = max(maxPrice, s.Price)
			if (s.Action != s.NominalAction) != slices.Contains(d.Robust.Differs, s.State) {
				t.Errorf("%v: state %s: advice %s, nominal %s, differs %v", args, s.State, s.Action, s.NominalAction, d.Robust.Differs)
			}
		}
		if math.Abs(maxPrice-d.Robust.PriceOfRobustness) > tol {
			t.Errorf("%v: price_of_robustness %.6f, want the largest price %.6f", args, d.Robust.PriceOfRobustness, maxPrice)
		}
	}
}

// The worst case grows with the radius (the sets are nested), and at L1
// radius 2 every row may be any distribution on its support, so the
// worst case has the closed form v(s) = min_a [c(s,a) + γ·max_{j∈S(s,a)}
// v(j)] (the inner maximum of a linear function over a simplex is at a
// vertex), computed here by plain value iteration.
func TestSolveRobustMonotoneInRadius(t *testing.T) {
	const tol = 1e-5
	var prev []float64
	var last robustDoc
	for _, r := range []string{"0", "0.02", "0.05", "0.1", "0.2", "0.5", "1", "2"} {
		d := solveRobustJSON(t, demo, "--robust-radius", r, "--tol", "1e-7")
		for i, s := range d.States {
			if prev != nil && s.WorstCase < prev[i]-tol {
				t.Errorf("radius %s: state %s: worst case %.6f below %.6f at the smaller radius", r, s.State, s.WorstCase, prev[i])
			}
		}
		prev = make([]float64, len(d.States))
		for i, s := range d.States {
			prev[i] = s.WorstCase
		}
		last = d
	}
	p := demoProblem(t)
	v := vertexWorstCase(p)
	for i, s := range last.States {
		if math.Abs(s.WorstCase-v[i]) > tol {
			t.Errorf("radius 2: state %s: worst case %.6f, want the closed form %.6f (tol %g)", s.State, s.WorstCase, v[i], tol)
		}
	}
}

// demoProblem is the demo config's Problem.
func demoProblem(t *testing.T) *optimize.Problem {
	t.Helper()
	f, err := modelfile.Load(context.Background(), demo, modelfile.Options{})
	if err != nil {
		t.Fatal(err)
	}
	p, err := optimize.Build(f.Class.Model, f.Class.Costs, f.Class.Discount.Factor())
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// vertexWorstCase iterates v <- min_a [c + γ·max_{j∈support} v(j)] to
// 1e-10.
func vertexWorstCase(p *optimize.Problem) []float64 {
	v := make([]float64, len(p.States))
	for range 100000 {
		next := make([]float64, len(v))
		diff := 0.0
		for s, cs := range p.Choices {
			next[s] = math.Inf(1)
			for _, c := range cs {
				worst := math.Inf(-1)
				for _, e := range c.Next {
					if e.P > 0 {
						worst = max(worst, v[e.To])
					}
				}
				next[s] = min(next[s], c.Cost+p.Discount*worst)
			}
			diff = max(diff, math.Abs(next[s]-v[s]))
		}
		v = next
		if diff*p.Discount/(1-p.Discount) < 1e-10 {
			break
		}
	}
	return v
}

// nominal is the exact cost of the robust advice under the config's
// matrices: the solution of (I - γ P_π) v = c_π by gonum's LU
// factorisation, independent of optimize.Evaluate.
func TestSolveRobustNominalCost(t *testing.T) {
	d := solveRobustJSON(t, demo, "--robust-radius", "0.5")
	p := demoProblem(t)
	n := len(p.States)
	a := mat.NewDense(n, n, nil)
	c := mat.NewVecDense(n, nil)
	for s, st := range d.States {
		act := slices.Index(p.Actions, st.Action)
		k := p.Find(s, act)
		if k < 0 {
			t.Fatalf("advice %s is not admissible in %s", st.Action, st.State)
		}
		ch := p.Choices[s][k]
		a.Set(s, s, 1)
		for _, e := range ch.Next {
			a.Set(s, e.To, a.At(s, e.To)-p.Discount*e.P)
		}
		c.SetVec(s, ch.Cost)
	}
	var v mat.VecDense
	if err := v.SolveVec(a, c); err != nil {
		t.Fatal(err)
	}
	if len(d.Robust.Differs) == 0 {
		t.Errorf("radius 0.5: the robust advice is the nominal advice; the test wants a case where they differ")
	}
	for s, st := range d.States {
		if math.Abs(st.Nominal-v.AtVec(s)) > 1e-6 {
			t.Errorf("state %s: nominal %.6f, want %.6f (tol 1e-6)", st.State, st.Nominal, v.AtVec(s))
		}
	}
}

// A robust answer that is not certified is written, and the exit code is
// 3 as for the nominal solve.
func TestSolveRobustNotCertified(t *testing.T) {
	code, out, stderr := runCLI(t, "solve", demo, "--robust-radius", "0.1", "--method", "value", "--max-iterations", "1")
	if code != exitUncertified || !strings.Contains(out, "not certified") || !strings.Contains(stderr, "the robust answer is not certified: proven gap") {
		t.Errorf("exit %d, want 3 with the answer written:\nstdout: %s\nstderr: %s", code, out, stderr)
	}
}

// The robust flags that do not apply are usage errors.
func TestRobustFlagsThatDoNotApply(t *testing.T) {
	for _, tc := range []struct {
		args []string
		want string
	}{
		{[]string{demoSystem, "--robust"}, "--robust does not apply to a system file"},
		{[]string{demoSystem, "--robust-radius", "0.1"}, "--robust-radius does not apply to a system file"},
		{[]string{demo, "--robust-radius", "0.1", "--criterion", "average"}, "--robust-radius does not apply to the average criterion"},
		{[]string{demo, "--robust-confidence", "0.9", "--criterion", "average"}, "--robust-confidence does not apply to the average criterion"},
		{[]string{demo, "--robust-radius", "0.1", "--method", "lp"}, "method lp does not apply to robust advice"},
		{[]string{demo, "--robust-radius", "0.1", "--target", "critical"}, "--target does not apply to robust advice"},
		{[]string{demo, "--robust-radius", "0.1", "--robust-confidence", "0.9"}, "give either --robust-radius or --robust-confidence, not both"},
		{[]string{demo, "--robust-set", "l2"}, `setting robust-set (flag --robust-set or FIXPOINT_ROBUST_SET): unknown set "l2"; want l1 or kl`},
		{[]string{demo, "--robust-confidence", "90"}, "90 is not a level in (0, 1); write 90% for 90 percent"},
		{[]string{demo, "--robust-radius", "-0.1"}, "-0.1 is not a radius >= 0"},
		{[]string{demo, "--robust-radius", "lots"}, `"lots" is not a finite number`},
	} {
		code, stdout, stderr := runCLI(t, append([]string{"solve"}, tc.args...)...)
		if code != exitUsage || stdout != "" || !strings.Contains(stderr, tc.want) {
			t.Errorf("%v: exit %d, want 2 and %q: %s", tc.args, code, tc.want, stderr)
		}
	}
	t.Setenv("FIXPOINT_ROBUST", "true")
	code, _, stderr := runCLI(t, "solve", demoSystem)
	if code != exitUsage || !strings.Contains(stderr, "FIXPOINT_ROBUST=true does not apply to a system file") {
		t.Errorf("FIXPOINT_ROBUST=true on a system: exit %d: %s", code, stderr)
	}
}

// withBlock is base (solve_test.go) with an uncertainty block whose
// counts fit its rows (50 × 0.8, 50 × 0.2, 30 × 0.7, 30 × 0.3 are whole).
const withBlock = base + `uncertainty:
  set: l1
  confidence: 0.9
  observations:
    leave: {good: 50, worn: 30}
`

// Faults of the uncertainty block are located like every other, by check
// and by solve; a config without the block, asked for robust advice, says
// what to add.
func TestRobustConfigFaults(t *testing.T) {
	tests := []struct {
		name, old, new string
		args           []string // solve flags; check is run too unless the fault needs them
		want           string
	}{
		{"unknown set", "set: l1", "set: l2", nil, `bad.yaml:25: uncertainty.set: unknown set "l2"; want l1 (L1 distance) or kl (likelihood divergence)`},
		{"unknown key", "set: l1", "sets: l1", nil, `bad.yaml:25: uncertainty.sets: unknown key "sets"; did you mean "set"?`},
		{"confidence above 1", "confidence: 0.9", "confidence: 90", nil, "bad.yaml:26: uncertainty.confidence: confidence 90 is not in (0, 1); write 0.9 or 90%"},
		{"unknown action", "leave: {good: 50", "leaf: {good: 50", nil, `bad.yaml:28: uncertainty.observations.leaf: unknown action "leaf"; did you mean "leave"?`},
		{"unknown state", "worn: 30}", "warn: 30}", nil, `bad.yaml:28: uncertainty.observations.leave.warn: unknown state "warn"; did you mean "worn"?`},
		{"row not admissible", "worn: 30}", "worn: 30, failed: 4}", nil,
			"bad.yaml:28: uncertainty.observations.leave.failed: action leave is not admissible in failed (it has no transition row there)"},
		{"count not whole", "worn: 30}", "worn: 30.5}", nil, "bad.yaml:28: uncertainty.observations.leave.worn: want a whole number, got the number 30.5"},
		{"count negative", "worn: 30}", "worn: -30}", nil, "bad.yaml:28: uncertainty.observations.leave.worn: -30 is not a number of observed transitions"},
		{"radius and confidence", "confidence: 0.9", "confidence: 0.9\n  radius: 0.1", nil,
			"bad.yaml:27: uncertainty: give either radius (the sets' size) or confidence (sets sized from the observations), not both"},
		{"confidence without observations", "  observations:\n    leave: {good: 50, worn: 30}\n", "", nil,
			"bad.yaml:26: uncertainty.confidence: the radii come from the observed transitions per row: add observations"},
		{"radius map missing a row", "  confidence: 0.9\n  observations:\n    leave: {good: 50, worn: 30}\n", "  radius: {leave: {good: 0.1}}\n", nil,
			"bad.yaml:26: uncertainty.radius: no radius for leave in worn; give each row with several possible next states a radius"},
		{"negative radius", "  confidence: 0.9\n", "  radius: -0.2\n", nil, "bad.yaml:26: uncertainty.radius: radius -0.2 is negative"},
		{"widen to an unknown state", "  set: l1\n", "  set: l1\n  widen: {leave: {good: [failde]}}\n", nil,
			`bad.yaml:26: uncertainty.widen.leave.good[0]: unknown state "failde"; did you mean "failed"?`},
		{"no_data rule", "  set: l1\n", "  set: l1\n  no_data: guess\n", nil, `bad.yaml:26: uncertainty.no_data: unknown rule "guess"; want whole_simplex (the default) or refuse`},
		{"empty block", "uncertainty:\n  set: l1\n  confidence: 0.9\n  observations:\n    leave: {good: 50, worn: 30}\n", "uncertainty: {}\n", nil,
			"bad.yaml:24: uncertainty: the block is empty"},
		{"refused row without data", "  set: l1\n", "  set: l1\n  no_data: refuse\n", nil, ""},
		{"refused row without data, solved", "  set: l1\n  confidence: 0.9\n  observations:\n    leave: {good: 50, worn: 30}\n",
			"  set: l1\n  confidence: 0.9\n  no_data: refuse\n  observations:\n    leave: {good: 50}\n", []string{"--robust"},
			"bad.yaml:29: uncertainty.observations (action leave, row worn): no observations for this row"},
		{"no radius, no confidence", "  confidence: 0.9\n", "", []string{"--robust"},
			"bad.yaml:24: uncertainty: no radius and no confidence: give one"},
		{"no block", "uncertainty:\n  set: l1\n  confidence: 0.9\n  observations:\n    leave: {good: 50, worn: 30}\n", "", []string{"--robust"},
			"bad.yaml: uncertainty: missing: robust advice needs an uncertainty block"},
		{"confidence flag without observations", "  confidence: 0.9\n  observations:\n    leave: {good: 50, worn: 30}\n", "  radius: 0.1\n",
			[]string{"--robust-confidence", "0.8"}, "bad.yaml:24: uncertainty.observations: missing: radii at a confidence level come from the observed transitions per row"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			if !strings.Contains(withBlock, tc.old) {
				t.Fatalf("test bug: %q not in the config", tc.old)
			}
			path := writeFile(t, "bad.yaml", strings.Replace(withBlock, tc.old, tc.new, 1))
			runs := [][]string{{"check", path}, {"solve", path, "--robust"}}
			if tc.args != nil {
				runs = [][]string{append([]string{"solve", path}, tc.args...)}
			}
			if tc.want == "" {
				// A valid block: check passes.
				if code, _, stderr := runCLI(t, "check", path); code != 0 {
					t.Errorf("check: exit %d: %s", code, stderr)
				}
				return
			}
			for _, args := range runs {
				code, stdout, stderr := runCLI(t, args...)
				if code != exitInput || stdout != "" || !strings.Contains(stderr, filepath.Dir(path)+string(filepath.Separator)+tc.want) {
					t.Errorf("%s: exit %d, want 1 and %q:\nstdout: %s\nstderr: %s", args[0], code, tc.want, stdout, stderr)
				}
			}
		})
	}
}

// The block's own set, radius and confidence are used by --robust, and
// the flags override them; rows whose entries are not counts over their
// observations are warned about.
func TestRobustConfigAndFlags(t *testing.T) {
	path := writeFile(t, "ok.yaml", withBlock)
	d := solveRobustJSON(t, path, "--robust")
	if d.Robust.Set != "l1" || d.Robust.Confidence == nil || *d.Robust.Confidence != 0.9 || !strings.Contains(d.Statement, "With probability at least 90%") {
		t.Errorf("config block: robust %+v, statement %q", d.Robust, d.Statement)
	}
	d = solveRobustJSON(t, path, "--robust-confidence", "0.5", "--robust-set", "kl")
	if d.Robust.Set != "kl" || *d.Robust.Confidence != 0.5 || !strings.Contains(d.Statement, "method of types") {
		t.Errorf("flags: robust %+v, statement %q", d.Robust, d.Statement)
	}
	// A lower confidence gives smaller sets, so lower worst cases.
	wide := solveRobustJSON(t, path, "--robust-confidence", "0.99")
	narrow := solveRobustJSON(t, path, "--robust-confidence", "0.5")
	for i := range wide.States {
		if narrow.States[i].WorstCase > wide.States[i].WorstCase+1e-6 {
			t.Errorf("state %s: worst case %.6f at 50%% above %.6f at 99%%", wide.States[i].State, narrow.States[i].WorstCase, wide.States[i].WorstCase)
		}
	}
	d = solveRobustJSON(t, path, "--robust-radius", "0.25")
	if d.Robust.Radius == nil || *d.Robust.Radius != 0.25 || d.Robust.Confidence != nil {
		t.Errorf("--robust-radius: robust %+v, want radius 0.25 and no confidence", d.Robust)
	}
	perRow := writeFile(t, "rows.yaml", strings.Replace(withBlock, "  set: l1\n  confidence: 0.9\n  observations:\n    leave: {good: 50, worn: 30}\n",
		"  set: kl\n  radius: {leave: {good: 0.01, worn: 0.05}}\n", 1))
	d = solveRobustJSON(t, perRow, "--robust")
	if d.Robust.Set != "kl" || d.Robust.Radius != nil || d.Robust.Confidence != nil || !strings.Contains(d.Statement, "the radius given for it") {
		t.Errorf("per-row radii: robust %+v, statement %q", d.Robust, d.Statement)
	}
	odd := writeFile(t, "odd.yaml", strings.Replace(withBlock, "worn: 30}", "worn: 31}", 1))
	code, out, stderr := runCLI(t, "solve", odd, "--robust")
	const want = "uncertainty.observations.leave.worn (action leave, row worn): the row is not a counting estimate from 31 transitions"
	if code != 0 || !strings.Contains(stderr, "warning: ") || !strings.Contains(stderr, want) || !strings.Contains(out, "Note: ") {
		t.Errorf("odd counts: exit %d, want a warning %q on stderr and a note in the output:\n%s\n%s", code, want, stderr, out)
	}
}

// The starter class config's uncertainty block is valid and gives robust
// advice with its confidence statement.
func TestStarterUncertainty(t *testing.T) {
	data, err := os.ReadFile("../internal/starters/files/class.yaml")
	if err != nil {
		t.Fatal(err)
	}
	path := writeFile(t, "class.yaml", string(data))
	d := solveRobustJSON(t, path, "--robust")
	if !strings.Contains(d.Statement, "90%") || len(d.Settle) == 0 {
		t.Errorf("starter: statement %q, %d settle rows", d.Statement, len(d.Settle))
	}
	for _, g := range d.Settle {
		if g.MaxChange < -1e-6 {
			t.Errorf("starter: more data on %s in %s raises the worst case by %g", g.Action, g.State, -g.MaxChange)
		}
	}
}

// BenchmarkSolveRobustCLI times the whole command in-process (read,
// validate, solve, write JSON) for the demo: nominal, and robust at L1
// radius 0.1 and from the demo's fit at 90%, whose analysis adds the
// nominal solve, the nominal advice's worst case and one warm-started
// robust solve per row for the settle ranking.
func BenchmarkSolveRobustCLI(b *testing.B) {
	for _, tc := range []struct {
		name string
		args []string
	}{
		{"nominal", []string{"solve", demo, "--format", "json"}},
		{"robust-radius", []string{"solve", demo, "--robust-radius", "0.1", "--format", "json"}},
		{"robust-fitted", []string{"solve", fittedDemo, "--robust-confidence", "0.9", "--format", "json"}},
	} {
		b.Run(tc.name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if code := run(tc.args, bytes.NewReader(nil), io.Discard, io.Discard); code != 0 {
					b.Fatalf("exit %d", code)
				}
			}
		})
	}
}
