package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

const demo = "../../configs/pumps.yaml"

func TestSolveGolden(t *testing.T) {
	for _, format := range []string{"table", "json", "csv"} {
		t.Run(format, func(t *testing.T) {
			code, out, errOut := runCLI(t, "solve", demo, "--format", format)
			if code != 0 {
				t.Fatalf("exit %d: %s", code, errOut)
			}
			golden(t, "solve-pumps."+format, out)
		})
	}
}

// The JSON carries exactly the keys the README promises, with a caution.
func TestSolveJSONKeys(t *testing.T) {
	code, out, errOut := runCLI(t, "solve", demo, "--format", "json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var doc map[string]any
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{"model", "currency", "discount_factor", "method", "iterations", "states", "certificate", "thresholds", "caution"} {
		if _, ok := doc[k]; !ok {
			t.Errorf("missing key %q", k)
		}
	}
	cert := doc["certificate"].(map[string]any)
	for _, k := range []string{"max_gap", "bellman_residual"} {
		if _, ok := cert[k].(float64); !ok {
			t.Errorf("certificate.%s missing or not a number", k)
		}
	}
	states := doc["states"].([]any)
	if len(states) != 5 {
		t.Fatalf("%d states, want 5", len(states))
	}
	for _, s := range states {
		st := s.(map[string]any)
		for _, k := range []string{"state", "action", "value", "lower", "upper", "runner_up", "margin", "q"} {
			if _, ok := st[k]; !ok {
				t.Errorf("state %v: missing key %q", st["state"], k)
			}
		}
		if st["unsafe"] == true && st["action"] == "leave" {
			t.Errorf("unsafe state %v advised the passive action", st["state"])
		}
	}
	last := states[4].(map[string]any)
	if last["runner_up"] != nil || last["margin"] != nil {
		t.Errorf("failed state has one admissible action: runner_up %v, margin %v, want null", last["runner_up"], last["margin"])
	}
	if !strings.Contains(doc["caution"].(string), "Advisory only") {
		t.Errorf("caution = %q", doc["caution"])
	}
}

// Every method gives the same advice and values on the demo, to 1e-6.
func TestSolveMethodsAgreeOnDemo(t *testing.T) {
	var first map[string]any
	for _, m := range []string{"value", "policy", "lp"} {
		code, out, errOut := runCLI(t, "solve", demo, "--format", "json", "--method", m, "--tol", "1e-7")
		if code != 0 {
			t.Fatalf("%s: exit %d: %s", m, code, errOut)
		}
		var doc map[string]any
		if err := json.Unmarshal([]byte(out), &doc); err != nil {
			t.Fatal(err)
		}
		if doc["method"] != m {
			t.Errorf("method = %v, want %s", doc["method"], m)
		}
		if first == nil {
			first = doc
			continue
		}
		for i, s := range doc["states"].([]any) {
			got, want := s.(map[string]any), first["states"].([]any)[i].(map[string]any)
			if got["action"] != want["action"] {
				t.Errorf("%s: state %v action %v, want %v", m, got["state"], got["action"], want["action"])
			}
			if d := math.Abs(got["value"].(float64) - want["value"].(float64)); d > 1e-6 {
				t.Errorf("%s: state %v value differs by %g", m, got["state"], d)
			}
		}
	}
}

// base is a small valid class config; badInput cases mutate it.
const base = `version: 1
name: test class
currency: EUR
period_years: 1
discount:
  rate: 0.05
states:
  - {name: good, running_cost: 10}
  - {name: worn, running_cost: 50}
  - {name: failed, running_cost: 500, unsafe: true}
actions:
  - name: leave
    passive: true
    cost: 0
    transitions:
      good: {good: 0.8, worn: 0.2}
      worn: {worn: 0.7, failed: 0.3}
  - name: replace
    cost: 1000
    matrix:
      - [1, 0, 0]
      - [1, 0, 0]
      - [1, 0, 0]
`

func TestCheckBadInput(t *testing.T) {
	tests := []struct {
		name string
		old  string // replaced in base by new; empty old means "replace everything"
		new  string
		want []string // substrings of stderr
	}{
		{"yaml syntax", "discount:\n  rate: 0.05", "discount:\n rate: [0.05", []string{"bad.yaml:", "YAML syntax error"}},
		{"unknown state", "worn: {worn: 0.7, failed: 0.3}", "worn: {worn: 0.7, faild: 0.3}",
			[]string{"bad.yaml:17: actions[0].transitions.worn.faild: unknown state \"faild\"; did you mean \"failed\"?"}},
		{"unknown from-state", "      worn: {worn", "      wron: {worn", []string{"bad.yaml:17: actions[0].transitions.wron: unknown state \"wron\"; did you mean \"worn\"?"}},
		{"row sum", "good: {good: 0.8, worn: 0.2}", "good: {good: 0.8, worn: 0.17}",
			[]string{"bad.yaml:16: actions[0].transitions.good (action leave, row good): row sums to 0.97, want 1 (±1e-09)"}},
		{"row sum just outside", "good: {good: 0.8, worn: 0.2}", "good: {good: 0.8, worn: 0.20000001}",
			[]string{"actions[0].transitions.good (action leave, row good): row sums to 1.00000001, want 1"}},
		{"negative probability", "good: {good: 0.8, worn: 0.2}", "good: {good: 1.2, worn: -0.2}",
			[]string{"bad.yaml:16: actions[0].transitions.good.worn (action leave, row good): probability -0.2 is negative"}},
		{"nan", "running_cost: 50", "running_cost: .nan", []string{"bad.yaml:9: states[1].running_cost: .nan is not a finite number"}},
		{"inf probability", "[1, 0, 0]\n      - [1, 0, 0]\n      - [1, 0, 0]", "[1, 0, 0]\n      - [.inf, 0, 0]\n      - [1, 0, 0]",
			[]string{"bad.yaml:22: actions[1].matrix[1][0]: .inf is not a finite number"}},
		{"inf cost", "cost: 1000", "cost: -.Inf", []string{"actions[1].cost: -.Inf is not a finite number"}},
		{"duplicate state", "{name: worn, running_cost: 50}", "{name: good, running_cost: 50}",
			[]string{"states[1].name: duplicate state name \"good\""}},
		{"duplicate action", "name: replace", "name: leave", []string{"actions[1].name: duplicate action name \"leave\""}},
		{"both rate and factor", "rate: 0.05", "rate: 0.05\n  factor: 0.9", []string{"bad.yaml:6: discount: give either rate or factor, not both"}},
		{"neither rate nor factor", "rate: 0.05", "{}", []string{"discount: give a rate"}},
		{"rate at -1", "rate: 0.05", "rate: -1", []string{"discount.rate: discount rate -1 per year is not in (0, 10]"}},
		{"rate zero", "rate: 0.05", "rate: 0", []string{"discount.rate: discount rate 0 per year is not in (0, 10]; for no discounting use criterion: average"}},
		{"factor above 1", "rate: 0.05", "factor: 1.2", []string{"bad.yaml:6: discount.factor: discount factor 1.2 per period is not in (0, 1)"}},
		{"factor zero", "rate: 0.05", "factor: 0", []string{"discount.factor: discount factor 0 per period is not in (0, 1)"}},
		{"matrix rows", "      - [1, 0, 0]\n      - [1, 0, 0]\n      - [1, 0, 0]\n", "      - [1, 0, 0]\n      - [1, 0, 0]\n",
			[]string{"actions[1].matrix: matrix has 2 rows, want one per state (3)"}},
		{"matrix row length", "      - [1, 0, 0]\n      - [1, 0, 0]\n      - [1, 0, 0]\n", "      - [1, 0, 0]\n      - [1, 0]\n      - [1, 0, 0]\n",
			[]string{"bad.yaml:22: actions[1].matrix[1]: row has 2 entries, want 3"}},
		{"no admissible action", "      worn: {worn: 0.7, failed: 0.3}\n  - name: replace\n    cost: 1000\n    matrix:\n      - [1, 0, 0]\n      - [1, 0, 0]\n",
			"  - name: replace\n    cost: 1000\n    matrix:\n      - [1, 0, 0]\n      - \"-\"\n",
			[]string{"bad.yaml:9: states[1] (worn): no action is admissible in state \"worn\""}},
		{"unsafe only passive", "      - [1, 0, 0]\n      - [1, 0, 0]\n      - [1, 0, 0]\n",
			"      - [1, 0, 0]\n      - [1, 0, 0]\n      - \"-\"\n",
			[]string{"states[2] (failed): no action is admissible in state \"failed\""}},
		{"passive row in unsafe state", "      worn: {worn: 0.7, failed: 0.3}\n", "      worn: {worn: 0.7, failed: 0.3}\n      failed: {failed: 1}\n",
			[]string{"bad.yaml:18: actions[0].transitions.failed (action leave, row failed): passive action \"leave\" has a row for unsafe state \"failed\""}},
		{"two passive actions", "    cost: 1000", "    passive: true\n    cost: 1000", []string{"actions[1].passive: more than one passive action (\"leave\" and \"replace\")"}},
		{"empty scale", "states:\n  - {name: good, running_cost: 10}\n  - {name: worn, running_cost: 50}\n  - {name: failed, running_cost: 500, unsafe: true}\n",
			"states: []\n", []string{"states: the condition scale is empty"}},
		{"unknown key", "period_years: 1", "period_year: 1", []string{
			"bad.yaml:4: period_year: unknown key \"period_year\"; did you mean \"period_years\"?",
			"bad.yaml:1: period_years: missing required key \"period_years\""}},
		{"cost for inadmissible state", "cost: 0\n", "cost: {good: 0, worn: 0, failed: 5}\n",
			[]string{"actions[0].cost.failed: cost given for state \"failed\", where the action has no transition row"}},
		{"cost map missing a state", "cost: 0\n", "cost: {good: 0}\n", []string{"actions[0].cost: no cost for state \"worn\""}},
		{"number as text", "running_cost: 50", "running_cost: \"50\"", []string{"states[1].running_cost: want a number, got the text \"50\""}},
		{"version", "version: 1", "version: 2", []string{"version: schema version 2 is not supported; want 1"}},
		{"duplicate key", "currency: EUR", "currency: EUR\ncurrency: USD", []string{"bad.yaml:4: currency: duplicate key \"currency\" (first at line 3)"}},
		{"several faults at once", "good: {good: 0.8, worn: 0.2}", "good: {good: 0.8, worn: 0.3}\n      nowhere: {good: 1}",
			[]string{"actions[0].transitions.good (action leave, row good): row sums to 1.1", "actions[0].transitions.nowhere: unknown state"}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			if !strings.Contains(base, tc.old) {
				t.Fatalf("test bug: %q not in base", tc.old)
			}
			dir := t.TempDir()
			path := filepath.Join(dir, "bad.yaml")
			if err := os.WriteFile(path, []byte(strings.Replace(base, tc.old, tc.new, 1)), 0o644); err != nil {
				t.Fatal(err)
			}
			out := filepath.Join(dir, "out.json")
			for _, args := range [][]string{{"check", path}, {"solve", path, "-o", out}} {
				code, stdout, stderr := runCLI(t, args...)
				if code != exitInput {
					t.Errorf("%v: exit %d, want %d\nstderr: %s", args[0], code, exitInput, stderr)
				}
				if stdout != "" {
					t.Errorf("%v: wrote to stdout: %q", args[0], stdout)
				}
				for _, w := range tc.want {
					if !strings.Contains(stderr, w) {
						t.Errorf("%v: stderr lacks %q:\n%s", args[0], w, stderr)
					}
				}
			}
			if _, err := os.Stat(out); err == nil {
				t.Errorf("solve wrote %s despite bad input", out)
			}
		})
	}
}

func TestCheckMissingFile(t *testing.T) {
	code, _, stderr := runCLI(t, "check", "no/such.yaml")
	if code != exitInput || !strings.Contains(stderr, "no/such.yaml: file not found") {
		t.Errorf("exit %d, stderr %q", code, stderr)
	}
}

func TestBaseConfigIsValid(t *testing.T) {
	path := filepath.Join(t.TempDir(), "ok.yaml")
	os.WriteFile(path, []byte(base), 0o644)
	if code, _, stderr := runCLI(t, "check", path); code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
}
