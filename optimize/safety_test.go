package optimize

import (
	"math"
	"testing"

	"fixpoint/condition"
)

// Expected stay in unsafe states: a closed form for a two-state unsafe
// block (geometric sojourns), +Inf for an out-of-service action.
func TestUnsafeStay(t *testing.T) {
	m := &condition.Model{PeriodYears: 1,
		States: []condition.State{{Name: "good"}, {Name: "failed", Unsafe: true}, {Name: "burnt", Unsafe: true}},
		Actions: []condition.Action{
			{Name: "leave", Passive: true, Rows: [][]condition.Entry{{{To: 0, P: 1}}, nil, nil}},
			// failed: repaired with probability 0.6, burnt with 0.1.
			{Name: "repair", Rows: [][]condition.Entry{nil, {{To: 0, P: 0.6}, {To: 1, P: 0.3}, {To: 2, P: 0.1}}, {{To: 0, P: 1}}}},
			{Name: "mothball", OutOfService: true, Rows: [][]condition.Entry{nil, {{To: 1, P: 1}}, {{To: 2, P: 1}}}},
		}}
	got := UnsafeStay(m, []int{0, 1, 1})
	// t_burnt = 1; t_failed = 1 + 0.3 t_failed + 0.1 t_burnt = 1.1/0.7.
	want := []float64{0, 1.1 / 0.7, 1}
	for s := range want {
		if math.Abs(got[s]-want[s]) > 1e-12 {
			t.Errorf("UnsafeStay[%d] = %g, want %g (closed form)", s, got[s], want[s])
		}
	}
	got = UnsafeStay(m, []int{0, 2, 1})
	if !math.IsInf(got[1], 1) || got[2] != 1 {
		t.Errorf("out of service: UnsafeStay = %v, want [0 +Inf 1]", got)
	}
}
