package optimize

import (
	"context"
	"encoding/json"
	"math"
	"os"
	"testing"

	"fixpoint/condition"
)

// referenceCase is one case of testdata/reference-cases.json at the top of
// the project: published worked examples with their provenance (each case
// names its source and whether its numbers were seen in stored text or
// are recalled from memory).
type referenceCase struct {
	Name       string   `json:"name"`
	Source     string   `json:"source"`
	Provenance string   `json:"provenance"`
	Criterion  string   `json:"criterion"`
	Gamma      *float64 `json:"gamma"`
	States     []string `json:"states"`
	Actions    map[string][]struct {
		Name   string    `json:"name"`
		P      []float64 `json:"P"`
		Reward *float64  `json:"reward"`
		Cost   *float64  `json:"cost"`
	} `json:"actions"`
	Expected  json.RawMessage `json:"expected"`
	Tolerance map[string]any  `json:"tolerance"`
}

// tol returns the case's numeric tolerance for key.
func (c referenceCase) tol(key string) float64 {
	x, _ := c.Tolerance[key].(float64)
	return x
}

func loadReferenceCases(t *testing.T) []referenceCase {
	t.Helper()
	data, err := os.ReadFile("../testdata/reference-cases.json")
	if err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Cases []referenceCase `json:"cases"`
	}
	if err := json.Unmarshal(data, &doc); err != nil {
		t.Fatal(err)
	}
	return doc.Cases
}

// problem builds the case as a cost-minimising Problem (rewards become
// negative costs); action names are numbered in order of first use.
func (c referenceCase) problem() (*Problem, map[string]int) {
	p := &Problem{States: c.States, Choices: make([][]Choice, len(c.States))}
	if c.Gamma != nil {
		p.Discount = *c.Gamma
	}
	index := map[string]int{}
	for s, name := range c.States {
		for _, a := range c.Actions[name] {
			k, ok := index[a.Name]
			if !ok {
				k = len(p.Actions)
				index[a.Name] = k
				p.Actions = append(p.Actions, a.Name)
			}
			cost := 0.0
			switch {
			case a.Cost != nil:
				cost = *a.Cost
			case a.Reward != nil:
				cost = -*a.Reward
			}
			var next []condition.Entry
			for j, x := range a.P {
				if x != 0 {
					next = append(next, condition.Entry{To: j, P: x})
				}
			}
			p.Choices[s] = append(p.Choices[s], Choice{Action: k, Cost: cost, Next: next})
		}
	}
	// Choices must be in increasing action index.
	for s := range p.Choices {
		cs := p.Choices[s]
		for i := 1; i < len(cs); i++ {
			for j := i; j > 0 && cs[j].Action < cs[j-1].Action; j-- {
				cs[j], cs[j-1] = cs[j-1], cs[j]
			}
		}
	}
	return p, index
}

// The discounted cases of the shared file, by every method: the published
// (or recalled, as the file says) optimal policy and values.
func TestSharedReferenceCasesDiscounted(t *testing.T) {
	for _, c := range loadReferenceCases(t) {
		if c.Criterion != "discounted" {
			continue
		}
		var want struct {
			Policy map[string]string  `json:"policy"`
			Values map[string]float64 `json:"values"`
		}
		if err := json.Unmarshal(c.Expected, &want); err != nil {
			t.Fatal(err)
		}
		p, index := c.problem()
		tol := c.tol("values")
		for _, m := range methods {
			r, err := Solve(context.Background(), p, &Settings{Method: m, Tol: 1e-9})
			if err != nil {
				t.Fatalf("%s (%s): %v", c.Name, m, err)
			}
			for s, name := range c.States {
				if r.Policy[s] != index[want.Policy[name]] {
					t.Errorf("Solve(%q, %s): policy[%s] = %s, want %s (%s; %s)", c.Name, m, name, p.Actions[r.Policy[s]], want.Policy[name], c.Source, c.Provenance)
				}
				if v, ok := want.Values[name]; ok && math.Abs(-r.Value[s]-v) > tol {
					t.Errorf("Solve(%q, %s): value[%s] = %g, want %g (tol %g; %s; %s)", c.Name, m, name, -r.Value[s], v, tol, c.Source, c.Provenance)
				}
			}
		}
	}
}

// The average-reward case (Howard's taxicab, from memory as the file says):
// gain and relative values normalised as the file states.
func TestSharedReferenceCasesAverage(t *testing.T) {
	for _, c := range loadReferenceCases(t) {
		if c.Criterion != "average" {
			continue
		}
		var want struct {
			Policy map[string]string  `json:"policy"`
			Gain   float64            `json:"gain"`
			Values map[string]float64 `json:"values"`
		}
		if err := json.Unmarshal(c.Expected, &want); err != nil {
			t.Fatal(err)
		}
		p, index := c.problem()
		r, err := SolveAverage(context.Background(), p, &Settings{Tol: 1e-9})
		if err != nil {
			t.Fatalf("%s: %v", c.Name, err)
		}
		if math.Abs(-r.Gain-want.Gain) > c.tol("gain") {
			t.Errorf("SolveAverage(%q): gain %g, want %g (tol %g; %s; %s)", c.Name, -r.Gain, want.Gain, c.tol("gain"), c.Source, c.Provenance)
		}
		// Relative values with the file's normalisation h[last] = 0.
		last := len(c.States) - 1
		for s, name := range c.States {
			if r.Policy[s] != index[want.Policy[name]] {
				t.Errorf("SolveAverage(%q): policy[%s] = %s, want %s", c.Name, name, p.Actions[r.Policy[s]], want.Policy[name])
			}
			h := -(r.Bias[s] - r.Bias[last])
			if math.Abs(h-want.Values[name]) > c.tol("values") {
				t.Errorf("SolveAverage(%q): h[%s] = %g, want %g (tol %g)", c.Name, name, h, want.Values[name], c.tol("values"))
			}
		}
	}
}
