package reports

import (
	"strings"
	"testing"

	"fixpoint/optimize"
)

func TestThresholds(t *testing.T) {
	states := []string{"good", "fair", "worn", "poor", "failed"}
	actions := []string{"leave", "overhaul", "replace"}
	tests := []struct {
		policy []int
		want   string
	}{
		{[]int{0, 0, 1, 1, 2}, "Leave while good or fair; overhaul from worn; replace when failed."},
		{[]int{0, 0, 0, 1, 2}, "Leave while good, fair or worn; overhaul from poor; replace when failed."},
		{[]int{0, 1, 1, 2, 2}, "Leave while good; overhaul from fair; replace from poor."},
		{[]int{2, 2, 2, 2, 2}, "Replace in every condition."},
		{[]int{0, 1, 0, 1, 2}, "The advice is not monotone along the scale (good: leave, fair: overhaul, worn: leave, poor: overhaul, failed: replace), so no single threshold rule describes it."},
	}
	for _, tc := range tests {
		a := &Advice{Problem: &optimize.Problem{States: states, Actions: actions}, Result: &optimize.Result{Policy: tc.policy}}
		if got := a.Thresholds(); got != tc.want {
			t.Errorf("Thresholds(%v) = %q, want %q", tc.policy, got, tc.want)
		}
	}
}

func TestMoney(t *testing.T) {
	for _, tc := range []struct {
		x    float64
		dec  int
		want string
	}{
		{0, 2, "0.00"}, {999.995, 2, "1,000.00"}, {-1234.5, 2, "-1,234.50"}, {1234567.891, 0, "1,234,568"},
		{-0.001, 2, "0.00"}, {12, 0, "12"}, {123456, 1, "123,456.0"},
	} {
		if got := Money(tc.x, tc.dec); got != tc.want {
			t.Errorf("Money(%v, %d) = %q, want %q", tc.x, tc.dec, got, tc.want)
		}
	}
}

// Cells a spreadsheet would run as formulas are neutralised; numbers,
// negative ones included, are not (OWASP, "CSV Injection").
func TestCSVCell(t *testing.T) {
	for in, want := range map[string]string{"=HYPERLINK(1)": "'=HYPERLINK(1)", "+1+2": "'+1+2", "@SUM(A1)": "'@SUM(A1)",
		"-1.5": "-1.5", "-x": "'-x", "worn": "worn", "": "", "\tcmd": "'\tcmd"} {
		if got := csvCell(in); got != want {
			t.Errorf("csvCell(%q) = %q, want %q", in, got, want)
		}
	}
}

// Table cells never carry control characters to the terminal.
func TestTableEscapesControls(t *testing.T) {
	var b strings.Builder
	if err := table(&b, []string{"a\x1b[2J"}, nil, [][]string{{"x\ny"}}); err != nil {
		t.Fatal(err)
	}
	if strings.ContainsAny(b.String(), "\x1b") || !strings.Contains(b.String(), `x\ny`) {
		t.Errorf("table output %q", b.String())
	}
}
