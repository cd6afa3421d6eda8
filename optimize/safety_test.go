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

// The worst stay over the actions a plan uses: with repair or patch used
// in failed, patch (stay with 0.9) is the worst; closed form of the
// geometric sojourn 1/(1-0.9) = 10 (from memory: the mean of a geometric
// number of periods), and one action per state gives UnsafeStay.
func TestUnsafeStayWorst(t *testing.T) {
	m := &condition.Model{PeriodYears: 1,
		States: []condition.State{{Name: "good"}, {Name: "failed", Unsafe: true}, {Name: "burnt", Unsafe: true}},
		Actions: []condition.Action{
			{Name: "leave", Passive: true, Rows: [][]condition.Entry{{{To: 0, P: 1}}, nil, nil}},
			{Name: "repair", Rows: [][]condition.Entry{nil, {{To: 0, P: 0.6}, {To: 1, P: 0.3}, {To: 2, P: 0.1}}, {{To: 0, P: 1}}}},
			{Name: "patch", Rows: [][]condition.Entry{nil, {{To: 0, P: 0.1}, {To: 1, P: 0.9}}, {{To: 2, P: 0.5}, {To: 0, P: 0.5}}}},
		}}
	stay, worst := UnsafeStayWorst(m, [][]int{{0}, {1, 2}, {1}})
	if math.Abs(stay[1]-10) > 1e-9 || worst[1] != 2 || stay[2] != 1 {
		t.Errorf("UnsafeStayWorst = %v, %v; want stay[1] = 10 (patch), stay[2] = 1", stay, worst)
	}
	// Both unsafe states with a choice: patch in burnt (2 periods, geometric
	// with 0.5) and repair in failed: t_failed = 1 + 0.3 t_failed + 0.1·2 =
	// 1.2/0.7 < 10, so patch stays the worst in failed.
	stay, worst = UnsafeStayWorst(m, [][]int{{0}, {1, 2}, {1, 2}})
	if math.Abs(stay[1]-10) > 1e-9 || math.Abs(stay[2]-2) > 1e-9 || worst[1] != 2 || worst[2] != 2 {
		t.Errorf("UnsafeStayWorst = %v, %v; want stays 10 and 2 under patch", stay, worst)
	}
	one := UnsafeStay(m, []int{0, 1, 1})
	stay, _ = UnsafeStayWorst(m, [][]int{{0}, {1}, {1}})
	for s := range one {
		if math.Abs(stay[s]-one[s]) > 1e-12 {
			t.Errorf("UnsafeStayWorst with one action per state [%d] = %g, want UnsafeStay %g", s, stay[s], one[s])
		}
	}
}
