package condition

import (
	"context"
	"errors"
	"math"
	"math/rand/v2"
	"os"
	"strconv"
	"strings"
	"testing"
)

// The scale and actions of the demo class config (configs/pumps.yaml).
var (
	pumpStates  = []string{"sound", "light_wear", "heavy_wear", "critical", "failed"}
	pumpActions = []string{"leave", "service", "overhaul", "replace"}
)

// readPanel reads a records file of testdata against the demo scale.
func readPanel(t *testing.T, name string) (*Panel, []Warning) {
	t.Helper()
	f, err := os.Open("testdata/" + name)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, warn, err := ReadRecords(f, pumpStates)
	if err != nil {
		t.Fatal(err)
	}
	p, _, pw := BuildPanel(recs, PanelOptions{Actions: pumpActions})
	return p, append(warn, pw...)
}

// testdata/dates2.csv (an adversarial input: bad dates, three usable
// intervals, all from "sound") once gave a G test on -8 degrees of freedom
// and rates of about 1,227 a year for generator rows with no data. The
// test is skipped with its reason, and rows without data carry no rate.
func TestEstimateRowsWithoutData(t *testing.T) {
	p, _ := readPanel(t, "dates2.csv")
	if len(p.Transitions) != 3 {
		t.Fatalf("dates2.csv gives %d transitions, want 3", len(p.Transitions))
	}
	for _, st := range []Structure{AnyChange, DeteriorationOnly, OneStep} {
		f, err := Estimate(context.Background(), p, FitOptions{States: 5, PeriodYears: 1, Actions: pumpActions,
			Method: Generator, Structure: st, Bootstrap: 20, Seed: 1})
		if err != nil {
			t.Fatalf("structure %d: %v", st, err)
		}
		// 12 degrees of freedom in the grouped counts (3 groups of 5 end
		// states), against 20 free rates of any change.
		g := f.Fit
		if skip := st == AnyChange; g.DF < 0 || (g.Skipped != "") != skip || (g.DF == 0) != skip || math.IsNaN(g.PValue) != skip {
			t.Errorf("structure %d: goodness of fit %+v, want skipped = %v, with a reason", st, g, skip)
		}
		if f.Generator[0] == nil {
			t.Errorf("structure %d: no generator row for sound, which has 3 intervals", st)
		}
		for s := 1; s < 5; s++ {
			if f.Generator[s] != nil || f.Rows[0][s] != nil {
				t.Errorf("structure %d: state %d has no data but rates %v, row %v", st, s, f.Generator[s], f.Rows[0][s])
			}
		}
	}
}

// The degrees of freedom of the G test are never negative, and a test on
// 0 degrees of freedom is skipped with a reason, for small random panels
// under every method and structure.
func TestGoodnessDegreesOfFreedom(t *testing.T) {
	rng := rand.New(rand.NewPCG(4, 4))
	for trial := range 40 {
		p := simulatePanel(rng, trueQ, 1+rng.IntN(3), 2+rng.IntN(3), func() int { return 200 + rng.IntN(400) })
		for _, m := range []FitMethod{Counting, Generator} {
			o := genOpts(4, 0)
			o.Method, o.Structure = m, Structure(trial%3)
			if m == Counting {
				o.PeriodYears = 1.0 / 2 // nearly every interval counts
				for i := range p.Transitions {
					p.Transitions[i].Days = 183
				}
			}
			f, err := Estimate(context.Background(), p, o)
			if err != nil {
				t.Fatalf("trial %d, %v: %v", trial, m, err)
			}
			if g := f.Fit; g.DF < 0 || (g.DF == 0) != (g.Skipped != "") || (g.DF > 0) == math.IsNaN(g.PValue) {
				t.Errorf("trial %d, %v, structure %d: goodness of fit %+v", trial, m, o.Structure, g)
			}
		}
	}
}

// testdata/one_unit.csv (8,000 records of one unit) once gave 90%
// intervals of zero width with no warning. The bootstrap resamples units,
// so with fewer than MinBootstrapUnits units the fit says the intervals
// mean little; with enough units it does not.
func TestEstimateFewUnits(t *testing.T) {
	p, _ := readPanel(t, "one_unit.csv")
	f, err := Estimate(context.Background(), p, FitOptions{States: 5, PeriodYears: 1, Actions: pumpActions, Bootstrap: 20, Seed: 1, Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	if f.Units != 1 {
		t.Errorf("Units = %d, want 1", f.Units)
	}
	want := "come from 1 unit, fewer than " + strconv.Itoa(MinBootstrapUnits)
	if !hasWarning(f.Warnings, want) {
		t.Errorf("one unit: warnings %v lack %q", f.Warnings, want)
	}
	// The fact behind the warning: every replicate is the same data.
	if r := f.Rows[0][0]; !(r.Upper[0]-r.Lower[0] < 1e-12) {
		t.Errorf("one unit: interval [%g, %g] has width, want none", r.Lower[0], r.Upper[0])
	}
	if f, err := Estimate(context.Background(), p, FitOptions{States: 5, PeriodYears: 1, Actions: pumpActions}); err != nil || hasWarning(f.Warnings, "resample units") {
		t.Errorf("no bootstrap: err %v, warnings %v; want no warning about the bootstrap", err, f.Warnings)
	}
	rng := rand.New(rand.NewPCG(6, 6))
	many := simulatePanel(rng, trueQ, MinBootstrapUnits, 4, func() int { return 365 })
	f, err = Estimate(context.Background(), many, FitOptions{States: 4, PeriodYears: 365 / DaysPerYear, Actions: []string{"leave"}, Bootstrap: 20, Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	if f.Units != MinBootstrapUnits || hasWarning(f.Warnings, "resample units") {
		t.Errorf("%d units: Units %d, warnings %v; want no warning about the bootstrap", MinBootstrapUnits, f.Units, f.Warnings)
	}
}

func hasWarning(warn []Warning, text string) bool {
	for _, w := range warn {
		if strings.Contains(w.Message, text) {
			return true
		}
	}
	return false
}

// When nothing is usable, Estimate says so with a typed error that carries
// the problems it found, summarised.
func TestEstimateInsufficientData(t *testing.T) {
	p := &Panel{Units: []string{"a"}}
	for i := range 40 {
		p.Transitions = append(p.Transitions, Transition{From: 0, To: 1, Days: 152, End: 152 * (i + 1), Line: i + 2})
	}
	_, err := Estimate(context.Background(), p, FitOptions{States: 2, PeriodYears: 1, Actions: []string{"leave"}, Method: Counting})
	var short *InsufficientDataError
	if !errors.As(err, &short) || !strings.Contains(err.Error(), "no usable transitions") {
		t.Fatalf("err = %v, want an *InsufficientDataError", err)
	}
	if len(short.Warnings) != 1 || !strings.Contains(short.Warnings[0].Message, "40 intervals are more than 10% away from one period (365 days) and are left out of the counting estimate: line 2 (152 days)") {
		t.Errorf("warnings %v, want one summary of the 40 intervals left out", short.Warnings)
	}
	p.Transitions = p.Transitions[:1]
	p.Transitions[0].Action = 1
	_, err = Estimate(context.Background(), p, FitOptions{States: 2, PeriodYears: 1, Actions: []string{"leave", "work"}, Method: Generator})
	if !errors.As(err, &short) || !strings.Contains(err.Error(), "no intervals without recorded work") {
		t.Errorf("generator with no passive interval: err = %v, want an *InsufficientDataError", err)
	}
}

// A bootstrap replicate that cannot be fitted (two units, one only ever
// replaced: a resample may draw no interval without recorded work) gives
// one plain error for all such replicates, not a data error about the
// records, which do support the fit itself.
func TestEstimateBootstrapFailure(t *testing.T) {
	p := &Panel{Units: []string{"left", "replaced"}}
	for i := range 10 {
		p.Transitions = append(p.Transitions,
			Transition{Unit: 0, From: 0, To: i % 2, Days: 300, End: 300 * (i + 1), Line: 2 + i},
			Transition{Unit: 1, From: 1, To: 0, Days: 300, End: 300 * (i + 1), Action: 1, Line: 20 + i})
	}
	o := FitOptions{States: 2, PeriodYears: 1, Actions: []string{"leave", "replace"}, Method: Generator}
	if _, err := Estimate(context.Background(), p, o); err != nil {
		t.Fatalf("without bootstrap: %v", err)
	}
	o.Bootstrap, o.Seed = 40, 1
	_, err := Estimate(context.Background(), p, o)
	var short *InsufficientDataError
	if err == nil || errors.As(err, &short) || !strings.Contains(err.Error(), "replicates could not be fitted") || strings.Count(err.Error(), "condition:") != 1 {
		t.Errorf("bootstrap of 2 units: err = %v, want one plain error for the failed replicates", err)
	}
}
