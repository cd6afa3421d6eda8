package optimize

import (
	"fmt"
	"math"
	"testing"
)

func TestRelativeGap(t *testing.T) {
	tests := []struct {
		name     string
		x, lower float64
		want     float64
	}{
		{"above", 110, 100, 10.0 / 110},
		{"negative costs", -90, -100, 10.0 / 90},
		{"equal", 100, 100, 0},
		{"below by rounding", 100, 100 + 1e-13, 0},
		{"zero", 0, -1e-300, 0},
		{"negative zero", math.Copysign(0, -1), 0, 0},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			got := RelativeGap(tc.x, tc.lower)
			if math.Abs(got-tc.want) > 1e-15 || math.Signbit(got) {
				t.Errorf("RelativeGap(%g, %g) = %g, want %g (non-negative)", tc.x, tc.lower, got, tc.want)
			}
			if s := fmt.Sprintf("%.3f%%", 100*got); s[0] == '-' {
				t.Errorf("RelativeGap(%g, %g) prints as %s", tc.x, tc.lower, s)
			}
		})
	}
}
