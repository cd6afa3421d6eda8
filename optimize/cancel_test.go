package optimize

import (
	"context"
	"errors"
	"fmt"
	"math/rand/v2"
	"sync/atomic"
	"testing"
	"time"

	"fixpoint/costs"
)

// countdown is a context that reports context.Canceled from the after-th
// call of Err on, and counts the calls. Cancelling at every checkpoint in
// turn shows that each one stops the work and returns the cancellation,
// with no timing in the test.
type countdown struct {
	after, calls atomic.Int64
}

func newCountdown(after int64) *countdown {
	c := &countdown{}
	c.after.Store(after)
	return c
}

func (c *countdown) Deadline() (time.Time, bool) { return time.Time{}, false }
func (c *countdown) Done() <-chan struct{}       { return nil }
func (c *countdown) Value(any) any               { return nil }
func (c *countdown) Err() error {
	if c.calls.Add(1) >= c.after.Load() {
		return context.Canceled
	}
	return nil
}

// cancelEverywhere runs f once to count its ctx checks, then once with the
// cancellation at each of up to 60 checks spread over the run, and wants
// context.Canceled every time, with at most extra checks after the first
// cancelled one (work between checks is bounded by the function's doc).
func cancelEverywhere(t *testing.T, name string, f func(ctx context.Context) error) {
	t.Helper()
	probe := newCountdown(1 << 62)
	if err := f(probe); err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	total := probe.calls.Load()
	if total < 2 {
		t.Fatalf("%s: ctx checked %d times", name, total)
	}
	step := max(1, total/60)
	for at := int64(1); at <= total; at += step {
		c := newCountdown(at)
		err := f(c)
		if !errors.Is(err, context.Canceled) {
			t.Errorf("%s cancelled at check %d of %d: err = %v, want context.Canceled", name, at, total, err)
		}
		// A cancelled check returns at once: a few checks on the way out
		// (each caller re-checks), never the rest of the run.
		if extra := c.calls.Load() - at; extra > 8 {
			t.Errorf("%s cancelled at check %d of %d: %d more checks before returning", name, at, total, extra)
		}
	}
}

func TestCancellation(t *testing.T) {
	rng := rand.New(rand.NewPCG(51, 52))
	p := randomProblem(rng, 12, 3, 6, 0.9, 100)
	period, err := costs.NewPeriod(1)
	if err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		name string
		f    func(ctx context.Context) error
	}{
		{"DiscountPath", func(ctx context.Context) error {
			_, _, err := DiscountPath(ctx, p, 0.3, 0.99, nil)
			return err
		}},
		{"CompareRates", func(ctx context.Context) error {
			_, err := CompareRates(ctx, p, period, []float64{0, 0.02, 0.1, 0.5}, 7, nil)
			return err
		}},
		{"SolveAverage", func(ctx context.Context) error {
			_, err := SolveAverage(ctx, p, nil)
			return err
		}},
		{"CostRanges", func(ctx context.Context) error {
			r, err := Solve(context.Background(), p, nil)
			if err != nil {
				return err
			}
			groups := make([][]Pair, 0, len(p.States))
			for s := range p.States {
				groups = append(groups, []Pair{{s, r.Policy[s]}})
			}
			_, err = CostRanges(ctx, p, r, groups)
			return err
		}},
	}
	for _, m := range methods {
		tests = append(tests, struct {
			name string
			f    func(ctx context.Context) error
		}{"Solve/" + m.String(), func(ctx context.Context) error {
			_, err := Solve(ctx, p, &Settings{Method: m, Tol: 1e-9})
			return err
		}})
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) { cancelEverywhere(t, tc.name, tc.f) })
	}
}

// Cancelling from a progress callback, as an interrupt handler would mid-
// run, stops CompareRates with context.Canceled.
func TestCompareRatesCancelledFromProgress(t *testing.T) {
	p := randomProblem(rand.New(rand.NewPCG(53, 54)), 15, 3, 6, 0.9, 100)
	period, err := costs.NewPeriod(1)
	if err != nil {
		t.Fatal(err)
	}
	for _, after := range []int{1, 3, 10} {
		t.Run(fmt.Sprint(after), func(t *testing.T) {
			ctx, cancel := context.WithCancel(context.Background())
			defer cancel()
			calls := 0
			s := &Settings{Progress: func(Progress) {
				if calls++; calls == after {
					cancel()
				}
			}}
			if _, err := CompareRates(ctx, p, period, []float64{0.01, 0.03, 0.08}, 9, s); !errors.Is(err, context.Canceled) {
				t.Errorf("CompareRates cancelled at progress call %d: err = %v, want context.Canceled", after, err)
			}
		})
	}
}

// The long phases check ctx at least once per unit of their dominant
// work: DiscountPath once per LU factorisation (n+1 per segment searched),
// value iteration once per sweep; so cancellation is seen within one LU or
// one sweep, however large the model.
func TestCancellationCheckDensity(t *testing.T) {
	p := randomProblem(rand.New(rand.NewPCG(55, 56)), 40, 3, 5, 0.9, 100)
	c := newCountdown(1 << 62)
	segs, _, err := DiscountPath(c, p, 0.3, 0.99, nil)
	if err != nil {
		t.Fatal(err)
	}
	if want := int64(len(segs) * (len(p.States) + 1)); c.calls.Load() < want {
		t.Errorf("DiscountPath: %d ctx checks for %d segments of %d states, want at least %d", c.calls.Load(), len(segs), len(p.States), want)
	}
	c = newCountdown(1 << 62)
	r, err := Solve(c, p, &Settings{Method: ValueIteration, Tol: 1e-9})
	if err != nil {
		t.Fatal(err)
	}
	if c.calls.Load() < int64(r.Iterations) {
		t.Errorf("value iteration: %d ctx checks for %d sweeps, want one per sweep", c.calls.Load(), r.Iterations)
	}
}
