package system

import (
	"context"
	"errors"
	"math/rand/v2"
	"runtime"
	"strings"
	"testing"

	"fixpoint/optimize"
)

// The sweep bounds of Estimate hold: Solve from SeparateStart's values
// and from zero, and EvaluateProduct, never take more sweeps than
// Estimate says (the bound follows from the span contraction by γ,
// Puterman 1994, Theorem 6.6.2; the solver is the independent check).
func TestEstimateBoundsSweeps(t *testing.T) {
	rng := rand.New(rand.NewPCG(91, 92))
	machines := []*Machine{stairMachine(3, 5, 3), stairMachine(2, 30, 2), randomMachine(rng, 3, 4, 3, 400, 1000),
		randomMachine(rng, 2, 5, 2, 0, 0), randomMachine(rng, 4, 3, 2, 2000, 0)}
	ctx := context.Background()
	for i, sys := range machines {
		for _, tol := range []float64{1e-6, 1e-3, 10} {
			set := &Settings{Tol: tol, Workers: 2}
			est, err := sys.Estimate(set)
			if err != nil {
				t.Fatal(err)
			}
			sp := separate(t, sys)
			warm, err := Solve(ctx, sys, &Settings{Tol: tol, Workers: 2, Start: sp.start})
			if err != nil {
				t.Fatal(err)
			}
			cold, err := Solve(ctx, sys, set)
			if err != nil {
				t.Fatal(err)
			}
			ev, err := sys.EvaluateProduct(ctx, sp.pols, sp.start, tol)
			if err != nil {
				t.Fatal(err)
			}
			for _, c := range []struct {
				name       string
				got, bound int
			}{{"Solve from SeparateStart", warm.Sweeps, est.Sweeps}, {"Solve from zero", cold.Sweeps, est.ColdSweeps},
				{"EvaluateProduct", ev.Sweeps, est.EvaluateSweeps}} {
				if c.got > c.bound {
					t.Errorf("machine %d, tol %g: %s took %d sweeps, Estimate bounds it by %d", i, tol, c.name, c.got, c.bound)
				}
			}
		}
	}
}

// Estimate.Bytes bounds what the solve pipeline allocates (Go's own count,
// runtime.MemStats.TotalAlloc), and its joint-size terms are exact up to
// the small tables: apart from the components' own solves (Separate,
// measured on its own and covered by RuntimeBytes), the pipeline
// allocates between 90% of the joint-size terms and those terms plus
// 128 KiB. A term left out (64 bytes a state for EvaluateProduct is
// 256 KiB here) fails.
func TestEstimateBoundsMemory(t *testing.T) {
	ctx := context.Background()
	allocated := func(f func()) float64 {
		var before, after runtime.MemStats
		runtime.ReadMemStats(&before)
		f()
		runtime.ReadMemStats(&after)
		return float64(after.TotalAlloc - before.TotalAlloc)
	}
	for _, tt := range []struct {
		name    string
		sys     *Machine
		workers int
	}{
		{"2x64x2", stairMachine(2, 64, 2), 1},
		{"2x64x2", stairMachine(2, 64, 2), 2},
		{"3x20x2", stairMachine(3, 20, 2), 3},
	} {
		est, err := tt.sys.Estimate(&Settings{Workers: tt.workers})
		if err != nil {
			t.Fatal(err)
		}
		components := allocated(func() {
			if _, err := tt.sys.Separate(ctx); err != nil {
				t.Fatal(err)
			}
		})
		alloc := allocated(func() {
			sp := separate(t, tt.sys)
			if _, err := Solve(ctx, tt.sys, &Settings{Workers: tt.workers, Start: sp.start, MaxSweeps: 1}); err != nil {
				t.Fatal(err)
			}
			if _, err := tt.sys.EvaluateProduct(ctx, sp.pols, sp.start, 1); err != nil {
				t.Fatal(err)
			}
		})
		joint := est.Bytes - RuntimeBytes
		if alloc > est.Bytes {
			t.Errorf("Estimate(%s, %d workers): bound %.0f bytes, the pipeline allocated %.0f", tt.name, tt.workers, est.Bytes, alloc)
		}
		slack := float64(128 << 10)
		if raceEnabled {
			slack += 32 << 10 // the detector's own allocations per goroutine
		}
		if rest := alloc - components; rest > joint+slack || rest < 0.9*joint {
			t.Errorf("Estimate(%s, %d workers): joint-size terms %.0f bytes, the pipeline allocated %.0f besides the components' solves; want between 90%% of the terms and the terms + %.0f KiB",
				tt.name, tt.workers, joint, rest, slack/1024)
		}
		if components > RuntimeBytes/4 {
			t.Errorf("Estimate(%s, %d workers): the components' solves allocated %.0f bytes, want at most a quarter of RuntimeBytes", tt.name, tt.workers, components)
		}
	}
}

// Check returns a *LimitError naming the limit passed, and nil within
// the limits; a zero limit is not checked.
func TestEstimateCheck(t *testing.T) {
	est := Estimate{States: 1e6, Actions: 6e4, Workers: 2, Bytes: 3 << 30, Seconds: 7200, Sweeps: 400}
	tests := []struct {
		name                 string
		maxBytes, maxSeconds float64
		want                 string // "" for nil
	}{
		{"within", 4 << 30, 3 * 3600, ""},
		{"no limits", 0, 0, ""},
		{"memory", 2 << 30, 0, "memory limit 2.0 GiB"},
		{"time", 0, 3600, "time limit 1.0 h"},
		{"both", 1 << 30, 60, "memory limit 1.0 GiB and time limit 1.0 min"},
	}
	for _, tt := range tests {
		err := est.Check(tt.maxBytes, tt.maxSeconds)
		if tt.want == "" {
			if err != nil {
				t.Errorf("Check(%q) = %v, want nil", tt.name, err)
			}
			continue
		}
		var le *LimitError
		if !errors.As(err, &le) || le.Estimate != est || !strings.Contains(err.Error(), tt.want) || !strings.HasPrefix(err.Error(), "system: ") {
			t.Errorf("Check(%q) = %v, want a *LimitError mentioning %q", tt.name, err, tt.want)
		}
	}
}

// Estimate refuses an invalid machine with Validate's faults, and grows
// with the workers only in memory.
func TestEstimateShape(t *testing.T) {
	var f *Fault
	if _, err := (&Machine{}).Estimate(nil); !errors.As(err, &f) {
		t.Errorf("Estimate(empty machine) error %v, want a *Fault", err)
	}
	sys := stairMachine(5, 4, 3)
	one, err := sys.Estimate(&Settings{Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	two, err := sys.Estimate(&Settings{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	n := one.States
	if d, want := two.Bytes-one.Bytes, n*sweepStateBytes(5); d != want {
		t.Errorf("Estimate(5x4x3): a second worker adds %g bytes, want %g", d, want)
	}
	if one.Sweeps != two.Sweeps || one.Sweeps < 2 || one.Sweeps > optimize.DefaultValueSweeps+1 {
		t.Errorf("Estimate(5x4x3): sweeps %d and %d for 1 and 2 workers, want equal and in [2, cap+1]", one.Sweeps, two.Sweeps)
	}
}
