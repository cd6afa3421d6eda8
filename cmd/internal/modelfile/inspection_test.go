package modelfile

import (
	"context"
	"errors"
	"fmt"
	"strconv"
	"strings"
	"testing"

	"fixpoint/optimize/inspect"
)

const demoRelief = "../../../configs/relief-valves.yaml"

// FuzzDecodeInspection: any class config with an inspection block gives
// either a clean error or a class whose block builds into a valid
// inspection problem; never a panic, never a block that Build refuses.
func FuzzDecodeInspection(f *testing.F) {
	seedFiles(f, demoRelief)
	f.Add([]byte("version: 1\ncurrency: EUR\nperiod_years: 1\ndiscount: {rate: 4%}\nstates: [a, {name: b, unsafe: true}]\n" +
		"actions:\n  - {name: leave, passive: true, transitions: {a: {a: 0.9, b: 0.1}}}\n  - {name: fix, cost: 5, matrix: [[1, 0], [1, 0]]}\n" +
		"inspection: {cost: 1, intervals: [1, 3], hidden: [b], risk_cost: {b: 2}, max_interval_years: 2}\n"))
	f.Add([]byte("version: 1\ninspection: {intervals: [&x 1, *x], hidden: [a, a]}\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		file, err := Decode(context.Background(), "fuzz.yaml", data, Options{})
		if err != nil || file.Class == nil || file.Class.Inspection == nil {
			return
		}
		c := file.Class
		p, err := inspect.Build(context.Background(), c.Model, c.Costs, c.Discount.Factor(), &c.Inspection.Plan)
		if err != nil {
			t.Fatalf("decoded inspection block does not build: %v", err)
		}
		if err := p.Validate(); err != nil {
			t.Fatalf("built inspection problem is invalid: %v", err)
		}
	})
}

// A block too large to build is refused before it is built, at its
// intervals.
func TestInspectionTooLarge(t *testing.T) {
	const head = "version: 1\ncurrency: EUR\nperiod_years: 1\ndiscount: {rate: 4%}\nstates: [a, {name: b, unsafe: true}]\n" +
		"actions:\n  - {name: leave, passive: true, transitions: {a: {a: 0.9, b: 0.1}}}\n  - {name: fix, cost: 5, matrix: [[1, 0], [1, 0]]}\n"
	for _, tc := range []struct {
		name, block string
		ok          bool
	}{
		{"small", "inspection: {cost: 1, intervals: [1, 2, 10000], max_interval_years: 10000}\n", true},
		{"over the interval count", "inspection: {cost: 1, intervals: [" + seq(101) + "], max_interval_years: 200}\n", false},
		{"long walks on a dense scale", "dense", false},
		{"short walks on a dense scale", "dense short", true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			data := head + tc.block
			switch tc.block {
			case "dense":
				data = denseClass(64) + "inspection: {cost: 1, intervals: [1, 10000], max_interval_years: 100}\n"
			case "dense short":
				data = denseClass(64) + "inspection: {cost: 1, intervals: [1, 100], max_interval_years: 100}\n"
			}
			file, err := Decode(context.Background(), "big.yaml", []byte(data), Options{})
			var f *Fault
			switch {
			case tc.ok && (err != nil || file.Class.Inspection == nil):
				t.Errorf("Decode(%q): %v, want a block", tc.name, err)
			case !tc.ok && (!errors.As(err, &f) || f.Path != "inspection.intervals"):
				t.Errorf("Decode(%q): %v, want a fault at inspection.intervals", tc.name, err)
			}
		})
	}
}

// seq lists 1..n.
func seq(n int) string {
	parts := make([]string, n)
	for i := range parts {
		parts[i] = strconv.Itoa(i + 1)
	}
	return strings.Join(parts, ", ")
}

// denseClass is a class of n states, the last unsafe, whose passive rows
// are dense: the walks of a long interval cost n² steps per period.
func denseClass(n int) string {
	var b strings.Builder
	b.WriteString("version: 1\ncurrency: EUR\nperiod_years: 0.01\ndiscount: {rate: 4%}\nstates:\n")
	for s := range n - 1 {
		fmt.Fprintf(&b, "  - s%d\n", s)
	}
	fmt.Fprintf(&b, "  - {name: s%d, unsafe: true}\nactions:\n  - name: leave\n    passive: true\n    matrix:\n", n-1)
	row := "[" + strings.TrimSuffix(strings.Repeat(strconv.FormatFloat(1/float64(n), 'g', -1, 64)+", ", n), ", ") + "]"
	for range n - 1 {
		b.WriteString("      - " + row + "\n")
	}
	b.WriteString("      - \"-\"\n  - name: renew\n    cost: 5\n    matrix:\n")
	for range n {
		b.WriteString("      - [1" + strings.Repeat(", 0", n-1) + "]\n")
	}
	return b.String()
}

// A hidden or risk_cost entry naming no state does not hide the faults of
// meaning of the other entries: every problem is listed at once.
func TestInspectionListsEveryFault(t *testing.T) {
	const head = "version: 1\ncurrency: EUR\nperiod_years: 1\ndiscount: {rate: 4%}\nstates: [a, w, {name: b, unsafe: true}]\n" +
		"actions:\n  - {name: leave, passive: true, transitions: {a: {a: 0.9, w: 0.1}, w: {w: 0.9, b: 0.1}}}\n  - {name: fix, cost: 5, matrix: [[1, 0, 0], [1, 0, 0], [1, 0, 0]]}\n"
	data := head + "inspection: {cost: 1, intervals: [1, 2], hidden: [a, nope], risk_cost: {w: 5, zz: 1}, max_interval_years: 2}\n"
	_, err := Decode(context.Background(), "c.yaml", []byte(data), Options{})
	if err == nil {
		t.Fatal("want faults")
	}
	for _, want := range []string{"inspection.hidden[1]: unknown state \"nope\"", "inspection.hidden[0]: state \"a\" is not unsafe",
		"inspection.risk_cost.zz: unknown state \"zz\"", "inspection.risk_cost.w: state \"w\" has a risk cost but is not a hidden failure"} {
		if !strings.Contains(err.Error(), want) {
			t.Errorf("faults lack %q:\n%v", want, err)
		}
	}
}
