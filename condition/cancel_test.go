package condition

import (
	"context"
	"errors"
	"fmt"
	"math/rand/v2"
	"strings"
	"sync/atomic"
	"testing"
)

// countdown is a context that reports context.Canceled from the after-th
// call of Err on and counts the calls (safe for the bootstrap's workers),
// so that a test cancels at a counted check instead of after a time.
type countdown struct {
	context.Context
	after int64
	calls atomic.Int64
}

func newCountdown(after int64) *countdown {
	return &countdown{Context: context.Background(), after: after}
}

func (c *countdown) Err() error {
	if c.calls.Add(1) >= c.after {
		return context.Canceled
	}
	return nil
}

// cancelAtChecks runs f once to count its checks of ctx (at least min),
// then cancelled at up to 25 checks spread over the run, and wants
// context.Canceled every time.
func cancelAtChecks(t *testing.T, name string, min int64, f func(ctx context.Context) error) {
	t.Helper()
	probe := newCountdown(1 << 62)
	if err := f(probe); err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	total := probe.calls.Load()
	if total < min {
		t.Fatalf("%s checked ctx %d times, want at least %d", name, total, min)
	}
	for at := int64(1); at <= total; at += max(1, total/25) {
		if err := f(newCountdown(at)); !errors.Is(err, context.Canceled) {
			t.Errorf("%s cancelled at check %d of %d: err = %v, want context.Canceled", name, at, total, err)
		}
	}
}

// recordsCSV is 100 units of 200 inspections a year apart (20,000
// records) with states drawn at random.
func recordsCSV() string {
	rng := rand.New(rand.NewPCG(8, 9))
	var b strings.Builder
	b.WriteString("unit,date,condition\n")
	for u := range 100 {
		for k := range 200 {
			fmt.Fprintf(&b, "u%d,%d-03-01,%s\n", u, 1800+k, scale3[rng.IntN(len(scale3))])
		}
	}
	return b.String()
}

// Reading records and building the panel check ctx every checkEvery
// records: a large file stops soon after an interrupt.
func TestReadRecordsAndBuildPanelCancellable(t *testing.T) {
	text := recordsCSV()
	cancelAtChecks(t, "ReadRecordsContext", 20000/checkEvery, func(ctx context.Context) error {
		_, _, err := ReadRecordsContext(ctx, strings.NewReader(text), scale3)
		return err
	})
	cancelAtChecks(t, "SurveyRecordsContext", 20000/checkEvery, func(ctx context.Context) error {
		_, _, err := SurveyRecordsContext(ctx, strings.NewReader(text))
		return err
	})
	recs, _, err := ReadRecords(strings.NewReader(text), scale3)
	if err != nil {
		t.Fatal(err)
	}
	cancelAtChecks(t, "BuildPanelContext", 2*20000/checkEvery, func(ctx context.Context) error {
		_, _, _, err := BuildPanelContext(ctx, recs, PanelOptions{Actions: []string{"leave"}})
		return err
	})
}

// Both estimators check ctx before and during the fit (the generator
// search, the EM for the effect of work, the goodness-of-fit pass) and
// between bootstrap replicates, with or without a bootstrap.
func TestEstimateCancellable(t *testing.T) {
	rng := rand.New(rand.NewPCG(4, 5))
	p := simulatePanel(rng, trueQ, 30, 20, func() int { return 300 + rng.IntN(130) })
	for i := range p.Transitions {
		if i%7 == 0 {
			tr := &p.Transitions[i]
			tr.Action, tr.To = 1, 0 // recorded work that renews
		}
	}
	for _, method := range []FitMethod{Counting, Generator} {
		for _, boot := range []int{0, 2} {
			o := genOpts(4, boot)
			o.Method, o.Actions = method, []string{"leave", "renew"}
			o.Structure = AnyChange
			cancelAtChecks(t, fmt.Sprintf("Estimate(%v, bootstrap %d)", method, boot), 3, func(ctx context.Context) error {
				_, err := Estimate(ctx, p, o)
				return err
			})
		}
	}
}
