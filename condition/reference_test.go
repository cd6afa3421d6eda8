package condition

import (
	"encoding/json"
	"math"
	"os"
	"testing"
)

// sharedChain is one Markov-chain case of the shared file.
type sharedChain struct {
	Name, Source, Provenance, Criterion string
	States                              []string
	Chain                               Chain
	Expected                            json.RawMessage
}

// sharedChains reads the Markov-chain cases of testdata/reference-cases.json
// at the top of the project (published worked examples with their
// provenance): criterion "chain" and "total".
func sharedChains(t *testing.T) []sharedChain {
	t.Helper()
	data, err := os.ReadFile("../testdata/reference-cases.json")
	if err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Cases []struct {
			Name, Source, Provenance, Criterion string
			States                              []string
			Actions                             map[string][]struct {
				P []float64 `json:"P"`
			}
			Expected json.RawMessage
		}
	}
	if err := json.Unmarshal(data, &doc); err != nil {
		t.Fatal(err)
	}
	var out []sharedChain
	for _, c := range doc.Cases {
		if c.Criterion != "chain" && c.Criterion != "total" {
			continue
		}
		ch := Chain{Rows: make([][]Entry, len(c.States))}
		for s, name := range c.States {
			for j, p := range c.Actions[name][0].P {
				if p != 0 {
					ch.Rows[s] = append(ch.Rows[s], Entry{To: j, P: p})
				}
			}
		}
		out = append(out, sharedChain{c.Name, c.Source, c.Provenance, c.Criterion, c.States, ch, c.Expected})
	}
	return out
}

// Stationary distribution and mean first passage times (Land of Oz), and
// expected steps to absorption (drunkard's walk), as the shared file gives
// them with their sources.
func TestSharedReferenceChains(t *testing.T) {
	seen := 0
	for _, c := range sharedChains(t) {
		seen++
		switch c.Criterion {
		case "chain":
			var want struct {
				Stationary map[string]float64 `json:"stationary"`
				MFPT       [][]float64        `json:"mean_first_passage_with_recurrence_diagonal"`
			}
			json.Unmarshal(c.Expected, &want)
			pi, err := c.Chain.Stationary()
			if err != nil {
				t.Fatal(err)
			}
			for s, name := range c.States {
				if math.Abs(pi[s]-want.Stationary[name]) > 1e-8 {
					t.Errorf("%s: stationary[%s] = %g, want %g (%s; %s)", c.Name, name, pi[s], want.Stationary[name], c.Source, c.Provenance)
				}
			}
			m, err := c.Chain.MeanFirstPassage()
			if err != nil {
				t.Fatal(err)
			}
			for i := range want.MFPT {
				for j := range want.MFPT[i] {
					if math.Abs(m[i][j]-want.MFPT[i][j]) > 1e-6 {
						t.Errorf("%s: m[%d][%d] = %g, want %g (%s)", c.Name, i, j, m[i][j], want.MFPT[i][j], c.Source)
					}
				}
			}
		case "total":
			var want struct {
				Values map[string]float64 `json:"values"`
			}
			json.Unmarshal(c.Expected, &want)
			absorbing := make([]bool, len(c.States))
			absorbing[0], absorbing[len(c.States)-1] = true, true
			p, err := c.Chain.FirstPassage(absorbing)
			if err != nil {
				t.Fatal(err)
			}
			for s, name := range c.States {
				if math.Abs(p.Periods[s]-want.Values[name]) > 1e-9 {
					t.Errorf("%s: steps[%s] = %g, want %g (%s; %s)", c.Name, name, p.Periods[s], want.Values[name], c.Source, c.Provenance)
				}
			}
		}
	}
	if seen != 2 {
		t.Errorf("%d chain cases in the shared file, want 2", seen)
	}
}
