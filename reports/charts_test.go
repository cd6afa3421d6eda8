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

// chartDoc is an empty one-page document to draw charts on.
func chartDoc(t *testing.T) *doc {
	t.Helper()
	d, err := newDocWith("test", "test", Imprint{})
	if err != nil {
		t.Fatal(err)
	}
	d.pdf.AddPage()
	return d
}

// A line series at exactly the lowest or highest tick (a survival of
// 100% or 0%) runs inside the plot, at least half a millimetre from the
// top edge and from the x axis, where it would be hidden by them.
func TestLineChartInsetsRange(t *testing.T) {
	d := chartDoc(t)
	c := d.measureChart(contentW, 40, "survival", nil)
	f := d.axes(marginX, 40, contentW, c, "probability", 0, 1, func(v float64) string { return Fixed(v, 1) }, true)
	if top := f.yAt(1); top < f.y+0.5 {
		t.Errorf("a series at 100%% is drawn at y %.2f, within 0.5 mm of the plot top %.2f", top, f.y)
	}
	if bottom := f.yAt(0); bottom > f.y+f.h-0.5 {
		t.Errorf("a series at 0%% is drawn at y %.2f, within 0.5 mm of the x axis %.2f", bottom, f.y+f.h)
	}
}

// Negative amounts (credits: a salvage value larger than the action's
// cost) are drawn below a zero line, not dropped: the axis reaches down
// to the most negative stack.
func TestStackedBarsNegative(t *testing.T) {
	d := chartDoc(t)
	ss := []series{{name: "replace (salvage credit)", color: ink, values: []float64{-300, -120, 0}},
		{name: "running costs", hatch: true, values: []float64{50, 40, 30}}}
	f := d.stackedBarsWithLimit(marginX, 40, contentW, 60, "spend", "year", "EUR", []string{"0", "1", "2"}, ss, nil, "",
		func(v float64) string { return Money(v, 0) })
	if f.base > -300 {
		t.Errorf("axis starts at %g, above the stack of -300", f.base)
	}
	if f.top < 50 {
		t.Errorf("axis ends at %g, below the stack of 50", f.top)
	}
	if z := f.yAt(0); z <= f.y || z >= f.y+f.h {
		t.Errorf("the zero line at %.2f is not inside the plot [%.2f, %.2f]", z, f.y, f.y+f.h)
	}
}
