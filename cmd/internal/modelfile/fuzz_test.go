package modelfile

import (
	"context"
	"math"
	"os"
	"strings"
	"testing"

	"fixpoint/optimize"
	"fixpoint/optimize/robust"
)

// uncertaintySeed is a small class config to which the seeds of the
// uncertainty block are appended.
const uncertaintySeed = `version: 1
name: seed
currency: EUR
period_years: 1
discount: {rate: 0.05}
states:
  - good
  - worn
  - {name: failed, unsafe: true}
actions:
  - name: leave
    passive: true
    transitions:
      good: {good: 0.8, worn: 0.2}
      worn: {worn: 0.7, failed: 0.3}
  - name: replace
    cost: 1000
    matrix: [[1, 0, 0], [1, 0, 0], [1, 0, 0]]
`

const (
	demo       = "../../../configs/pumps.yaml"
	demoSystem = "../../../configs/crane.yaml"
)

func seedFiles(f *testing.F, paths ...string) {
	for _, path := range paths {
		data, err := os.ReadFile(path)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(data)
	}
}

// FuzzDecodeClass: any input gives either a clean error or a class whose
// model builds into a valid Problem; never a panic.
func FuzzDecodeClass(f *testing.F) {
	seedFiles(f, demo, "../starters/files/class.yaml", "../starters/files/system.yaml", "testdata/accents.yaml")
	f.Add([]byte("version: 1\nstates: &a [*a]\n"))
	f.Add([]byte("a: &x [1,2]\nb: [*x, *x, *x]\n"))
	// The uncertainty block: observations with a confidence and widened
	// rows, and radii per row.
	f.Add([]byte(uncertaintySeed + "uncertainty:\n  set: kl\n  confidence: 90%\n  no_data: refuse\n  observations:\n    leave: {good: 50, worn: 30}\n" +
		"  widen:\n    leave: {good: [failed]}\n"))
	f.Add([]byte(uncertaintySeed + "uncertainty:\n  radius: {leave: {good: 0.1, worn: 2}, replace: 0}\n  widen: {replace: {worn: [worn, good]}}\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		file, err := Decode(context.Background(), "fuzz.yaml", data, Options{})
		if err != nil || file.Class == nil {
			return
		}
		c := file.Class
		p, err := optimize.Build(c.Model, c.Costs, c.Discount.Factor())
		if err != nil {
			t.Fatalf("decoded class does not build: %v", err)
		}
		if err := p.Validate(c.Criterion != Average); err != nil {
			t.Fatalf("built problem is invalid: %v", err)
		}
		// A decoded uncertainty block always gives valid sets (a row
		// without observations is refused only when no_data says so).
		u := c.Uncertainty
		if u == nil || c.Criterion == Average {
			return
		}
		switch {
		case u.HasConfidence:
			_, err = robust.FromCounts(p, u.Set, u.Confidence, u.Observations, u.Options())
			if u.NoData == robust.Refuse {
				err = nil
			}
		case u.HasRadius:
			_, err = robust.Uniform(p, u.Set, u.Radius, u.Options())
		case u.Radii != nil:
			_, err = robust.PerRow(p, u.Set, u.Radii, u.Options())
		}
		if err != nil {
			t.Fatalf("decoded uncertainty block gives no sets: %v", err)
		}
	})
}

// FuzzDecodeModel: class, system and fleet files (a fleet's classes and
// inventory are read relative to this package) give a clean error or a
// model that validates.
func FuzzDecodeModel(f *testing.F) {
	seedFiles(f, demo, demoSystem, "testdata/fuzz-fleet.yaml")
	f.Add([]byte("version: 1\nkind: system\ncomponents: []\n"))
	f.Add([]byte("version: 1\nclasses: {a: ../../../configs/valves.yaml}\ninventory: x.csv\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		m, err := Decode(context.Background(), "fuzz.yaml", data, Options{Renormalize: len(data)%2 == 0})
		if err != nil {
			return
		}
		switch {
		case m.System != nil:
			sys, err := m.System.Machine()
			if err != nil {
				if m.System.Discount.IsZero() {
					return
				}
				t.Fatalf("decoded system is invalid: %v", err)
			}
			if n, a := sys.Size(); !(n >= 1) || !(a >= 1) || math.IsInf(n, 0) {
				t.Fatalf("size %g × %g", n, a)
			}
		case m.Fleet != nil:
			ff := m.Fleet
			if len(ff.Classes) == 0 || ff.Units == 0 || len(ff.Counts) != len(ff.Classes) {
				t.Fatalf("fleet without classes or units: %+v", ff)
			}
		case m.Class != nil:
			if err := m.Class.Model.Validate(); err != nil {
				t.Fatalf("decoded class is invalid: %v", err)
			}
		}
	})
}

// FuzzDecodeInventory: any CSV gives a clean error or counts that match
// the units read.
func FuzzDecodeInventory(f *testing.F) {
	seedFiles(f, "../../../configs/east-zone-inventory.csv")
	f.Add([]byte("unit,class,condition\nA,pumps,sound\nA,pumps,sound\n"))
	f.Add([]byte("class,condition,unit\nvalves,seized,\"x\ny\"\n"))
	pumps, valves := readClass(f, demo), readClass(f, "../../../configs/valves.yaml")
	f.Fuzz(func(t *testing.T, data []byte) {
		ff := &Fleet{Names: []string{"pumps", "valves"}, Classes: []*Class{pumps, valves}}
		if err := ff.decodeInventory(context.Background(), "inv.csv", data); err != nil {
			return
		}
		total := 0.0
		for _, row := range ff.Counts {
			for _, x := range row {
				total += x
			}
		}
		if int(total) != ff.Units || ff.Units == 0 {
			t.Fatalf("%g units counted, %d read", total, ff.Units)
		}
	})
}

// readClass loads a class config for tests.
func readClass(tb testing.TB, path string) *Class {
	tb.Helper()
	f, err := Load(context.Background(), path, Options{})
	if err != nil {
		tb.Fatal(err)
	}
	if f.Class == nil {
		tb.Fatalf("%s is a %s", path, f.Kind)
	}
	return f.Class
}

// An inventory with more units than the limit gets a clear message.
func TestInventoryUnitLimit(t *testing.T) {
	pumps := readClass(t, demo)
	ff := &Fleet{Names: []string{"pumps"}, Classes: []*Class{pumps}, Units: MaxUnits - 5}
	inv := "unit,class,condition\n"
	for i := range 6 {
		inv += "u" + string(rune('a'+i)) + ",pumps,sound\n"
	}
	if err := ff.decodeInventory(context.Background(), "inv.csv", []byte(inv)); err == nil || !strings.Contains(err.Error(), "inv.csv:7: more than 5000000 units") {
		t.Errorf("units: %v", err)
	}
}
