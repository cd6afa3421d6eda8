package reports

import (
	"math"
	"strconv"

	"github.com/jung-kurt/gofpdf"
)

// The palettes are fixpoint's own. Condition states run from sand (best)
// through ochre, copper and mulberry to a near-black ink (worst); actions
// from sea green to deep slate. Every colour is at least 15% grey (the
// lightest tint office printers keep) and ramp spaces the colours evenly
// in CIE lightness, so that neighbours stay apart in a greyscale print
// even with 12 states.
var (
	stateRamp  = []rgb{{232, 212, 170}, {214, 160, 92}, {170, 96, 58}, {110, 50, 72}, {38, 30, 56}}
	actionRamp = []rgb{{178, 214, 204}, {110, 170, 160}, {52, 118, 124}, {22, 52, 70}}
)

// ramp returns n colours along the path through anchors (straight lines
// in sRGB between them), at CIE lightness L* evenly spaced from the first
// anchor's to the last's. Lightness falls along the path, so the point of
// each target lightness is found by bisection.
func ramp(anchors []rgb, n int) []rgb {
	at := func(t float64) rgb {
		t = math.Max(0, math.Min(1, t)) * float64(len(anchors)-1)
		k := min(int(t), len(anchors)-2)
		f := t - float64(k)
		a, b := anchors[k], anchors[k+1]
		mix := func(x, y int) int { return int(math.Round(float64(x) + f*float64(y-x))) }
		return rgb{mix(a.R, b.R), mix(a.G, b.G), mix(a.B, b.B)}
	}
	out := make([]rgb, n)
	l0, l1 := lightness(anchors[0]), lightness(anchors[len(anchors)-1])
	for i := range out {
		if n == 1 {
			out[i] = anchors[0]
			continue
		}
		target := l0 + (l1-l0)*float64(i)/float64(n-1)
		lo, hi := 0.0, 1.0
		for range 40 {
			mid := (lo + hi) / 2
			if lightness(at(mid)) > target {
				lo = mid
			} else {
				hi = mid
			}
		}
		out[i] = at((lo + hi) / 2)
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

// lightness is the CIE 1976 lightness L* (0 black to 100 white) of c,
// from its relative luminance Y: L* = 116·Y^(1/3) − 16, or 903.3·Y for
// Y ≤ 0.008856 (CIE 15:2004).
func lightness(c rgb) float64 {
	y := luminance(c)
	if y <= 216.0/24389 {
		return 24389.0 / 27 * y
	}
	return 116*math.Cbrt(y) - 16
}

// greyShare is how grey c prints: 1 minus the sRGB-encoded luminance, so
// that the grey (217, 217, 217) is 15% grey.
func greyShare(c rgb) float64 {
	y := luminance(c)
	enc := 12.92 * y
	if y > 0.0031308 {
		enc = 1.055*math.Pow(y, 1/2.4) - 0.055
	}
	return 1 - enc
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

// Chart text sizes and gaps, in points and millimetres.
const (
	tickSize   = 7.0
	titleLH    = 4.6
	legendLH   = 3.4
	axisTitleW = 4.5 // room for the rotated y-axis title
	xAxisRoom  = 9.5 // tick labels and the x-axis title under the plot
)

// chartBox is the measured layout of a chart: its wrapped title, its
// legend rows and the heights that follow from them.
type chartBox struct {
	title  []string
	legend [][]legendItem
	plotH  float64
}

type legendItem struct {
	s     series
	lines []string
	x, w  float64
}

func (c chartBox) height() float64 {
	return float64(len(c.title))*titleLH + 3 + c.plotH + xAxisRoom + legendHeight(c.legend)
}

func legendHeight(rows [][]legendItem) float64 {
	h := 0.0
	for _, r := range rows {
		n := 1
		for _, it := range r {
			n = max(n, len(it.lines))
		}
		h += float64(n)*legendLH + 0.8
	}
	return h
}

// measureChart wraps the title to the chart width and lays out the legend
// in rows; plotH is the height of the plotting area. Titles wrap rather
// than being cut.
func (d *doc) measureChart(w, plotH float64, title string, legend []series) chartBox {
	d.font("B", bodySize, ink)
	c := chartBox{title: d.wrap(title, w), plotH: plotH}
	d.font("", tickSize, ink)
	const swatch, gap = 6.0, 4.0
	left, right := axisTitleW+6, w
	var row []legendItem
	cx := left
	for _, s := range legend {
		lines := d.wrap(s.name, right-left-swatch)
		tw := 0.0
		for _, l := range lines {
			tw = math.Max(tw, d.width(l))
		}
		if cx+swatch+tw > right && len(row) > 0 {
			c.legend = append(c.legend, row)
			row, cx = nil, left
		}
		row = append(row, legendItem{s: s, lines: lines, x: cx, w: swatch + tw})
		cx += swatch + tw + gap
	}
	if len(row) > 0 {
		c.legend = append(c.legend, row)
	}
	return c
}

// place moves a chart of height h to a new page when it does not fit
// below y, and returns where it starts.
func (d *doc) place(y, h float64) float64 {
	if y+h > contentBottom {
		d.pdf.AddPage()
		y = d.y()
	}
	d.block("chart", y, y+h)
	return y
}

// decimalsFor is the number of decimals that prints every multiple of
// step exactly: 0 for 20, 1 for 2.5, 2 for 0.25.
func decimalsFor(step float64) int {
	d := 0
	for x := step; d < 8 && math.Abs(x-math.Round(x)) > 1e-9*math.Max(1, math.Abs(x)); x *= 10 {
		d++
	}
	return d
}

// ticks are the tick values from base to top by step, each rounded to a
// multiple of step so that none prints as "-0".
func ticks(base, top, step float64) []float64 {
	var out []float64
	for k := math.Round(base / step); k*step <= top+step/2; k++ {
		v := k * step
		if math.Abs(v) < step*1e-6 {
			v = 0
		}
		out = append(out, v)
	}
	return out
}

// tickLabel formats a tick: with yFormat on a whole-number step, with the
// decimals the step needs otherwise.
func tickLabel(yFormat func(float64) string, v, step float64) string {
	if d := decimalsFor(step); d > 0 {
		return Money(v, d)
	}
	return yFormat(v)
}

// axes draws a titled chart with a y axis from minV (rounded down to a
// tick) to about maxV, labelled by yFormat, and the legend under it; it
// returns the plotting frame. The plotting area starts right of the
// widest tick label, measured, and the y-axis title left of that.
func (d *doc) axes(x, y, w float64, c chartBox, yLabel string, minV, maxV float64, yFormat func(float64) string, lines bool) frame {
	p := d.pdf
	d.font("B", bodySize, ink)
	for i, l := range c.title {
		d.put(x, y+float64(i)*titleLH, titleLH, l)
	}
	step := niceStep(maxV-minV, 5)
	base := math.Floor(minV/step+1e-9) * step
	top := math.Max(base+step, math.Ceil(maxV/step-1e-9)*step)
	ts := ticks(base, top, step)
	labels := make([]string, len(ts))
	d.font("", tickSize, muted)
	labelW := 0.0
	for i, v := range ts {
		labels[i] = tickLabel(yFormat, v, step)
		labelW = math.Max(labelW, d.width(labels[i]))
	}
	py := y + float64(len(c.title))*titleLH + 3
	f := frame{x: x + axisTitleW + labelW + 2, y: py, h: c.plotH, base: base, top: top}
	if lines {
		// Line charts inset the range by 4% at both ends, so that a
		// series at the lowest or highest tick (a survival of exactly
		// 100% or 0%) runs inside the plot, not on its axis or top edge.
		pad := 0.04 * (top - base)
		f.base, f.top = base-pad, top+pad
	}
	f.w = x + w - f.x
	p.SetDrawColor(215, 215, 215)
	p.SetLineWidth(0.15)
	for i, v := range ts {
		yy := f.yAt(v)
		p.Line(f.x, yy, f.x+f.w, yy)
		d.putAligned(x+axisTitleW, yy-2, labelW, 4, labels[i], "R")
	}
	p.SetDrawColor(ink.R, ink.G, ink.B)
	p.SetLineWidth(0.3)
	p.Line(f.x, f.y, f.x, f.y+f.h)
	p.Line(f.x, f.y+f.h, f.x+f.w, f.y+f.h)
	// The title is drawn rotated about its own centre; it is shortened to
	// the height of the plot.
	label := d.ellipsize(yLabel, f.h)
	cx, cy := x+2.2, f.y+f.h/2
	p.TransformBegin()
	p.TransformRotate(90, cx, cy)
	lw := d.width(label)
	d.put(cx-lw/2, cy-2, 4, label)
	last := &d.placed[len(d.placed)-1]
	// Record the rotated box.
	last.x, last.y, last.w, last.h = cx-2, cy-lw/2, 2.8, lw
	p.TransformEnd()
	d.drawLegend(x, f.y+f.h+xAxisRoom, c.legend, lines)
	return f
}

// xLabels writes labels under the x axis at the given centres, skipping
// labels so that those printed never touch, and the axis title under
// them.
func (d *doc) xLabels(f frame, centres []float64, labels []string, xLabel string) {
	d.font("", tickSize, muted)
	widest := 0.0
	for _, l := range labels {
		widest = math.Max(widest, d.width(l))
	}
	every := 1
	if len(centres) > 1 {
		gap := math.Abs(centres[1] - centres[0])
		for float64(every)*gap < widest+1.5 {
			every++
		}
	}
	for i, c := range centres {
		if i%every != 0 {
			continue
		}
		lw := d.width(labels[i])
		lx := math.Max(f.x-lw/2, math.Min(c-lw/2, f.x+f.w-lw))
		d.put(lx, f.y+f.h+0.8, 3.5, labels[i])
	}
	d.putAligned(f.x, f.y+f.h+4.8, f.w, 3.5, d.ellipsize(xLabel, f.w), "C")
}

// stackedBars draws one bar per category, stacked by series.
func (d *doc) stackedBars(x, y, w, h float64, title, xLabel, yLabel string, categories []string, ss []series, yFormat func(float64) string) {
	d.stackedBarsWithLimit(x, y, w, h, title, xLabel, yLabel, categories, ss, nil, "", yFormat)
}

// plotHeight is the plotting height of a chart given the old total
// height h (title, plot and axis labels, the legend below it).
func plotHeight(h float64) float64 { return math.Max(24, h-18) }

// stackedBarsWithLimit is stackedBars with, when limit is not nil, a
// dashed ink mark across each bar at limit[i] (a budget), named limitName
// in the legend. h is the height of title, plot and axis labels; the
// legend adds its rows below, and the chart moves to a new page when it
// does not fit.
//
// It returns the plotting frame.
func (d *doc) stackedBarsWithLimit(x, y, w, h float64, title, xLabel, yLabel string, categories []string, ss []series,
	limit []float64, limitName string, yFormat func(float64) string) frame {
	// Positive values stack up from 0 and negative ones (credits, such
	// as salvage) down from it, below a zero line.
	minV, maxV := 0.0, 0.0
	for i := range categories {
		up, down := 0.0, 0.0
		for _, s := range ss {
			up += math.Max(0, s.values[i])
			down += math.Min(0, s.values[i])
		}
		maxV, minV = math.Max(maxV, up), math.Min(minV, down)
		if limit != nil {
			maxV = math.Max(maxV, limit[i])
		}
	}
	legend := ss
	if limit != nil {
		legend = append(ss[:len(ss):len(ss)], series{name: limitName, color: ink, dash: true})
		// Head room so that the budget line never merges with the top of
		// the axis.
		maxV *= 1.08
	}
	c := d.measureChart(w, plotHeight(h), title, legend)
	y = d.place(y, c.height())
	f := d.axes(x, y, w, c, yLabel, minV, maxV, yFormat, false)
	p := d.pdf
	slot := f.w / float64(len(categories))
	barW := slot * 0.72
	centres := make([]float64, len(categories))
	p.SetLineWidth(0.15)
	for i := range categories {
		centres[i] = f.x + slot*(float64(i)+0.5)
		up, down := 0.0, 0.0
		for _, s := range ss {
			v := s.values[i]
			switch {
			case v > 0:
				y0, y1 := f.yAt(up+v), f.yAt(up)
				d.segment(centres[i]-barW/2, y0, barW, y1-y0, s)
				up += v
			case v < 0:
				y0, y1 := f.yAt(down), f.yAt(down+v)
				d.segment(centres[i]-barW/2, y0, barW, y1-y0, s)
				down += v
			}
		}
	}
	if minV < 0 {
		p.SetDrawColor(ink.R, ink.G, ink.B)
		p.SetLineWidth(0.3)
		p.Line(f.x, f.yAt(0), f.x+f.w, f.yAt(0))
	}
	d.xLabels(f, centres, categories, xLabel)
	if limit != nil {
		p.SetDrawColor(ink.R, ink.G, ink.B)
		p.SetLineWidth(0.5)
		p.SetDashPattern([]float64{1.2, 0.8}, 0)
		for i, c := range centres {
			p.Line(c-slot/2+0.3, f.yAt(limit[i]), c+slot/2-0.3, f.yAt(limit[i]))
		}
		p.SetDashPattern([]float64{}, 0)
	}
	d.setY(y + c.height())
	return f
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
	p.SetDrawColor(110, 110, 110)
	p.Rect(x, y, w, h, "FD")
	p.ClipRect(x, y, w, h, false)
	for o := -h; o < w; o += 1.6 {
		p.Line(x+o, y+h, x+o+h, y)
	}
	p.ClipEnd()
}

// lineChart draws line series over xs (in x units, increasing) with the y
// axis from yMin to yMax; marks, if any, are x positions drawn as dashed
// vertical lines labelled by their number (1, 2, ...), which the text
// beside the chart explains.
func (d *doc) lineChart(x, y, w, h float64, title, xLabel, yLabel string, xs []float64, ss []series,
	yMin, yMax float64, yFormat func(float64) string, marks []float64) {
	c := d.measureChart(w, plotHeight(h), title, ss)
	y = d.place(y, c.height())
	f := d.axes(x, y, w, c, yLabel, yMin, yMax, yFormat, true)
	p := d.pdf
	xMin, xMax := xs[0], xs[len(xs)-1]
	xAt := func(v float64) float64 { return f.x + (v-xMin)/(xMax-xMin)*f.w }
	step := niceStep(xMax-xMin, 8)
	var centres []float64
	var labels []string
	for _, v := range ticks(math.Ceil(xMin/step-1e-9)*step, xMax+step/100-step/2, step) {
		centres = append(centres, xAt(v))
		labels = append(labels, Fixed(v, decimalsFor(step)))
	}
	d.xLabels(f, centres, labels, xLabel)
	// Mark numbers go in the first row where they touch no other.
	type slot struct {
		row    int
		x0, x1 float64
	}
	var used []slot
	for i, m := range marks {
		p.SetDrawColor(muted.R, muted.G, muted.B)
		p.SetLineWidth(0.3)
		p.SetDashPattern([]float64{0.8, 0.8}, 0)
		p.Line(xAt(m), f.y, xAt(m), f.y+f.h)
		p.SetDashPattern([]float64{}, 0)
		d.font("B", 6.5, ink)
		label := strconv.Itoa(i + 1)
		lw := d.width(label)
		lx := math.Max(f.x+0.3, math.Min(xAt(m)+0.6, f.x+f.w-lw-0.3))
		row := 0
		for clash := true; clash; {
			clash = false
			for _, u := range used {
				if u.row == row && lx < u.x1+0.8 && lx+lw+0.8 > u.x0 {
					clash, row = true, row+1
					break
				}
			}
		}
		used = append(used, slot{row, lx, lx + lw})
		d.put(lx, f.y+0.5+3*float64(row), 3, label)
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
	d.setY(y + c.height())
}

// drawLegend writes the legend rows laid out by measureChart at y: a
// swatch (or, for line series, a line sample) and the wrapped name.
func (d *doc) drawLegend(x, y float64, rows [][]legendItem, lines bool) {
	p := d.pdf
	for _, row := range rows {
		n := 1
		for _, it := range row {
			s := it.s
			cx := x + it.x
			if lines || s.dash {
				p.SetDrawColor(s.color.R, s.color.G, s.color.B)
				p.SetLineWidth(0.6)
				if s.dash {
					p.SetDashPattern([]float64{1.8, 1.2}, 0)
				}
				p.Line(cx, y+1.7, cx+4.5, y+1.7)
				p.SetDashPattern([]float64{}, 0)
			} else {
				d.segment(cx, y+0.3, 4.5, 2.8, s)
			}
			d.font("", tickSize, ink)
			for k, l := range it.lines {
				d.put(cx+6, y+float64(k)*legendLH, legendLH, l)
			}
			n = max(n, len(it.lines))
		}
		y += float64(n)*legendLH + 0.8
	}
}
