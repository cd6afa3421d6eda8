package system

import (
	"context"
	"errors"
	"math"
	"math/rand/v2"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"fixpoint/optimize"
)

// countingContext counts the looks at its Err and is cancelled at look
// number cancelAt (never when cancelAt is 0). It makes cancellation in the
// middle of a sweep deterministic: no clock, no sleeps.
type countingContext struct {
	looks    atomic.Int64
	cancelAt int64
	once     sync.Once
	done     chan struct{}
}

func newCountingContext(cancelAt int64) *countingContext {
	return &countingContext{cancelAt: cancelAt, done: make(chan struct{})}
}

func (c *countingContext) Deadline() (time.Time, bool) { return time.Time{}, false }
func (c *countingContext) Done() <-chan struct{}       { return c.done }
func (c *countingContext) Value(any) any               { return nil }
func (c *countingContext) Err() error {
	if n := c.looks.Add(1); c.cancelAt > 0 && n >= c.cancelAt {
		c.once.Do(func() { close(c.done) })
		return context.Canceled
	}
	return nil
}

// A machine whose sweep makes 4096 · 64 = 2^18 leaf updates.
func pollMachine() *Machine {
	return randomMachine(rand.New(rand.NewPCG(81, 82)), 6, 4, 2, 150, 300)
}

// Every function that loops over joint states returns context.Canceled at
// once for a context cancelled before the call.
func TestCancelledBeforeTheCall(t *testing.T) {
	sys := pollMachine()
	sp := separate(t, sys)
	sep, pols := sp.sep, sp.pols
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	calls := []struct {
		name string
		call func() error
	}{
		{"Solve", func() error { _, err := Solve(ctx, sys, nil); return err }},
		{"Separate", func() error { _, err := sys.Separate(ctx); return err }},
		{"SeparateStart", func() error { _, err := sys.SeparateStart(ctx, sep); return err }},
		{"EvaluateProduct", func() error { _, err := sys.EvaluateProduct(ctx, pols, nil, 1e-6); return err }},
		{"Flatten", func() error { _, err := sys.Flatten(ctx, 1<<20); return err }},
	}
	for _, c := range calls {
		if err := c.call(); !errors.Is(err, context.Canceled) {
			t.Errorf("%s(cancelled context) error %v, want context.Canceled", c.name, err)
		}
	}
}

// A cancel from the progress callback ends Solve before the next sweep.
func TestCancelFromProgress(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	calls := 0
	_, err := Solve(ctx, pollMachine(), &Settings{Tol: 1e-12, Progress: func(optimize.Progress) {
		calls++
		cancel()
	}})
	if !errors.Is(err, context.Canceled) || calls != 1 {
		t.Errorf("Solve(cancel in progress): error %v after %d progress calls, want context.Canceled after 1", err, calls)
	}
}

// The sweep looks at its context at least once per 2^15 joint-state
// updates, a few hundred µs of work (so a cancel is seen within
// milliseconds on any size), and once it sees a cancel every worker stops
// at its next look.
func TestSweepLooksAtContextOften(t *testing.T) {
	sys := pollMachine()
	n, acts := sys.Size()
	leafUpdates := n * acts // one offer per joint state and joint action
	for _, workers := range []int{1, 2, 3} {
		ctx := newCountingContext(0)
		if _, err := Solve(ctx, sys, &Settings{MaxSweeps: 1, Workers: workers}); err != nil {
			t.Fatal(err)
		}
		// MaxSweeps 1 runs two sweeps.
		perSweep := float64(ctx.looks.Load()) / 2
		if want := leafUpdates / (1 << 15); perSweep < want {
			t.Errorf("Solve(workers %d): %g looks at ctx per sweep of %g leaf updates, want at least %g", workers, perSweep, leafUpdates, want)
		}
		for _, at := range []int64{3, 10} {
			ctx := newCountingContext(at)
			_, err := Solve(ctx, sys, &Settings{Tol: 1e-12, Workers: workers})
			if !errors.Is(err, context.Canceled) {
				t.Errorf("Solve(workers %d, cancel at look %d) error %v, want context.Canceled", workers, at, err)
			}
			if extra := ctx.looks.Load() - at; extra > int64(2*workers+4) {
				t.Errorf("Solve(workers %d, cancel at look %d): %d more looks after the cancel, want at most %d", workers, at, extra, 2*workers+4)
			}
		}
	}
}

// EvaluateProduct, cancelled in the middle of its iteration, stops at its
// next look.
func TestEvaluateProductCancelledMidway(t *testing.T) {
	sys := pollMachine()
	pols := separate(t, sys).pols
	looks := newCountingContext(0)
	ev, err := sys.EvaluateProduct(looks, pols, nil, 1e-9)
	if err != nil {
		t.Fatal(err)
	}
	// 4096 · 6 mode-product updates per sweep: at least one look.
	if got := looks.looks.Load(); got < int64(ev.Sweeps) {
		t.Errorf("EvaluateProduct: %d looks at ctx in %d sweeps, want at least one per sweep", got, ev.Sweeps)
	}
	ctx := newCountingContext(20)
	if _, err := sys.EvaluateProduct(ctx, pols, nil, 1e-12); !errors.Is(err, context.Canceled) {
		t.Errorf("EvaluateProduct(cancel at look 20) error %v, want context.Canceled", err)
	}
	if extra := ctx.looks.Load() - 20; extra > 2 {
		t.Errorf("EvaluateProduct(cancel at look 20): %d more looks after the cancel, want at most 2", extra)
	}
}

// The joint solve gives bit-identical values (compared as bits: the
// merge of workers is exact by design), policies and runner-ups
// whatever the number of workers (ties go to the lowest joint action).
func TestSolveDeterministicAcrossWorkers(t *testing.T) {
	rng := rand.New(rand.NewPCG(83, 84))
	for _, sys := range []*Machine{randomMachine(rng, 1, 5, 3, 100, 200), randomMachine(rng, 2, 4, 3, 100, 200),
		randomMachine(rng, 4, 3, 3, 400, 900), randomMachine(rng, 5, 3, 2, 400, 900)} {
		ref, err := Solve(context.Background(), sys, &Settings{Tol: 1e-6, Workers: 1})
		if err != nil {
			t.Fatal(err)
		}
		for _, w := range []int{2, 3, 7} {
			r, err := Solve(context.Background(), sys, &Settings{Tol: 1e-6, Workers: w})
			if err != nil {
				t.Fatal(err)
			}
			if r.Sweeps != ref.Sweeps {
				t.Errorf("Solve(%d components, workers %d): %d sweeps, want %d as with 1 worker", len(sys.Components), w, r.Sweeps, ref.Sweeps)
			}
			for s := range ref.Value {
				if math.Float64bits(r.Value[s]) != math.Float64bits(ref.Value[s]) || r.Policy[s] != ref.Policy[s] || r.RunnerUp[s] != ref.RunnerUp[s] {
					t.Errorf("Solve(%d components, workers %d): state %d: value %v, policy %d, runner-up %d; want %v, %d, %d as with 1 worker",
						len(sys.Components), w, s, r.Value[s], r.Policy[s], r.RunnerUp[s], ref.Value[s], ref.Policy[s], ref.RunnerUp[s])
					break
				}
			}
		}
	}
}
