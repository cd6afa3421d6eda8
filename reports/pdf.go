package reports

import (
	"fmt"
	"io"
	"math"
	"time"

	"github.com/jung-kurt/gofpdf"
	"golang.org/x/image/font/gofont/gobold"
	"golang.org/x/image/font/gofont/goregular"
)

// Page geometry of a brief, in millimetres (A4 portrait).
const (
	pageW, pageH   = 210.0, 297.0
	marginX        = 18.0
	marginTop      = 20.0
	footerH        = 26.0 // the caution box
	footerGap      = 6.0
	contentW       = pageW - 2*marginX
	contentBottom  = pageH - marginTop/2 - footerH - footerGap
	bodySize       = 9.5
	smallSize      = 8.0
	lineH          = 4.6
	fontFamily     = "go"
	tableRuleGrey  = 190
	tableHeadShade = 236
)

// rgb is a colour of a brief's palette.
type rgb struct{ R, G, B int }

// ink is the text colour; muted is for secondary text.
var (
	ink   = rgb{28, 28, 36}
	muted = rgb{96, 96, 104}
)

// doc wraps a gofpdf document with the brief's fonts, header, caution
// footer and layout helpers. Errors are sticky in gofpdf; doc checks them
// once, in output.
type doc struct {
	pdf    *gofpdf.Fpdf
	header string
}

// newDoc starts an A4 document with the Go fonts (UTF-8, so "€" and
// accented names print), fixed dates and sorted catalog for byte-identical
// output, and the caution box on every page.
func newDoc(title, header string, date time.Time) *doc {
	pdf := gofpdf.New("P", "mm", "A4", "")
	pdf.AddUTF8FontFromBytes(fontFamily, "", goregular.TTF)
	pdf.AddUTF8FontFromBytes(fontFamily, "B", gobold.TTF)
	pdf.SetCreationDate(date)
	pdf.SetModificationDate(date)
	pdf.SetCatalogSort(true)
	pdf.SetTitle(title, true)
	pdf.SetCreator("fixpoint", true)
	pdf.SetProducer("fixpoint", true)
	pdf.SetMargins(marginX, marginTop, marginX)
	pdf.SetAutoPageBreak(true, pageH-contentBottom)
	pdf.AliasNbPages("{nb}")
	d := &doc{pdf: pdf, header: header}
	pdf.SetHeaderFunc(d.drawHeader)
	pdf.SetFooterFunc(d.drawFooter)
	return d
}

func (d *doc) drawHeader() {
	p := d.pdf
	d.font("", smallSize, muted)
	p.SetXY(marginX, 9)
	p.CellFormat(contentW, 4, d.header, "", 0, "L", false, 0, "")
	p.SetDrawColor(tableRuleGrey, tableRuleGrey, tableRuleGrey)
	p.SetLineWidth(0.2)
	p.Line(marginX, 14, pageW-marginX, 14)
	p.SetXY(marginX, marginTop)
}

// drawFooter draws the caution box and the page number.
func (d *doc) drawFooter() {
	p := d.pdf
	y := pageH - marginTop/2 - footerH
	p.SetDrawColor(ink.R, ink.G, ink.B)
	p.SetLineWidth(0.5)
	p.SetFillColor(250, 247, 238)
	p.Rect(marginX, y, contentW, footerH-5, "FD")
	p.SetXY(marginX+2.5, y+2)
	d.font("B", smallSize, ink)
	p.CellFormat(contentW-5, 3.6, "CAUTION: advisory only", "", 2, "L", false, 0, "")
	d.font("", 7.2, ink)
	p.SetX(marginX + 2.5)
	p.MultiCell(contentW-5, 3.2, briefCaution, "", "L", false)
	d.font("", smallSize, muted)
	p.SetXY(marginX, pageH-marginTop/2-4)
	p.CellFormat(contentW, 4, fmt.Sprintf("page %d of {nb}", p.PageNo()), "", 0, "R", false, 0, "")
}

// briefCaution is the footer text of every page of a brief.
const briefCaution = "This brief is decision support from a model, not an instruction. Statutory and safety " +
	"inspections, lifting and pressure equipment rules and other local regulation take precedence; a competent " +
	"or licensed inspector's finding overrides this advice. States marked unsafe require action before further use. " +
	ModelLimits

func (d *doc) font(style string, size float64, c rgb) {
	d.pdf.SetFont(fontFamily, style, size)
	d.pdf.SetTextColor(c.R, c.G, c.B)
}

// title starts a page with the brief's title, the model name and the date.
func (d *doc) title(text, model string, date time.Time) {
	p := d.pdf
	p.AddPage()
	d.font("B", 18, ink)
	p.MultiCell(contentW, 8, text, "", "L", false)
	d.font("B", 12, ink)
	p.MultiCell(contentW, 6, model, "", "L", false)
	d.font("", bodySize, muted)
	p.MultiCell(contentW, lineH, "Date: "+date.Format("2 January 2006")+"   ·   prepared with fixpoint (decision support)", "", "L", false)
	p.Ln(2)
}

// heading writes a section heading, starting a new page when fewer than
// need millimetres are left below it.
func (d *doc) heading(text string, need float64) {
	p := d.pdf
	if p.GetY()+need > contentBottom {
		p.AddPage()
	}
	p.Ln(2)
	d.font("B", 12, ink)
	p.MultiCell(contentW, 6, text, "", "L", false)
	p.Ln(1)
}

// paragraph writes wrapped body text.
func (d *doc) paragraph(text string) {
	d.font("", bodySize, ink)
	d.pdf.MultiCell(contentW, lineH, text, "", "L", false)
	d.pdf.Ln(1.5)
}

// pdfTable is a table of wrapped text cells.
type pdfTable struct {
	header []string
	// widths are relative; they are scaled to the content width.
	widths []float64
	// right marks right-aligned (numeric) columns.
	right []bool
	rows  [][]string
	// shade, when not nil, gives a row's fill colour (nil entry: none).
	shade []*rgb
}

// table draws t with wrapped cells, repeating the header after a page
// break. Long names wrap inside their column instead of overflowing.
func (d *doc) table(t pdfTable) {
	p := d.pdf
	total := 0.0
	for _, w := range t.widths {
		total += w
	}
	widths := make([]float64, len(t.widths))
	for i, w := range t.widths {
		widths[i] = w / total * contentW
	}
	const pad, lh = 0.9, 3.6
	headShade := &rgb{tableHeadShade, tableHeadShade, tableHeadShade}
	var drawRow func(cells []string, header bool, fill *rgb)
	drawRow = func(cells []string, header bool, fill *rgb) {
		style := ""
		if header {
			style = "B"
		}
		d.font(style, smallSize, ink)
		lines := make([][]string, len(cells))
		n := 1
		for i, c := range cells {
			lines[i] = p.SplitText(c, widths[i]-2*pad)
			n = max(n, len(lines[i]))
		}
		h := float64(n)*lh + 2*pad
		if p.GetY()+h > contentBottom {
			p.AddPage()
			if !header {
				drawRow(t.header, true, headShade)
				d.font(style, smallSize, ink)
			}
		}
		x, y := marginX, p.GetY()
		if fill != nil {
			p.SetFillColor(fill.R, fill.G, fill.B)
			p.Rect(x, y, contentW, h, "F")
		}
		for i := range cells {
			align := "L"
			if i < len(t.right) && t.right[i] {
				align = "R"
			}
			for k, line := range lines[i] {
				p.SetXY(x+pad, y+pad+float64(k)*lh)
				p.CellFormat(widths[i]-2*pad, lh, line, "", 0, align, false, 0, "")
			}
			x += widths[i]
		}
		p.SetDrawColor(tableRuleGrey, tableRuleGrey, tableRuleGrey)
		p.SetLineWidth(0.2)
		p.Line(marginX, y+h, marginX+contentW, y+h)
		p.SetXY(marginX, y+h)
	}
	drawRow(t.header, true, headShade)
	for i, r := range t.rows {
		var fill *rgb
		if i < len(t.shade) {
			fill = t.shade[i]
		}
		drawRow(r, false, fill)
	}
	p.Ln(2)
}

// output writes the PDF to w, reporting the first error gofpdf met.
func (d *doc) output(w io.Writer) error {
	if err := d.pdf.Error(); err != nil {
		return fmt.Errorf("reports: PDF: %w", err)
	}
	if err := d.pdf.Output(w); err != nil {
		return fmt.Errorf("reports: PDF: %w", err)
	}
	return nil
}

// niceStep returns a round tick step (1, 2 or 5 times a power of ten) for
// an axis from 0 to top with about n ticks.
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
