package reports

import (
	"bytes"
	"fmt"
	"io"
	"math"
	"regexp"
	"strconv"
	"strings"
	"time"

	"github.com/jung-kurt/gofpdf"
)

// Page geometry of a brief, in millimetres (A4 portrait).
const (
	pageW, pageH  = 210.0, 297.0
	marginX       = 18.0
	marginTop     = 20.0
	footerH       = 26.0 // the caution box
	footerGap     = 6.0
	contentW      = pageW - 2*marginX
	contentBottom = pageH - marginTop/2 - footerH - footerGap
	bodySize      = 9.5
	smallSize     = 8.0
	lineH         = 4.6
	fontFamily    = "go"
	tableRuleGrey = 190
	// tableHeadShade is the grey of table headers: 15% grey, the lightest
	// tint a brief uses (lighter tints drop out on office printers).
	tableHeadShade = 217
	// ptMM converts a font size in points to millimetres.
	ptMM = 25.4 / 72
	// docLang is the language of a brief's text (the PDF catalog's /Lang).
	docLang = "en-GB"
)

// rgb is a colour of a brief's palette.
type rgb struct{ R, G, B int }

// ink is the text colour; muted is for secondary text.
var (
	ink   = rgb{28, 28, 36}
	muted = rgb{88, 88, 96}
)

// Imprint is the making of a brief: its date, who it was prepared for
// and by (printed on page 1; empty leaves a line to fill in by hand), and
// the fallback fonts for characters the Go fonts lack.
type Imprint struct {
	Date                    time.Time
	PreparedFor, PreparedBy string
	Fonts                   []Font
	// Layout, if not nil, receives the blocks of the brief as the layout
	// engine placed them (for layout checks); it changes nothing printed.
	Layout *Layout
}

// Layout is what the layout engine placed in a brief: the number of
// pages and every block with its box.
type Layout struct {
	Pages  int
	Blocks []Block
}

// Block is one block of a brief as placed on a page, its box in
// millimetres from the top-left corner of the page. Kind is "caution",
// "sign-off", "key assumptions", "table" (one part of a table on one
// page) or "chart". For a table part, Of is the table's title ("" when it
// has none), Title the title printed above the part, Header whether the
// part starts with the header row, From the index of its first row, Rows
// its rows and Total the rows of the table.
type Block struct {
	Kind              string
	Page              int
	X, Y, W, H        float64
	Of, Title         string
	Header            bool
	From, Rows, Total int
}

// placed is one line of text as the layout engine put it on a page: its
// box in millimetres (top-left corner, width, font height).
type placed struct {
	page       int
	x, y, w, h float64
	text       string
}

// doc wraps a gofpdf document with the brief's layout engine: text is
// measured, wrapped and drawn by doc itself, run by run in the first font
// that has the glyphs (the Go fonts, then the fallbacks), so that mixed
// scripts print and every word's box is known. Errors are sticky in
// gofpdf; doc checks them once, in output.
type doc struct {
	pdf    *gofpdf.Fpdf
	header string
	fonts  *fontSet
	// current text style
	bold   bool
	size   float64
	colour rgb
	// placed records every line drawn, for the layout checks.
	placed []placed
	// lost collects characters met while drawing that no font prints.
	lost []rune
	// marks are named points of the document (the page a block landed
	// on), for the layout checks.
	marks map[string]int
	// blocks are the blocks placed so far; layout, when not nil, receives
	// them with the page count in output.
	blocks []Block
	layout *Layout
}

// newDocWith starts an A4 document with the Go fonts (UTF-8, so "€" and
// accented, Greek and Cyrillic names print) and the imprint's fallback
// fonts, fixed dates and a sorted catalog for byte-identical output, and
// the running header and caution box on every page. header is the
// running header: parts separated by "  ·  ", of which the middle ones
// are shortened to fit the line.
func newDocWith(title, header string, im Imprint) (*doc, error) {
	fs, err := newFontSet(im.Fonts)
	if err != nil {
		return nil, err
	}
	pdf := gofpdf.New("P", "mm", "A4", "")
	pdf.AddUTF8FontFromBytes(fontFamily, "", fs.faces[0].regular)
	pdf.AddUTF8FontFromBytes(fontFamily, "B", fs.faces[0].bold)
	pdf.SetCreationDate(im.Date)
	pdf.SetModificationDate(im.Date)
	pdf.SetCatalogSort(true)
	pdf.SetTitle(title, true)
	author := "fixpoint"
	if im.PreparedBy != "" {
		author = im.PreparedBy
	}
	pdf.SetAuthor(author, true)
	pdf.SetSubject(title+": decision support from a model, advisory only", true)
	pdf.SetKeywords("maintenance policy, condition states, advisory", true)
	pdf.SetCreator("fixpoint", true)
	pdf.SetProducer("fixpoint", true)
	pdf.SetMargins(marginX, marginTop, marginX)
	// The layout engine breaks pages itself.
	pdf.SetAutoPageBreak(false, 0)
	pdf.AliasNbPages("{nb}")
	d := &doc{pdf: pdf, header: header, fonts: fs, size: bodySize, colour: ink, marks: map[string]int{}, layout: im.Layout}
	pdf.SetHeaderFunc(d.drawHeader)
	pdf.SetFooterFunc(d.drawFooter)
	return d, nil
}

// mark records that the named block is on the current page.
func (d *doc) mark(name string) { d.marks[name] = d.pdf.PageNo() }

// pagesOf says on which pages the blocks of a kind (and, for tables,
// title) placed so far are: "page 1", "pages 1-3"; "page 1" when none
// is.
func (d *doc) pagesOf(kind, of string) string {
	first, last := 0, 0
	for _, b := range d.blocks {
		if b.Kind == kind && b.Of == of {
			if first == 0 {
				first = b.Page
			}
			last = b.Page
		}
	}
	switch {
	case first == 0:
		return "page 1"
	case first == last:
		return fmt.Sprintf("page %d", first)
	}
	return fmt.Sprintf("pages %d-%d", first, last)
}

// block records a block of the full content width from y0 to y1 on the
// current page.
func (d *doc) block(kind string, y0, y1 float64) {
	d.blocks = append(d.blocks, Block{Kind: kind, Page: d.pdf.PageNo(), X: marginX, Y: y0, W: contentW, H: y1 - y0})
}

func (d *doc) drawHeader() {
	p := d.pdf
	d.font("", smallSize, muted)
	d.put(marginX, 9, 4, d.fitHeader(d.header, contentW))
	p.SetDrawColor(tableRuleGrey, tableRuleGrey, tableRuleGrey)
	p.SetLineWidth(0.2)
	p.Line(marginX, 14, pageW-marginX, 14)
	p.SetXY(marginX, marginTop)
}

// fitHeader shortens the middle parts of a running header (split at
// "  ·  ") with an ellipsis until it fits w; the first and last parts
// (what the brief is, its date) are never cut.
func (d *doc) fitHeader(h string, w float64) string {
	const sep = "  ·  "
	parts := strings.Split(h, sep)
	if d.width(h) <= w || len(parts) < 3 {
		return h
	}
	fixed := d.width(parts[0]) + d.width(parts[len(parts)-1]) + float64(len(parts)-1)*d.width(sep)
	room := (w - fixed) / float64(len(parts)-2)
	for i := 1; i < len(parts)-1; i++ {
		parts[i] = d.ellipsize(parts[i], room)
	}
	return strings.Join(parts, sep)
}

// drawFooter draws the caution box and the page number.
func (d *doc) drawFooter() {
	p := d.pdf
	y := pageH - marginTop/2 - footerH
	p.SetDrawColor(ink.R, ink.G, ink.B)
	p.SetLineWidth(0.6)
	p.Rect(marginX, y, contentW, footerH-5, "D")
	d.block("caution", y, y+footerH-5)
	d.font("B", smallSize, ink)
	d.put(marginX+2.5, y+2, 3.6, "CAUTION: advisory only")
	d.font("", 7.2, ink)
	ty := y + 5.6
	for _, l := range d.wrap(briefCaution, contentW-5) {
		d.put(marginX+2.5, ty, 3.2, l)
		ty += 3.2
	}
	d.font("", smallSize, muted)
	d.putAligned(marginX, pageH-marginTop/2-4, contentW, 4, fmt.Sprintf("page %d of {nb}", p.PageNo()), "R")
}

// briefCaution is the footer text of every page of a brief.
const briefCaution = "This brief is decision support from a model, not an instruction. Statutory and safety " +
	"inspections, lifting and pressure equipment rules and other local regulation take precedence; a competent " +
	"or licensed inspector's finding overrides this advice. States marked unsafe require action before further use. " +
	ModelLimits

// font sets the text style: "B" for bold, the size in points, the colour.
func (d *doc) font(style string, size float64, c rgb) {
	d.bold, d.size, d.colour = style == "B", size, c
	d.pdf.SetFont(fontFamily, style, size)
	d.pdf.SetTextColor(c.R, c.G, c.B)
}

// useFace selects face k in the current style, registering a fallback
// face on first use.
func (d *doc) useFace(k int) {
	f := d.fonts.faces[k]
	if !f.added {
		d.pdf.AddUTF8FontFromBytes(f.family, "", f.regular)
		if f.bold != nil {
			d.pdf.AddUTF8FontFromBytes(f.family, "B", f.bold)
		}
		f.added = true
	}
	style := ""
	if d.bold && f.bold != nil {
		style = "B"
	}
	d.pdf.SetFont(f.family, style, d.size)
}

// width is the width of s in the current style, run by run.
func (d *doc) width(s string) float64 {
	w := 0.0
	for _, r := range d.fonts.runs(s) {
		d.useFace(r.face)
		w += d.pdf.GetStringWidth(r.text)
	}
	d.useFace(0)
	return w
}

// put draws one line of s with its top at y, vertically placed as in a
// cell of height h (gofpdf's rule: baseline at h/2 + 0.3 of the font
// size), and records its box.
func (d *doc) put(x, y, h float64, s string) {
	if s == "" {
		return
	}
	d.lost = append(d.lost, d.fonts.missing(s)...)
	base := y + h/2 + 0.3*d.size*ptMM
	cx := x
	for _, r := range d.fonts.runs(s) {
		d.useFace(r.face)
		d.pdf.Text(cx, base, r.text)
		cx += d.pdf.GetStringWidth(r.text)
	}
	d.useFace(0)
	d.placed = append(d.placed, placed{page: d.pdf.PageNo(), x: x, y: base - 0.8*d.size*ptMM, w: cx - x, h: d.size * ptMM, text: s})
}

// putAligned draws s in a box of width w: align "L", "C" or "R".
func (d *doc) putAligned(x, y, w, h float64, s, align string) {
	sw := d.width(s)
	switch align {
	case "R":
		x += w - sw
	case "C":
		x += (w - sw) / 2
	}
	d.put(x, y, h, s)
}

// ellipsize shortens s with "…" until it fits w.
func (d *doc) ellipsize(s string, w float64) string {
	if d.width(s) <= w {
		return s
	}
	r := []rune(s)
	for n := len(r) - 1; n > 0; n-- {
		t := strings.TrimRight(string(r[:n]), " ") + "…"
		if d.width(t) <= w {
			return t
		}
	}
	return "…"
}

// numberRE matches a number as the briefs print it, with its unit sign.
var numberRE = regexp.MustCompile(`^[(]?[-−+]?[0-9][0-9,]*(\.[0-9]+)?(e[-+]?[0-9]+)?%?[),.;:]?$`)

// isNumber reports whether a word is a number, which never breaks.
func isNumber(word string) bool { return numberRE.MatchString(word) }

// wrap breaks s into lines no wider than w. Lines break at spaces; a
// word wider than the line breaks after "_", "-" or "/", between
// characters of scripts written without spaces, or else with a hyphen.
// A number never breaks (its column or line is made wide enough).
func (d *doc) wrap(s string, w float64) []string {
	var lines []string
	line := ""
	for _, word := range strings.Fields(s) {
		cand := word
		if line != "" {
			cand = line + " " + word
		}
		if d.width(cand) <= w {
			line = cand
			continue
		}
		if line != "" {
			lines = append(lines, line)
			line = ""
		}
		for d.width(word) > w && !isNumber(word) {
			head, tail := d.breakWord(word, w)
			if tail == "" {
				break
			}
			lines = append(lines, head)
			word = tail
		}
		line = word
	}
	if line != "" || len(lines) == 0 {
		lines = append(lines, line)
	}
	return lines
}

// breakWord splits a word wider than w into a head that fits w and the
// rest: after the last "_", "-" or "/" that fits, or between two
// characters of a script without spaces, else with a hyphen added, never
// leaving fewer than two letters on either side of a hyphen. tail is ""
// when the word cannot break.
func (d *doc) breakWord(word string, w float64) (head, tail string) {
	r := []rune(word)
	best, hyphen := 0, false
	for k := 1; k < len(r); k++ {
		prev, next := r[k-1], r[k]
		natural := prev == '_' || prev == '-' || prev == '/' || wide(prev) || wide(next)
		if natural && d.width(string(r[:k])) <= w {
			best, hyphen = k, false
		}
	}
	if best == 0 {
		for k := len(r) - 2; k >= 2; k-- {
			if d.width(string(r[:k])+"-") <= w {
				best, hyphen = k, true
				break
			}
		}
	}
	if best == 0 {
		return word, ""
	}
	if hyphen {
		return string(r[:best]) + "-", string(r[best:])
	}
	return string(r[:best]), string(r[best:])
}

// minWidth is the width of the widest piece of s that cannot break
// (numbers, or whole words up to capW, beyond which words hyphenate).
func (d *doc) minWidth(s string, capW float64) float64 {
	m := 0.0
	for _, word := range strings.Fields(s) {
		ww := d.width(word)
		if !isNumber(word) {
			ww = math.Min(ww, capW)
		}
		m = math.Max(m, ww)
	}
	return m
}

// y is the current vertical position; setY moves it.
func (d *doc) y() float64     { return d.pdf.GetY() }
func (d *doc) setY(y float64) { d.pdf.SetXY(marginX, y) }

// need starts a new page unless h millimetres are left on this one.
func (d *doc) need(h float64) {
	if d.y()+h > contentBottom {
		d.pdf.AddPage()
	}
}

// textLines draws lines of height lh from the current position at x,
// starting a new page when the next line would not fit, keeping at least
// two lines together at a break.
func (d *doc) textLines(x float64, lines []string, lh float64, align string, w float64) {
	for i, l := range lines {
		left := len(lines) - i
		if d.y()+lh > contentBottom || (i > 0 && left == 1 && d.y()+lh > contentBottom-lh && len(lines) > 2) {
			d.pdf.AddPage()
		}
		d.putAligned(x, d.y(), w, lh, l, align)
		d.setY(d.y() + lh)
	}
}

// titleBlock draws (or, with draw false, only measures) the title, the
// model name and a line under them; it returns the height.
func (d *doc) titleBlock(text, model, under string, draw bool) float64 {
	y0 := d.y()
	h := 0.0
	d.font("B", 18, ink)
	for _, l := range d.wrap(text, contentW) {
		if draw {
			d.put(marginX, y0+h, 8, l)
		}
		h += 8
	}
	d.font("B", 12, ink)
	for _, l := range d.wrap(model, contentW) {
		if draw {
			d.put(marginX, y0+h, 6, l)
		}
		h += 6
	}
	if under != "" {
		d.font("", bodySize, muted)
		for _, l := range d.wrap(under, contentW) {
			if draw {
				d.put(marginX, y0+h, lineH, l)
			}
			h += lineH
		}
	}
	h += 2
	if draw {
		d.setY(y0 + h)
	}
	return h
}

// heading writes a section heading, starting a new page when fewer than
// need millimetres are left below it.
func (d *doc) heading(text string, need float64) {
	d.need(need)
	d.headingBlock(text, true)
}

// headingBlock draws (or measures) a section heading; it returns the
// height.
func (d *doc) headingBlock(text string, draw bool) float64 {
	d.font("B", 12, ink)
	lines := d.wrap(text, contentW)
	h := 2 + 6*float64(len(lines)) + 1
	if draw {
		y := d.y() + 2
		for _, l := range lines {
			d.put(marginX, y, 6, l)
			y += 6
		}
		d.setY(y + 1)
	}
	return h
}

// paragraph writes wrapped body text.
func (d *doc) paragraph(text string) { d.paragraphBlock(text, bodySize, ink, lineH, true) }

// note writes wrapped small grey text.
func (d *doc) note(text string) { d.paragraphBlock(text, smallSize, muted, 3.8, true) }

// paragraphBlock draws (or measures) wrapped text in the given style; it
// returns the height, with the gap after it.
func (d *doc) paragraphBlock(text string, size float64, c rgb, lh float64, draw bool) float64 {
	d.font("", size, c)
	lines := d.wrap(text, contentW)
	if draw {
		d.textLines(marginX, lines, lh, "L", contentW)
		d.setY(d.y() + 1.5)
	}
	return float64(len(lines))*lh + 1.5
}

// bullets draws (or measures) a list of items, each wrapped under its
// bullet; it returns the height.
func (d *doc) bullets(items []string, draw bool) float64 {
	d.font("", bodySize, ink)
	const indent = 4
	h := 0.0
	for _, it := range items {
		lines := d.wrap(it, contentW-indent)
		if draw {
			d.need(lineH * float64(min(len(lines), 2)))
			d.put(marginX, d.y(), lineH, "•")
			d.textLines(marginX+indent, lines, lineH, "L", contentW-indent)
			d.setY(d.y() + 0.8)
		}
		h += float64(len(lines))*lineH + 0.8
	}
	return h
}

// output writes the PDF to w, reporting the first error gofpdf met, and
// refusing a document that met characters no font prints.
func (d *doc) output(w io.Writer) error {
	if len(d.lost) > 0 {
		return &GlyphError{Faults: []GlyphFault{{Field: "text", Text: string(d.lost), Chars: d.lost}}}
	}
	if err := d.pdf.Error(); err != nil {
		return fmt.Errorf("reports: PDF: %w", err)
	}
	var buf bytes.Buffer
	if err := d.pdf.Output(&buf); err != nil {
		return fmt.Errorf("reports: PDF: %w", err)
	}
	if d.layout != nil {
		*d.layout = Layout{Pages: d.pdf.PageNo(), Blocks: d.blocks}
	}
	out, err := withLang(buf.Bytes(), docLang)
	if err != nil {
		return err
	}
	_, err = w.Write(out)
	return err
}

// withLang adds /Lang to the catalog of a PDF written by gofpdf (which
// has no call for it): the catalog is the last object, so only the
// startxref offset after it moves.
func withLang(pdf []byte, lang string) ([]byte, error) {
	const cat = "/Type /Catalog"
	i := bytes.LastIndex(pdf, []byte(cat))
	j := bytes.LastIndex(pdf, []byte("startxref\n"))
	if i < 0 || j < i {
		return nil, fmt.Errorf("reports: PDF: no catalog to set the language in")
	}
	ins := []byte("\n/Lang (" + lang + ")")
	numStart := j + len("startxref\n")
	numEnd := numStart + bytes.IndexByte(pdf[numStart:], '\n')
	off, err := strconv.Atoi(string(pdf[numStart:numEnd]))
	if err != nil || numEnd < numStart {
		return nil, fmt.Errorf("reports: PDF: unreadable startxref")
	}
	var b bytes.Buffer
	b.Write(pdf[:i+len(cat)])
	b.Write(ins)
	b.Write(pdf[i+len(cat) : numStart])
	b.WriteString(strconv.Itoa(off + len(ins)))
	b.Write(pdf[numEnd:])
	return b.Bytes(), nil
}

// niceStep returns a round tick step (1, 2, 2.5 or 5 times a power of
// ten) for an axis from 0 to top with about n ticks.
func niceStep(top float64, n int) float64 {
	if !(top > 0) {
		return 1
	}
	raw := top / float64(n)
	pow := math.Pow(10, math.Floor(math.Log10(raw)))
	for _, m := range []float64{1, 2, 2.5, 5, 10} {
		if m*pow >= raw {
			return m * pow
		}
	}
	return 10 * pow
}
