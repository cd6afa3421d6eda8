package modelfile

import (
	"context"
	"math"
	"slices"
	"strings"
	"testing"

	"fixpoint/optimize/robust"
)

// The block decodes into the model's indices: radii per row (one number
// for an action, rows known exactly set to 0), widened targets, counts,
// the set and the rule for rows without data.
func TestDecodeUncertainty(t *testing.T) {
	// Widening replace in worn gives it two possible next states, so the
	// map must give it a radius.
	_, err := Decode(context.Background(), "u.yaml", []byte(uncertaintySeed+"uncertainty:\n  radius: {leave: 0.1}\n  widen: {replace: {worn: [worn]}}\n"), Options{})
	if err == nil || !strings.Contains(err.Error(), "u.yaml:20: uncertainty.radius: no radius for replace in worn") {
		t.Errorf("widened row without a radius: %v", err)
	}
	f, err := Decode(context.Background(), "u.yaml", []byte(uncertaintySeed+
		"uncertainty:\n  set: kl\n  radius: {leave: {good: 0.1, worn: 2}, replace: {worn: 0.3}}\n  widen: {replace: {worn: [worn, good]}}\n  no_data: refuse\n"), Options{})
	if err != nil {
		t.Fatal(err)
	}
	u := f.Class.Uncertainty
	if !u.HasSet || u.Set != robust.KL || u.HasRadius || u.HasConfidence || u.NoData != robust.Refuse {
		t.Errorf("set %v (given %v), radius given %v, confidence given %v, no_data %v", u.Set, u.HasSet, u.HasRadius, u.HasConfidence, u.NoData)
	}
	// Rows [a][s]: leave is not admissible in failed (NaN); replace in good
	// and failed has one next state and no widening, so 0.
	want := [][]float64{{0.1, 2, math.NaN()}, {0, 0.3, 0}}
	for a := range want {
		for s := range want[a] {
			got := u.Radii[a][s]
			if math.IsNaN(want[a][s]) != math.IsNaN(got) || !math.IsNaN(got) && math.Abs(got-want[a][s]) > 1e-12 {
				t.Errorf("Radii[%d][%d] = %g, want %g", a, s, got, want[a][s])
			}
		}
	}
	if got := u.Widen[1][1]; !slices.Equal(got, []int{1, 0}) {
		t.Errorf("Widen[replace][worn] = %v, want [1 0]", got)
	}
	if u.Widen[0] != nil {
		t.Errorf("Widen[leave] = %v, want nil", u.Widen[0])
	}

	f, err = Decode(context.Background(), "u.yaml", []byte(uncertaintySeed+
		"uncertainty:\n  confidence: 95%\n  observations:\n    leave: {good: 50, worn: 31}\n"), Options{})
	if err != nil {
		t.Fatal(err)
	}
	u = f.Class.Uncertainty
	if !u.HasConfidence || math.Abs(u.Confidence-0.95) > 1e-12 || u.HasSet || u.Set != robust.L1 {
		t.Errorf("confidence %g (given %v), set %v (given %v), want 0.95 and l1 by default", u.Confidence, u.HasConfidence, u.Set, u.HasSet)
	}
	if !slices.Equal(u.Observations[0], []int{50, 31, 0}) || u.Observations[1] != nil {
		t.Errorf("observations %v, want [[50 31 0] []]", u.Observations)
	}
	// 50 × 0.8 and 50 × 0.2 are whole; 31 × 0.7 = 21.7 is not.
	bad := f.Class.NotCounted()
	if len(bad) != 1 || !strings.Contains(bad[0].Error(), "u.yaml:22: uncertainty.observations.leave.worn (action leave, row worn): the row is not a counting estimate from 31 transitions") {
		t.Errorf("NotCounted = %v, want one fault for leave in worn", bad)
	}
}
