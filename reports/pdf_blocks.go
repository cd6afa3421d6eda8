package reports

// The blocks of page 1 that every brief shares: traceability, sign-off
// and key assumptions.

import (
	"math"
	"strings"
)

// trace is the traceability block of a brief: labelled values in two
// columns, and the SHA-256 of the config on a line of its own (a digest
// never breaks).
type trace struct {
	left, right [][2]string
	digest      string
}

// traceOf is the traceability block of a brief from its header and
// imprint: config file name and SHA-256, fixpoint version, date, prepared
// for and by (a line to fill in when not given).
func traceOf(h *Header, im Imprint) trace {
	const blank = "________________________"
	or := func(s string) string {
		if s == "" {
			return blank
		}
		return s
	}
	src := h.Source
	if i := strings.LastIndexAny(src, `/\`); i >= 0 {
		src = src[i+1:]
	}
	return trace{
		left:   [][2]string{{"Config file", or(src)}, {"fixpoint version", or(h.Version)}, {"Date", im.Date.Format("2 January 2006")}},
		right:  [][2]string{{"Prepared for", or(im.PreparedFor)}, {"Prepared by", or(im.PreparedBy)}},
		digest: or(h.SHA256),
	}
}

// traceBlock draws (or measures) the traceability block on a ruled band;
// it returns the height.
func (d *doc) traceBlock(t trace, draw bool) float64 {
	const lh, labelW, gap, size = 3.7, 24.0, 4.0, 7.5
	colW := (contentW - gap) / 2
	d.font("", size, ink)
	colH := func(rows [][2]string) float64 {
		h := 0.0
		for _, r := range rows {
			h += float64(len(d.wrap(r[1], colW-labelW))) * lh
		}
		return h
	}
	h := math.Max(colH(t.left), colH(t.right)) + lh + 3
	if !draw {
		return h + 2
	}
	y0 := d.y()
	p := d.pdf
	p.SetDrawColor(tableRuleGrey, tableRuleGrey, tableRuleGrey)
	p.SetLineWidth(0.2)
	p.Line(marginX, y0, marginX+contentW, y0)
	label := func(x, y float64, s string) {
		d.font("B", size, muted)
		d.put(x, y, lh, s)
		d.font("", size, ink)
	}
	bottom := 0.0
	for c, rows := range [][][2]string{t.left, t.right} {
		x := marginX + float64(c)*(colW+gap)
		y := y0 + 1.5
		for _, r := range rows {
			label(x, y, r[0])
			for _, l := range d.wrap(r[1], colW-labelW) {
				d.put(x+labelW, y, lh, l)
				y += lh
			}
		}
		bottom = math.Max(bottom, y)
	}
	label(marginX, bottom, "SHA-256")
	d.put(marginX+labelW, bottom, lh, t.digest)
	p.Line(marginX, y0+h, marginX+contentW, y0+h)
	d.setY(y0 + h + 2)
	return h + 2
}

// signOffBlock draws (or measures) the sign-off: for the reviewer (the
// competent person) and the approver, ruled lines for name, role,
// signature and date; it returns the height.
func (d *doc) signOffBlock(draw bool) float64 {
	const rowH, gap = 6.8, 8.0
	fields := []string{"Name", "Role", "Signature", "Date"}
	h := d.headingBlock("Sign-off", false) + 4.5 + float64(len(fields))*rowH + 1
	if !draw {
		return h
	}
	d.mark("sign-off")
	top := d.y()
	d.headingBlock("Sign-off", true)
	y0 := d.y()
	colW := (contentW - gap) / 2
	p := d.pdf
	for c, who := range []string{"Reviewed by (competent person)", "Approved by"} {
		x := marginX + float64(c)*(colW+gap)
		d.font("B", smallSize, ink)
		d.put(x, y0, 4, who)
		for i, f := range fields {
			y := y0 + 4.5 + float64(i)*rowH
			d.font("", smallSize, muted)
			d.put(x, y+2.5, 4, f)
			p.SetDrawColor(ink.R, ink.G, ink.B)
			p.SetLineWidth(0.25)
			p.Line(x+17, y+6.3, x+colW, y+6.3)
		}
	}
	d.setY(y0 + 4.5 + float64(len(fields))*rowH + 1)
	d.block("sign-off", top, d.y())
	return h
}

// keyAssumptionsBlock draws (or measures) the key assumptions as a
// headed list; it returns the height.
func (d *doc) keyAssumptionsBlock(items []string, draw bool) float64 {
	if !draw {
		return d.headingBlock("Key assumptions", false) + d.bullets(items, false)
	}
	d.mark("key assumptions")
	page, top := d.pdf.PageNo(), d.y()
	h := d.headingBlock("Key assumptions", true) + d.bullets(items, true)
	if d.pdf.PageNo() == page {
		d.block("key assumptions", top, d.y())
	} else {
		// Broken across pages: recorded as far as the end of the frame, so
		// that the check sees it run over.
		d.blocks = append(d.blocks, Block{Kind: "key assumptions", Page: page, X: marginX, Y: top, W: contentW, H: contentBottom - top + 1})
	}
	return h
}
