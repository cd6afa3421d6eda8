package fleet

import (
	"context"
	"math/rand/v2"
	"testing"

	"fixpoint/optimize/internal/mdptest"
)

// A plan does not change against itself; two budgets far apart change it
// where the tighter one binds, and the deferred units follow the periods.
func TestChangedYears(t *testing.T) {
	rng := rand.New(rand.NewPCG(90, 91))
	f := smallFleet(rng, 2, 4, 1e9)
	loose, err := Solve(context.Background(), f, nil)
	if err != nil {
		t.Fatal(err)
	}
	for y, ch := range ChangedYears(loose, loose, 1e-9) {
		if ch {
			t.Errorf("year %d: a plan differs from itself", y)
		}
	}
	tight := *f
	tight.Budget = []float64{0, 0, 0, 0}
	tight.Discount = mdptest.Factor(0.95, 1)
	tp, err := Solve(context.Background(), &tight, nil)
	if err != nil {
		t.Fatal(err)
	}
	changed := ChangedYears(loose, tp, 1e-9)
	any := false
	for _, c := range changed {
		any = any || c
	}
	if !any {
		t.Error("a zero budget and an ample one give the same plan in every year")
	}
	if d := loose.YearDeferred(); len(d) != 4 || d[0] != loose.Deferred[0] {
		t.Errorf("YearDeferred = %v, periods %v", d, loose.Deferred)
	}
}
