package reports

import "testing"

func TestNiceStep(t *testing.T) {
	for _, tc := range []struct {
		top  float64
		n    int
		want float64
	}{{100, 5, 20}, {1, 5, 0.2}, {52000, 5, 20000}, {7, 5, 2}, {0, 5, 1}, {12, 5, 2.5}} {
		if got := niceStep(tc.top, tc.n); got != tc.want {
			t.Errorf("niceStep(%g, %d) = %g, want %g", tc.top, tc.n, got, tc.want)
		}
	}
}

// Greyscale print keeps the order of the palettes: relative luminance
// falls strictly along each ramp, for every size a brief uses.
func TestPalettesReadableInGreyscale(t *testing.T) {
	for name, anchors := range map[string][]rgb{"state": stateRamp, "action": actionRamp} {
		for n := 2; n <= 20; n++ {
			cols := ramp(anchors, n)
			for i := 1; i < n; i++ {
				if !(luminance(cols[i]) < luminance(cols[i-1])) {
					t.Errorf("%s ramp of %d: luminance of colour %d (%v) is not below colour %d (%v)", name, n, i, cols[i], i-1, cols[i-1])
				}
			}
		}
	}
}
