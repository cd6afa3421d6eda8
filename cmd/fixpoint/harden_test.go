package main

import (
	"bytes"
	"fixpoint/cmd/internal/modelfile"
	"os"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"testing"
)

func writeFile(t *testing.T, name, text string) string {
	t.Helper()
	path := filepath.Join(t.TempDir(), name)
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// Rows that sum to 1 only after rounding to 3 decimals get a precise
// error that suggests --renormalize, which rescales them and says so.
func TestRenormalize(t *testing.T) {
	cfg := strings.Replace(base, "good: {good: 0.8, worn: 0.2}", "good: {good: 0.333, worn: 0.333, failed: 0.333}", 1)
	path := writeFile(t, "rounded.yaml", cfg)
	code, _, stderr := runCLI(t, "check", path)
	if code != exitInput || !strings.Contains(stderr, "actions[0].transitions.good (action leave, row good): row sums to 0.999, want 1 (±1e-09); it looks rounded to 3 decimals: --renormalize") {
		t.Errorf("exit %d, stderr %s", code, stderr)
	}
	code, out, stderr := runCLI(t, "solve", path, "--renormalize", "--format", "json")
	if code != 0 || !strings.Contains(stderr, "note: "+path+": actions[0].transitions.good (action leave, row good): row summed to 0.999; each entry divided by it") {
		t.Errorf("exit %d, stderr %s", code, stderr)
	}
	if !strings.Contains(out, `"state": "good"`) {
		t.Errorf("no advice: %s", out)
	}
	// Further off than rounding can explain: still an error.
	far := strings.Replace(base, "good: {good: 0.8, worn: 0.2}", "good: {good: 0.8, worn: 0.1}", 1)
	code, _, stderr = runCLI(t, "check", writeFile(t, "far.yaml", far), "--renormalize")
	if code != exitInput || strings.Contains(stderr, "looks rounded") || !strings.Contains(stderr, "row sums to 0.9,") {
		t.Errorf("far row: exit %d, stderr %s", code, stderr)
	}
}

// Limits on sizes give clear messages.
func TestLimits(t *testing.T) {
	var states strings.Builder
	for i := range modelfile.MaxStates + 1 {
		states.WriteString("  - s" + strconv.Itoa(i) + "\n")
	}
	big := "version: 1\ncurrency: EUR\nperiod_years: 1\ndiscount: {rate: 0.05}\nstates:\n" + states.String() + "actions: []\n"
	var acts strings.Builder
	for i := range modelfile.MaxActions + 1 {
		acts.WriteString("  - {name: a" + strconv.Itoa(i) + ", cost: 1, transitions: {x: {x: 1}}}\n")
	}
	manyActions := "version: 1\ncurrency: EUR\nperiod_years: 1\ndiscount: {rate: 0.05}\nstates: [x]\nactions:\n" + acts.String()
	huge := "# " + strings.Repeat("x", modelfile.MaxFileBytes) + "\n"
	for _, tc := range []struct {
		name, text, want string
	}{
		{"states", big, "states: 501 states, over the limit of 500"},
		{"actions", manyActions, "actions: 51 actions, over the limit of 50"},
		{"file size", huge, "file is larger than the limit of 4 MiB"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			code, _, stderr := runCLI(t, "check", writeFile(t, "big.yaml", tc.text))
			if code != exitInput || !strings.Contains(stderr, tc.want) {
				t.Errorf("exit %d, stderr %.300s", code, stderr)
			}
		})
	}
	code, _, stderr := runCLI(t, "forecast", demo, "--from", "sound", "--years", "5000")
	if code != exitUsage || !strings.Contains(stderr, "is not a horizon in (0, 500] years") {
		t.Errorf("years: exit %d, %s", code, stderr)
	}
	code, _, stderr = runCLI(t, "plan", demoFleet, "--years", "101", "--budget", "1")
	if code != exitUsage || !strings.Contains(stderr, "setting years: 101 is not a whole number of years in [1, 100]") {
		t.Errorf("plan years: exit %d, %s", code, stderr)
	}
}

// Numerical safety: a discount factor of 0.9999 still certifies with a
// tolerance the float64 certificate can prove, and says honestly when it
// cannot; costs spanning 1e-3 to 1e9 certify; near-ties (1e-12 apart) are
// reported, and resolved the same way by every method.
func TestNumericalSafety(t *testing.T) {
	slow := strings.Replace(base, "rate: 0.05", "factor: 0.9999", 1)
	path := writeFile(t, "slow.yaml", slow)
	if code, _, stderr := runCLI(t, "solve", path, "--tol", "1"); code != 0 {
		t.Errorf("γ = 0.9999, tol 1: exit %d, %s", code, stderr)
	}
	code, out, stderr := runCLI(t, "solve", path, "--tol", "1e-9")
	if code != exitUncertified || !strings.Contains(stderr, "rounding") || !strings.Contains(out, "not certified") {
		t.Errorf("γ = 0.9999, tol 1e-9: exit %d, stderr %s", code, stderr)
	}
	wide := strings.NewReplacer("running_cost: 10}", "running_cost: 0.001}", "running_cost: 500,", "running_cost: 1e9,").Replace(base)
	if code, _, stderr := runCLI(t, "solve", writeFile(t, "wide.yaml", wide), "--tol", "1e3"); code != 0 {
		t.Errorf("costs 1e-3..1e9: exit %d, %s", code, stderr)
	}
	tied := strings.Replace(base, "  - name: replace\n    cost: 1000\n", "  - name: renew\n    cost: 1000\n    matrix:\n      - [1, 0, 0]\n      - [1, 0, 0]\n      - [1, 0, 0]\n  - name: replace\n    cost: 1000.000000000001\n", 1)
	tp := writeFile(t, "tied.yaml", tied)
	var first string
	for _, m := range []string{"policy", "value", "lp", "policy"} {
		code, out, stderr := runCLI(t, "solve", tp, "--method", m, "--format", "json", "--tol", "1e-6")
		if code != 0 {
			t.Fatalf("%s: exit %d, %s", m, code, stderr)
		}
		if !strings.Contains(out, `"tied": [`) || !strings.Contains(out, `"renew"`) {
			t.Errorf("%s: no tie reported:\n%.800s", m, out)
		}
		doc := out[strings.Index(out, `"states"`):strings.Index(out, `"certificate"`)]
		if first == "" {
			first = adviceOnly(doc)
		} else if adviceOnly(doc) != first {
			t.Errorf("%s: the advice differs between methods", m)
		}
	}
}

// adviceOnly keeps the state and action lines of a JSON states block.
func adviceOnly(doc string) string {
	var b strings.Builder
	for _, l := range strings.Split(doc, "\n") {
		if strings.Contains(l, `"state":`) || strings.Contains(l, `"action":`) {
			b.WriteString(strings.TrimSpace(l))
		}
	}
	return b.String()
}

// The same inputs and seed give byte-identical outputs whatever the
// number of cores.
func TestDeterminism(t *testing.T) {
	dir := t.TempDir()
	cases := [][]string{
		{"solve", demo},
		{"solve", demo, "--format", "json"},
		{"solve", demoSystem, "--format", "csv"},
		{"compare", demo, "--rates", "0:0.12", "--format", "json"},
		{"sensitivity", demo, "--format", "json"},
		{"forecast", demo, "--mix", "sound=3,failed=1", "--years", "4", "--format", "csv"},
		{"fit", demoRecords, "--config", demo, "--format", "json", "--bootstrap", "30", "--estimator", "generator"},
		{"plan", demoFleet, "--format", "json"},
		{"forecast", demoFleet, "--simulate", "100", "--seed", "5", "--format", "json"},
	}
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	for _, args := range cases {
		var outs [2]string
		for i, procs := range []int{1, 4} {
			runtime.GOMAXPROCS(procs)
			code, out, stderr := runCLI(t, args...)
			if code != 0 {
				t.Fatalf("%v: exit %d: %s", args, code, stderr)
			}
			outs[i] = out
		}
		if outs[0] != outs[1] {
			t.Errorf("%v: output differs between 1 and 4 cores", args)
		}
	}
	var pdfs [2][]byte
	for i, procs := range []int{1, 4} {
		runtime.GOMAXPROCS(procs)
		path := filepath.Join(dir, "b"+strconv.Itoa(i)+".pdf")
		if code, _, stderr := runCLI(t, "brief", demo, "-o", path, "--date", "2026-12-01"); code != 0 {
			t.Fatal(stderr)
		}
		pdfs[i], _ = os.ReadFile(path)
	}
	if !bytes.Equal(pdfs[0], pdfs[1]) {
		t.Error("the brief differs between 1 and 4 cores")
	}
}

// More components, classes or units than the limits allow get clear
// messages.
func TestMoreLimits(t *testing.T) {
	data, _ := os.ReadFile(demoSystem)
	text := string(data)
	comp := text[strings.Index(text, "  - name: brake"):]
	var b strings.Builder
	b.WriteString(text[:strings.Index(text, "components:")] + "components:\n")
	for i := range modelfile.MaxComponents + 1 {
		b.WriteString(strings.Replace(comp, "name: brake", "name: part"+strconv.Itoa(i), 1))
	}
	code, _, stderr := runCLI(t, "check", writeFile(t, "many.yaml", b.String()))
	if code != exitInput || !strings.Contains(stderr, "components: 17 components, over the limit of 16") {
		t.Errorf("components: exit %d, %.300s", code, stderr)
	}
}
