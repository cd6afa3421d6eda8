package costs

import (
	"encoding/json"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"
)

// The interest-factor rows of testdata/reference-cases.json at the top of
// the project (each row says whether it is published or from memory):
// every factor within half a unit of its last printed digit.
func TestSharedInterestFactorTables(t *testing.T) {
	data, err := os.ReadFile("../testdata/reference-cases.json")
	if err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Cases []struct {
			Name     string                     `json:"name"`
			Source   string                     `json:"source"`
			Expected map[string]json.RawMessage `json:"expected"`
		} `json:"cases"`
	}
	if err := json.Unmarshal(data, &doc); err != nil {
		t.Fatal(err)
	}
	factors := map[string]func(float64, int) float64{
		"F/P": CompoundAmount, "P/F": PresentWorth, "A/F": SinkingFund, "F/A": SeriesCompoundAmount,
		"A/P": CapitalRecovery, "P/A": SeriesPresentWorth, "P/G": GradientPresentWorth, "A/G": GradientSeries,
	}
	rows := 0
	for _, c := range doc.Cases {
		if c.Name != "interest_factor_tables" {
			continue
		}
		for key, raw := range c.Expected {
			var i float64
			var n int
			for _, part := range strings.Split(key, ",") {
				k, v, _ := strings.Cut(part, "=")
				switch k {
				case "i":
					i, _ = strconv.ParseFloat(v, 64)
				case "n":
					n, _ = strconv.Atoi(v)
				}
			}
			var row map[string]any
			if err := json.Unmarshal(raw, &row); err != nil {
				t.Fatal(err)
			}
			for name, f := range factors {
				want, ok := row[name].(float64)
				if !ok {
					continue
				}
				text := strconv.FormatFloat(want, 'f', -1, 64)
				tol := 0.5 * math.Pow(10, -float64(len(text)-strings.IndexByte(text+".", '.')-1))
				if got := f(i, n); math.Abs(got-want) > tol+1e-12 {
					t.Errorf("(%s, %g, %d) = %.6f, want %g (tol %g; %s, %v)", name, i, n, got, want, tol, c.Source, row["provenance"])
				}
			}
			rows++
		}
	}
	if rows == 0 {
		t.Fatal("no interest-factor rows in the shared file")
	}
}
