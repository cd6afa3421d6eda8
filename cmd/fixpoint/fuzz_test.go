package main

import (
	"bytes"
	"math"
	"os"
	"testing"

	"fixpoint/optimize"
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
	seedFiles(f, demo, "starter.yaml", "testdata/accents.yaml")
	f.Add([]byte(base))
	f.Add([]byte("version: 1\nstates: &a [*a]\n"))
	f.Add([]byte("a: &x [1,2]\nb: [*x, *x, *x]\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		c, err := decodeClass("fuzz.yaml", bytes.NewReader(data))
		if err != nil {
			return
		}
		g := 0.5
		if c.HasRate || c.HasFactor {
			if g, err = c.DiscountFactor(); err != nil {
				t.Fatalf("decoded class has a bad discount: %v", err)
			}
		}
		p, err := optimize.Build(c.Model, c.Costs, g)
		if err != nil {
			t.Fatalf("decoded class does not build: %v", err)
		}
		if err := p.Validate(!c.Average); err != nil {
			t.Fatalf("built problem is invalid: %v", err)
		}
	})
}

// FuzzDecodeModel: class, system and fleet files (a fleet's classes and
// inventory are read relative to this package) give a clean error or a
// model that validates.
func FuzzDecodeModel(f *testing.F) {
	seedFiles(f, demo, demoSystem, "testdata/fuzz-fleet.yaml")
	f.Add([]byte("version: 1\nkind: system\ncomponents: []\n"))
	f.Add([]byte("version: 1\nclasses: {a: ../../configs/valves.yaml}\ninventory: x.csv\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		m, err := decodeModel("fuzz.yaml", bytes.NewReader(data), decodeOptions{Renormalize: len(data)%2 == 0}, nil)
		if err != nil {
			return
		}
		switch {
		case m.System != nil:
			sys, err := m.System.system()
			if err != nil {
				t.Fatalf("decoded system has a bad discount or is invalid: %v", err)
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
	seedFiles(f, "../../configs/east-zone-inventory.csv")
	f.Add([]byte("unit,class,condition\nA,pumps,sound\nA,pumps,sound\n"))
	f.Add([]byte("class,condition,unit\nvalves,seized,\"x\ny\"\n"))
	pumps, valves := readClass(f, "../../configs/pumps.yaml"), readClass(f, "../../configs/valves.yaml")
	names, classes := []string{"pumps", "valves"}, []*classFile{pumps, valves}
	f.Fuzz(func(t *testing.T, data []byte) {
		inv, err := decodeInventory("inv.csv", bytes.NewReader(data), names, classes, 1000)
		if err != nil {
			return
		}
		total := 0.0
		for _, row := range inv.counts {
			for _, x := range row {
				total += x
			}
		}
		if int(total) != inv.units || inv.units == 0 {
			t.Fatalf("%g units counted, %d read", total, inv.units)
		}
	})
}
