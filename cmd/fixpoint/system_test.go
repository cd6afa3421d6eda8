package main

import (
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

const demoSystem = "../../configs/crane.yaml"

func TestSolveSystemGolden(t *testing.T) {
	for _, format := range []string{"table", "csv"} {
		t.Run(format, func(t *testing.T) {
			code, out, stderr := runCLI(t, "solve", demoSystem, "--format", format)
			if code != 0 {
				t.Fatalf("exit %d: %s", code, stderr)
			}
			golden(t, "solve-crane."+format, out)
		})
	}
}

// The JSON joint table has the class keys, with states and actions
// written component=condition in file order, and the joint value of the
// separate policies is not below the joint optimum.
func TestSolveSystemJSON(t *testing.T) {
	var doc struct {
		States []struct {
			State, Action string
			Value         float64
			Lower, Upper  float64
			RunnerUp      *string `json:"runner_up"`
			Q             map[string]float64
		}
		Certificate struct {
			MaxGap float64 `json:"max_gap"`
			Status string
		}
		SeparateValue float64 `json:"separate_value"`
		SavingPV      float64 `json:"joint_saving_present_value"`
		Thresholds    string
		Caution       string
	}
	runJSON(t, &doc, "solve", demoSystem, "--format", "json")
	if len(doc.States) != 64 {
		t.Fatalf("%d joint states, want 4·4·4", len(doc.States))
	}
	first := doc.States[0]
	if first.State != "hoist_motor=good,wire_rope=good,brake=good" || !strings.HasPrefix(first.Action, "hoist_motor=") {
		t.Errorf("first state %q action %q", first.State, first.Action)
	}
	for _, s := range doc.States {
		if strings.Contains(s.State, "hoist_motor=failed") && strings.Contains(s.Action, "hoist_motor=leave") {
			t.Errorf("%s: unsafe component left alone (%s)", s.State, s.Action)
		}
		if !(s.Lower <= s.Value && s.Value <= s.Upper) {
			t.Errorf("%s: value %g outside [%g, %g]", s.State, s.Value, s.Lower, s.Upper)
		}
	}
	if doc.Certificate.Status != "certified" || doc.SavingPV < 0 || math.Abs(doc.SeparateValue-first.Value-doc.SavingPV) > 1e-6 {
		t.Errorf("certificate %+v, separate %g, saving %g", doc.Certificate, doc.SeparateValue, doc.SavingPV)
	}
	if !strings.Contains(doc.Thresholds, "When the machine is stopped for") || !strings.Contains(doc.Caution, "Advisory only") {
		t.Errorf("thresholds %q", doc.Thresholds)
	}
}

func TestSystemBadInput(t *testing.T) {
	data, err := os.ReadFile(demoSystem)
	if err != nil {
		t.Fatal(err)
	}
	base := string(data)
	for _, tc := range []struct {
		name, old, new, want string
	}{
		{"name clash", "  - name: brake\n", "  - name: wire_rope\n", `components[2].name: component name "wire_rope" is used twice (also components[1])`},
		{"no passive action", "      - name: leave\n        passive: true\n        transitions:\n          good: {good: 0.85, glazed: 0.12, worn: 0.03}",
			"      - name: leave\n        cost: 0\n        transitions:\n          good: {good: 0.85, glazed: 0.12, worn: 0.03}", `components[2].actions (component brake): no action is passive; mark the leave-as-is action passive: true`},
		{"row sum in a component", "worn: {worn: 0.70, discard: 0.30}", "worn: {worn: 0.70, discard: 0.20}", "components[1].actions[0].transitions.worn (component wire_rope, action leave, row worn): row sums to 0.9"},
		{"unknown key", "down_cost: 20000", "down_costs: 20000", `down_costs: unknown key "down_costs"; did you mean "down_cost"?`},
		{"negative shutdown", "shutdown_cost: 3000", "shutdown_cost: -3", "shutdown_cost: cost -3 is negative"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			if !strings.Contains(base, tc.old) {
				t.Fatalf("test bug: %q not in the demo", tc.old)
			}
			path := filepath.Join(t.TempDir(), "sys.yaml")
			os.WriteFile(path, []byte(strings.Replace(base, tc.old, tc.new, 1)), 0o644)
			code, _, stderr := runCLI(t, "check", path)
			if code != exitInput || !strings.Contains(stderr, tc.want) {
				t.Errorf("exit %d, stderr:\n%s\nwant %q", code, stderr, tc.want)
			}
		})
	}
}

// A model that would not fit in memory is refused before any work, with
// the numbers and how to shrink it.
func TestSystemSizeGuard(t *testing.T) {
	data, _ := os.ReadFile(demoSystem)
	text := string(data)
	comp := text[strings.Index(text, "  - name: wire_rope"):strings.Index(text, "  - name: brake")]
	var b strings.Builder
	b.WriteString(text[:strings.Index(text, "components:")] + "components:\n")
	for i := range 14 {
		b.WriteString(strings.Replace(comp, "name: wire_rope", "name: rope"+string(rune('a'+i)), 1))
	}
	path := filepath.Join(t.TempDir(), "huge.yaml")
	os.WriteFile(path, []byte(b.String()), 0o644)
	code, out, stderr := runCLI(t, "solve", path)
	if code != exitInput || out != "" {
		t.Fatalf("exit %d, stdout %q", code, out)
	}
	for _, w := range []string{"too large", "268,435,456 joint states", "4,782,969 joint actions", "of memory", "shrink it"} {
		if !strings.Contains(stderr, w) {
			t.Errorf("stderr lacks %q:\n%s", w, stderr)
		}
	}
}

// A model that fits in memory but whose solve may take hours is refused
// too, unless the time limit is raised; the limits themselves must be
// positive.
func TestSystemTimeGuard(t *testing.T) {
	data, _ := os.ReadFile(demoSystem)
	text := string(data)
	comp := text[strings.Index(text, "  - name: wire_rope"):strings.Index(text, "  - name: brake")]
	var b strings.Builder
	b.WriteString(text[:strings.Index(text, "components:")] + "components:\n")
	for i := range 9 {
		b.WriteString(strings.Replace(comp, "name: wire_rope", "name: rope"+string(rune('a'+i)), 1))
	}
	path := filepath.Join(t.TempDir(), "slow.yaml")
	os.WriteFile(path, []byte(b.String()), 0o644)
	code, _, stderr := runCLI(t, "solve", path, "--max-memory-gib", "64")
	if code != exitInput || !strings.Contains(stderr, "over the time limit of 1.0 hours (--max-hours)") {
		t.Errorf("exit %d, want the time limit: %s", code, stderr)
	}
	for _, bad := range [][]string{{"--max-memory-gib", "0"}, {"--max-memory-gib", "-1"}, {"--max-hours", "0"}} {
		if code, _, stderr := runCLI(t, append([]string{"solve", demoSystem}, bad...)...); code != exitUsage {
			t.Errorf("%v: exit %d, want 2: %s", bad, code, stderr)
		}
	}
}

// An uncertified joint solve says why, with the remedy that fits: with
// costs near 10^12 the iteration converges and the rounding allowance of
// float64 keeps the gap above the tolerance (loosen --tol; raising
// --max-iterations would not help), while a cap of 2 sweeps is a cap.
func TestSystemUncertifiedRemedy(t *testing.T) {
	data, err := os.ReadFile(demoSystem)
	if err != nil {
		t.Fatal(err)
	}
	num := regexp.MustCompile(`: (\d{2,})\b`)
	lines := strings.Split(string(data), "\n")
	for i, l := range lines {
		if strings.Contains(l, "cost") {
			lines[i] = num.ReplaceAllString(l, ": ${1}0000000")
		}
	}
	huge := writeFile(t, "huge-crane.yaml", strings.Join(lines, "\n"))
	code, _, stderr := runCLI(t, "solve", huge, "--format", "json")
	if code != exitUncertified || !strings.Contains(stderr, "allowance for floating-point rounding") || strings.Contains(stderr, "--max-iterations") {
		t.Errorf("solve (costs near 1e11): exit %d, %s; want 3 and the rounding remedy", code, stderr)
	}
	code, _, stderr = runCLI(t, "solve", demoSystem, "--max-iterations", "2", "--format", "json")
	if code != exitUncertified || !strings.Contains(stderr, "stopped at its cap of 2 sweeps; raise --max-iterations") {
		t.Errorf("solve --max-iterations 2: exit %d, %s; want 3 and the cap remedy", code, stderr)
	}
}
