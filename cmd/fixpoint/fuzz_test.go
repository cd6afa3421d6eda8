package main

import (
	"bytes"
	"os"
	"testing"

	"fixpoint/optimize"
)

// FuzzDecodeClass: any input gives either a clean error or a class whose
// model builds into a valid Problem; never a panic.
func FuzzDecodeClass(f *testing.F) {
	for _, path := range []string{demo, "starter.yaml"} {
		data, err := os.ReadFile(path)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(data)
	}
	f.Add([]byte(base))
	f.Add([]byte("version: 1\nstates: &a [*a]\n"))
	f.Add([]byte("a: &x [1,2]\nb: [*x, *x, *x]\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		c, err := decodeClass("fuzz.yaml", bytes.NewReader(data))
		if err != nil {
			return
		}
		g, err := c.DiscountFactor()
		if err != nil {
			t.Fatalf("decoded class has no discount factor: %v", err)
		}
		p, err := optimize.Build(c.Model, c.Costs, g)
		if err != nil {
			t.Fatalf("decoded class does not build: %v", err)
		}
		if err := p.Validate(true); err != nil {
			t.Fatalf("built problem is invalid: %v", err)
		}
	})
}
