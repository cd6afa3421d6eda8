package answer

import (
	"context"
	"errors"
	"fmt"
	"testing"

	"fixpoint/cmd/internal/modelfile"
)

// TestSolveFault: a library error behind a command names the file, each
// of joined errors on its own line; cancellation passes unchanged.
func TestSolveFault(t *testing.T) {
	if err := SolveFault("a.yaml", fmt.Errorf("optimize: %w", context.Canceled)); !errors.Is(err, context.Canceled) {
		t.Errorf("SolveFault(cancelled) = %v, want the cancellation", err)
	}
	err := SolveFault("f.yaml", errors.Join(errors.New("fleet: class \"p\": bad"), errors.New("fleet: budget of year 2 is NaN")))
	j, ok := err.(interface{ Unwrap() []error })
	if !ok || len(j.Unwrap()) != 2 {
		t.Fatalf("SolveFault(joined) = %v, want two faults", err)
	}
	for i, want := range []string{`f.yaml: class "p": bad`, "f.yaml: budget of year 2 is NaN"} {
		var f *modelfile.Fault
		if e := j.Unwrap()[i]; !errors.As(e, &f) || e.Error() != want {
			t.Errorf("fault %d = %v, want %q", i, e, want)
		}
	}
}

// TestFactorText: six decimals, or as many as 1-γ needs to within 1%.
func TestFactorText(t *testing.T) {
	for _, tc := range []struct {
		g    float64
		want string
	}{
		{1 / 1.04, "0.961538"},
		{0.99999999, "0.99999999"},
		{0.9999999999999999, "0.9999999999999999"},
		{0.5, "0.500000"},
	} {
		if got := FactorText(tc.g); got != tc.want {
			t.Errorf("FactorText(%v) = %q, want %q", tc.g, got, tc.want)
		}
	}
}
