package main

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

type compareDoc struct {
	Rates []struct {
		Rate           float64 `json:"rate"`
		DiscountFactor float64 `json:"discount_factor"`
		States         []struct {
			State, Action string
			Value         *float64
		} `json:"states"`
		EquivalentAnnualCost float64 `json:"equivalent_annual_cost"`
	} `json:"rates"`
	Switches []struct {
		Rate            float64 `json:"rate"`
		State, From, To string
	} `json:"switch_points"`
	Average *struct {
		GainPerYear float64 `json:"gain_per_year"`
		Lower       float64 `json:"lower"`
		Upper       float64 `json:"upper"`
	} `json:"average"`
}

func runJSON(t *testing.T, v any, args ...string) {
	t.Helper()
	code, out, stderr := runCLI(t, args...)
	if code != 0 {
		t.Fatalf("%v: exit %d: %s", args, code, stderr)
	}
	if err := json.Unmarshal([]byte(out), v); err != nil {
		t.Fatalf("%v: %v\n%s", args, err, out)
	}
}

type solveDoc struct {
	States []struct {
		State, Action string
		Value         float64
	} `json:"states"`
}

// Every reported switch point is real: solving just below and just above
// it gives different advice in that state, and policy iteration and the
// LP agree on both sides.
func TestCompareSwitchPointsAreReal(t *testing.T) {
	var doc compareDoc
	runJSON(t, &doc, "compare", demo, "--rates", "0:0.12", "--format", "json")
	if len(doc.Switches) == 0 {
		t.Fatal("the demo has a switch point between 0% and 12%; none reported")
	}
	for _, sw := range doc.Switches {
		for _, side := range []struct {
			rate float64
			want string
		}{{sw.Rate - 1e-7, sw.From}, {sw.Rate + 1e-7, sw.To}} {
			var byMethod [2]solveDoc
			for i, m := range []string{"policy", "lp"} {
				runJSON(t, &byMethod[i], "solve", demo, "--format", "json", "--method", m, "--rate", fmt.Sprintf("%.12f", side.rate))
			}
			for i := range byMethod[0].States {
				a, b := byMethod[0].States[i], byMethod[1].States[i]
				if a.Action != b.Action || math.Abs(a.Value-b.Value) > 1e-6 {
					t.Errorf("rate %.9f, %s: policy iteration %s %.6f, LP %s %.6f", side.rate, a.State, a.Action, a.Value, b.Action, b.Value)
				}
				if a.State == sw.State && a.Action != side.want {
					t.Errorf("rate %.9f: %s advised %s, switch point says %s", side.rate, a.State, a.Action, side.want)
				}
			}
		}
	}
}

// The rows agree with independent solves, the rate-0 row with the average
// criterion, and EAC(r) = v·r/(1+r) tends to the gain per year as r -> 0.
func TestCompareRowsAndAverage(t *testing.T) {
	var doc compareDoc
	runJSON(t, &doc, "compare", demo, "--rates", "0,0.0001,0.04", "--format", "json")
	if len(doc.Rates) != 3 || doc.Average == nil {
		t.Fatalf("rates %d, average %v", len(doc.Rates), doc.Average)
	}
	var s solveDoc
	runJSON(t, &s, "solve", demo, "--format", "json", "--rate", "0.04")
	for i, st := range doc.Rates[2].States {
		if st.Action != s.States[i].Action || math.Abs(*st.Value-s.States[i].Value) > 1e-6 {
			t.Errorf("4%% row, %s: %s %v; solve says %s %g", st.State, st.Action, *st.Value, s.States[i].Action, s.States[i].Value)
		}
	}
	if doc.Rates[0].States[0].Value != nil {
		t.Errorf("rate 0: present value %v, want null (unbounded)", *doc.Rates[0].States[0].Value)
	}
	var avg struct {
		GainPerYear float64 `json:"gain_per_year"`
		States      []struct{ Action string }
	}
	runJSON(t, &avg, "solve", demo, "--format", "json", "--criterion", "average")
	if math.Abs(doc.Rates[0].EquivalentAnnualCost-avg.GainPerYear) > 1e-9 || math.Abs(doc.Average.GainPerYear-avg.GainPerYear) > 1e-9 {
		t.Errorf("rate-0 EAC %g, average %g; solve --criterion average says %g", doc.Rates[0].EquivalentAnnualCost, doc.Average.GainPerYear, avg.GainPerYear)
	}
	// Blackwell: near rate 0 the discounted advice is the average advice
	// and the EAC is within O(r) of the gain.
	for i, st := range doc.Rates[1].States {
		if st.Action != avg.States[i].Action {
			t.Errorf("rate 0.01%%: %s advised %s, average criterion %s", st.State, st.Action, avg.States[i].Action)
		}
	}
	if d := math.Abs(doc.Rates[1].EquivalentAnnualCost - avg.GainPerYear); d > 0.01*avg.GainPerYear {
		t.Errorf("EAC at 0.01%% is %g from the gain per year %g", d, avg.GainPerYear)
	}
}

// --inflation converts nominal rates by the Fisher relation:
// 1.07/1.02 - 1 = 4.90196...% real.
func TestCompareInflation(t *testing.T) {
	var doc compareDoc
	runJSON(t, &doc, "compare", demo, "--rates", "7%", "--inflation", "2%", "--format", "json")
	if want := 1.07/1.02 - 1; math.Abs(doc.Rates[0].Rate-want) > 1e-15 {
		t.Errorf("real rate %.12g, want %.12g", doc.Rates[0].Rate, want)
	}
	code, out, _ := runCLI(t, "compare", demo, "--rates", "7%", "--inflation", "2%")
	if code != 0 || !strings.Contains(out, "nominal") || !strings.Contains(out, "real (used)") {
		t.Errorf("table does not say which rate each column uses:\n%s", out)
	}
	code, _, stderr := runCLI(t, "compare", demo, "--rates", "1%", "--inflation", "3%")
	if code != exitUsage || !strings.Contains(stderr, "is negative") {
		t.Errorf("negative real rate: exit %d, %s", code, stderr)
	}
}

func TestSolveAverageCriterion(t *testing.T) {
	var doc map[string]any
	runJSON(t, &doc, "solve", demo, "--format", "json", "--criterion", "average")
	for _, k := range []string{"criterion", "gain_per_period", "gain_per_year", "gain_lower", "gain_upper", "states"} {
		if _, ok := doc[k]; !ok {
			t.Errorf("missing key %q", k)
		}
	}
	if doc["criterion"] != "average" {
		t.Errorf("criterion %v", doc["criterion"])
	}
	for _, s := range doc["states"].([]any) {
		st := s.(map[string]any)
		for _, k := range []string{"state", "action", "bias", "q"} {
			if _, ok := st[k]; !ok {
				t.Errorf("state %v lacks %q", st["state"], k)
			}
		}
	}
	lo, g, hi := doc["gain_lower"].(float64), doc["gain_per_period"].(float64), doc["gain_upper"].(float64)
	if !(lo <= g && g <= hi && hi-lo < 1e-6) {
		t.Errorf("gain %g not tightly within [%g, %g]", g, lo, hi)
	}
	// criterion: average in the config makes the discount block optional.
	data, _ := os.ReadFile(demo)
	cfg := strings.Replace(string(data), "discount:\n  rate: 0.04", "criterion: average\ndiscount:", 1)
	cfg = strings.Replace(cfg, "  compare: [", "  compare: [", 1)
	path := filepath.Join(t.TempDir(), "avg.yaml")
	os.WriteFile(path, []byte(cfg), 0o644)
	var doc2 map[string]any
	runJSON(t, &doc2, "solve", path, "--format", "json")
	if doc2["criterion"] != "average" || math.Abs(doc2["gain_per_year"].(float64)-doc["gain_per_year"].(float64)) > 1e-9 {
		t.Errorf("config criterion: %v, gain %v", doc2["criterion"], doc2["gain_per_year"])
	}
	code, _, stderr := runCLI(t, "solve", path, "--criterion", "discounted")
	if code != exitInput || !strings.Contains(stderr, "needs a discount rate or factor") {
		t.Errorf("discounted without a rate: exit %d, %s", code, stderr)
	}
}

// Sensitivity lists a margin for every non-advised action and a range for
// every cost figure, with paths into the config.
func TestSensitivity(t *testing.T) {
	var doc struct {
		Margins []struct {
			State, Advice, Action string
			Margin                float64
		}
		Figures []struct {
			Figure, Path string
			Value        float64
			Lower, Upper *float64
		}
	}
	runJSON(t, &doc, "sensitivity", demo, "--format", "json")
	if len(doc.Margins) != 8 {
		t.Errorf("%d margins, want 8 (one per non-advised admissible action)", len(doc.Margins))
	}
	paths := map[string]bool{}
	for _, f := range doc.Figures {
		paths[f.Path] = true
		if f.Lower != nil && *f.Lower > f.Value || f.Upper != nil && *f.Upper < f.Value {
			t.Errorf("%s: range [%v, %v] excludes the value %g", f.Path, f.Lower, f.Upper, f.Value)
		}
	}
	for _, p := range []string{"states[0].running_cost", "actions[0].cost", "actions[1].cost.light_wear", "actions[3].cost.failed"} {
		if !paths[p] {
			t.Errorf("no figure for %s", p)
		}
	}
}
