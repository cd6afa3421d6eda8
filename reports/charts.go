package reports

import (
	"math"

	"github.com/jung-kurt/gofpdf"
)

// The palettes are fixpoint's own. Condition states run from a pale cream
// (best) through wheat, copper and mulberry to a near-black ink (worst);
// actions from pale mint to deep slate. In both, relative luminance falls
// strictly along the ramp, so a greyscale print keeps the order visible.
var (
	stateRamp  = []rgb{{247, 240, 220}, {222, 184, 118}, {178, 103, 62}, {112, 52, 74}, {38, 30, 56}}
	actionRamp = []rgb{{214, 236, 232}, {132, 190, 182}, {52, 118, 124}, {22, 52, 70}}
)

// ramp returns n colours spread evenly along anchors.
func ramp(anchors []rgb, n int) []rgb {
	out := make([]rgb, n)
	for i := range out {
		t := 0.0
		if n > 1 {
			t = float64(i) / float64(n-1) * float64(len(anchors)-1)
		}
		k := min(int(t), len(anchors)-2)
		f := t - float64(k)
		a, b := anchors[k], anchors[k+1]
		out[i] = rgb{
			R: int(math.Round(float64(a.R) + f*float64(b.R-a.R))),
			G: int(math.Round(float64(a.G) + f*float64(b.G-a.G))),
			B: int(math.Round(float64(a.B) + f*float64(b.B-a.B))),
		}
	}
	return out
}

// luminance is the relative luminance of c (sRGB, ITU-R BT.709 weights).
func luminance(c rgb) float64 {
	lin := func(v int) float64 {
		x := float64(v) / 255
		if x <= 0.04045 {
			return x / 12.92
		}
		return math.Pow((x+0.055)/1.055, 2.4)
	}
	return 0.2126*lin(c.R) + 0.7152*lin(c.G) + 0.0722*lin(c.B)
}

// series is one named data series of a chart.
type series struct {
	name   string
	color  rgb
	values []float64
	// hatch draws the segment as white with grey diagonal lines, and dash
	// draws a line series dashed: both survive greyscale printing.
	hatch bool
	dash  bool
}

// frame is the plotting area of a chart with its axes.
type frame struct {
	x, y, w, h float64 // plotting area
	base, top  float64 // values at the bottom and the top of the y axis
}

func (f frame) yAt(v float64) float64 { return f.y + f.h - (v-f.base)/(f.top-f.base)*f.h }

// axes draws a titled chart box with a y axis from 0 to about maxV,
// labelled by yFormat, and returns the plotting frame.
func (d *doc) axes(x, y, w, h float64, title, yLabel string, maxV float64, yFormat func(float64) string) frame {
	return d.axesRange(x, y, w, h, title, yLabel, 0, maxV, yFormat)
}

// axesRange is axes with the y axis from about minV (rounded down to a
// tick) to about maxV.
func (d *doc) axesRange(x, y, w, h float64, title, yLabel string, minV, maxV float64, yFormat func(float64) string) frame {
	p := d.pdf
	d.font("B", bodySize, ink)
	p.SetXY(x, y)
	p.CellFormat(w, 5, title, "", 0, "L", false, 0, "")
	step := niceStep(maxV-minV, 5)
	base := math.Floor(minV/step+1e-9) * step
	top := math.Max(base+step, math.Ceil(maxV/step-1e-9)*step)
	f := frame{x: x + 20, y: y + 8, w: w - 22, h: h - 8 - 10, base: base, top: top}
	d.font("", 7, muted)
	p.SetDrawColor(215, 215, 215)
	p.SetLineWidth(0.15)
	for v := base; v <= top+step/2; v += step {
		yy := f.yAt(v)
		p.Line(f.x, yy, f.x+f.w, yy)
		p.SetXY(x, yy-2)
		p.CellFormat(18, 4, yFormat(v), "", 0, "R", false, 0, "")
	}
	p.SetDrawColor(ink.R, ink.G, ink.B)
	p.SetLineWidth(0.3)
	p.Line(f.x, f.y, f.x, f.y+f.h)
	p.Line(f.x, f.y+f.h, f.x+f.w, f.y+f.h)
	// Text, not a cell: after the rotation the cell's x would be negative,
	// which gofpdf reads as measured from the right edge.
	cx, cy := x+3.5, f.y+f.h/2
	p.TransformBegin()
	p.TransformRotate(90, cx, cy)
	p.Text(cx-p.GetStringWidth(yLabel)/2, cy, yLabel)
	p.TransformEnd()
	return f
}

// xLabels writes category labels under the x axis, thinning them to fit.
func (d *doc) xLabels(f frame, centres []float64, labels []string, xLabel string) {
	p := d.pdf
	d.font("", 7, muted)
	every := 1
	for len(labels)/every > 12 {
		every++
	}
	for i, c := range centres {
		if i%every != 0 {
			continue
		}
		p.SetXY(c-6, f.y+f.h+0.8)
		p.CellFormat(12, 3.5, labels[i], "", 0, "C", false, 0, "")
	}
	p.SetXY(f.x, f.y+f.h+4.5)
	p.CellFormat(f.w, 3.5, xLabel, "", 0, "C", false, 0, "")
}

// stackedBars draws one bar per category, stacked by series.
func (d *doc) stackedBars(x, y, w, h float64, title, xLabel, yLabel string, categories []string, ss []series, yFormat func(float64) string) {
	d.stackedBarsWithLimit(x, y, w, h, title, xLabel, yLabel, categories, ss, nil, "", yFormat)
}

// stackedBarsWithLimit is stackedBars with, when limit is not nil, a
// dashed ink mark across each bar at limit[i] (a budget), named limitName
// in the legend.
func (d *doc) stackedBarsWithLimit(x, y, w, h float64, title, xLabel, yLabel string, categories []string, ss []series,
	limit []float64, limitName string, yFormat func(float64) string) {
	maxV := 0.0
	for i := range categories {
		sum := 0.0
		for _, s := range ss {
			sum += math.Max(0, s.values[i])
		}
		maxV = math.Max(maxV, sum)
		if limit != nil {
			maxV = math.Max(maxV, limit[i])
		}
	}
	f := d.axes(x, y, w, h, title, yLabel, maxV, yFormat)
	p := d.pdf
	slot := f.w / float64(len(categories))
	barW := slot * 0.72
	centres := make([]float64, len(categories))
	p.SetLineWidth(0.15)
	for i := range categories {
		centres[i] = f.x + slot*(float64(i)+0.5)
		base := 0.0
		for _, s := range ss {
			v := math.Max(0, s.values[i])
			if v == 0 {
				continue
			}
			y0, y1 := f.yAt(base+v), f.yAt(base)
			d.segment(centres[i]-barW/2, y0, barW, y1-y0, s)
			base += v
		}
	}
	d.xLabels(f, centres, categories, xLabel)
	if limit == nil {
		d.legend(x, y+h-1, w, ss, false)
		return
	}
	p.SetDrawColor(ink.R, ink.G, ink.B)
	p.SetLineWidth(0.5)
	p.SetDashPattern([]float64{1.2, 0.8}, 0)
	for i, c := range centres {
		p.Line(c-slot/2+0.3, f.yAt(limit[i]), c+slot/2-0.3, f.yAt(limit[i]))
	}
	p.SetDashPattern([]float64{}, 0)
	d.legend(x, y+h-1, w, append(ss[:len(ss):len(ss)], series{name: limitName, color: ink, dash: true}), false)
}

// segment fills one bar segment in the series' style.
func (d *doc) segment(x, y, w, h float64, s series) {
	p := d.pdf
	p.SetDrawColor(255, 255, 255)
	if !s.hatch {
		p.SetFillColor(s.color.R, s.color.G, s.color.B)
		p.Rect(x, y, w, h, "FD")
		return
	}
	p.SetFillColor(255, 255, 255)
	p.SetDrawColor(120, 120, 120)
	p.Rect(x, y, w, h, "FD")
	p.ClipRect(x, y, w, h, false)
	for o := -h; o < w; o += 1.6 {
		p.Line(x+o, y+h, x+o+h, y)
	}
	p.ClipEnd()
}

// lineChart draws line series over xs (in x units, increasing) with the y
// axis from yMin to yMax; marks, if any, are x positions drawn as dashed
// vertical lines with their labels.
func (d *doc) lineChart(x, y, w, h float64, title, xLabel, yLabel string, xs []float64, ss []series,
	yMin, yMax float64, yFormat func(float64) string, marks []float64, markLabels []string) {
	f := d.axesRange(x, y, w, h, title, yLabel, yMin, yMax, yFormat)
	p := d.pdf
	xMin, xMax := xs[0], xs[len(xs)-1]
	xAt := func(v float64) float64 { return f.x + (v-xMin)/(xMax-xMin)*f.w }
	step := niceStep(xMax-xMin, 8)
	var centres []float64
	var labels []string
	for v := math.Ceil(xMin/step-1e-9) * step; v <= xMax+step/100; v += step {
		centres = append(centres, xAt(v))
		labels = append(labels, Fixed(v, decimalsFor(step)))
	}
	d.xLabels(f, centres, labels, xLabel)
	for i, m := range marks {
		p.SetDrawColor(muted.R, muted.G, muted.B)
		p.SetLineWidth(0.3)
		p.SetDashPattern([]float64{0.8, 0.8}, 0)
		p.Line(xAt(m), f.y, xAt(m), f.y+f.h)
		p.SetDashPattern([]float64{}, 0)
		d.font("", 6.5, ink)
		lw := p.GetStringWidth(markLabels[i]) + 1
		lx, align := xAt(m)+0.8, "L"
		if lx+lw > f.x+f.w {
			lx, align = xAt(m)-0.8-lw, "R"
		}
		p.SetXY(lx, f.y+0.5+3.2*float64(i%3))
		p.CellFormat(lw, 3, markLabels[i], "", 0, align, false, 0, "")
	}
	for _, s := range ss {
		p.SetDrawColor(s.color.R, s.color.G, s.color.B)
		p.SetLineWidth(0.6)
		if s.dash {
			p.SetDashPattern([]float64{1.8, 1.2}, 0)
		}
		pts := make([]gofpdf.PointType, len(xs))
		for i := range xs {
			pts[i] = gofpdf.PointType{X: xAt(xs[i]), Y: f.yAt(s.values[i])}
		}
		for i := 1; i < len(pts); i++ {
			p.Line(pts[i-1].X, pts[i-1].Y, pts[i].X, pts[i].Y)
		}
		p.SetDashPattern([]float64{}, 0)
	}
	d.legend(x, y+h-1, w, ss, true)
}

func decimalsFor(step float64) int {
	if step >= 1 {
		return 0
	}
	return int(math.Ceil(-math.Log10(step)))
}

// legend writes swatches and names in rows under a chart; line series get
// a short line sample instead of a swatch.
func (d *doc) legend(x, y, w float64, ss []series, lines bool) {
	p := d.pdf
	d.font("", 7, ink)
	cx, cy := x+20, y
	for _, s := range ss {
		tw := p.GetStringWidth(s.name) + 9
		if cx+tw > x+w {
			cx, cy = x+20, cy+4
		}
		if lines || s.dash {
			p.SetDrawColor(s.color.R, s.color.G, s.color.B)
			p.SetLineWidth(0.6)
			if s.dash {
				p.SetDashPattern([]float64{1.8, 1.2}, 0)
			}
			p.Line(cx, cy+1.7, cx+5, cy+1.7)
			p.SetDashPattern([]float64{}, 0)
		} else {
			d.segment(cx, cy+0.3, 4.5, 2.8, s)
		}
		p.SetXY(cx+6, cy)
		p.CellFormat(tw-6, 3.4, s.name, "", 0, "L", false, 0, "")
		cx += tw + 2
	}
	p.SetXY(marginX, cy+5)
}
