package reports

import (
	"archive/zip"
	"fmt"
	"io"
	"math"
	"sort"
	"strconv"
	"strings"
	"time"
	"unicode/utf8"

	"github.com/xuri/excelize/v2"
)

// Workbooks (the WriteXLSX methods) are built by one small builder shared
// by every view:
//
//	b := newWorkbook(&v.Header, "advice per condition")
//	s := b.sheet("Advice", "title line", column{"condition", textCell}, column{"cost (EUR)", moneyCell})
//	s.add("sound", 13677.52)      // one row: strings are text, float64 and int numbers
//	s.add("worn", marked{250.0})  // a cell bold on a tint, which a note explains
//	s.note("Thresholds: ...")     // a wrapped line below the table
//	b.assumptions(facts)          // the Assumptions sheet, always last
//	return b.write(w)
//
// Every sheet starts with the caution (row 1, merged and wrapped), a title
// (row 2) and the column headings (row 3), frozen above the data. Numbers
// are written as numbers with the number format of their column's kind;
// text is written as text, never as a formula. Errors are sticky: the
// first one stops the building and write returns it.

// workbookDate is the created and modified date of every workbook and of
// every entry of its ZIP archive: the earliest date a ZIP entry can carry,
// so that the same inputs give the same bytes; the Assumptions sheet names
// the fixpoint version and the config's SHA-256 instead of a date.
const workbookDate = "1980-01-01T00:00:00Z"

var workbookTime = time.Date(1980, 1, 1, 0, 0, 0, 0, time.UTC)

// datedZip writes the archive of a workbook with every entry dated
// workbookTime (excelize's own writer leaves the date out, which strict
// readers take for an invalid date).
type datedZip struct{ *zip.Writer }

func (z datedZip) Create(name string) (io.Writer, error) {
	return z.CreateHeader(&zip.FileHeader{Name: name, Method: zip.Deflate, Modified: workbookTime})
}

// cellKind says how a number is shown (its number format) and how wide
// its column must be.
type cellKind int

const (
	textCell    cellKind = iota
	moneyCell            // an amount of the model's currency: its ISO 4217 minor unit, thousands grouped
	percentCell          // a rate or a share: 0.00%
	rateCell             // a located rate (switch points): 0.0000%
	factorCell           // a discount factor: six decimals
	countCell            // expected units: two decimals, thousands grouped
	periodsCell          // a duration in periods or years: one decimal
	intCell              // a whole number
	sciCell              // a tolerance, gap or residual: 0.00E+00
	priceCell            // a budget price (present value per currency unit of budget): three decimals
	numberCell           // any other number: General
	numKinds
)

// numberFormat is the number format of kind k; money has moneyDecimals.
func numberFormat(k cellKind, moneyDecimals int) string {
	switch k {
	case moneyCell:
		if moneyDecimals == 0 {
			return "#,##0"
		}
		return "#,##0." + strings.Repeat("0", moneyDecimals)
	case percentCell:
		return "0.00%"
	case rateCell:
		return "0.0000%"
	case factorCell:
		return "0.000000"
	case countCell:
		return "#,##0.00"
	case periodsCell:
		return "0.0"
	case intCell:
		return "0"
	case sciCell:
		return "0.00E+00"
	case priceCell:
		return "#,##0.000"
	}
	return "General"
}

// shown approximates how x prints in kind k, to size its column.
func shown(x float64, k cellKind, moneyDecimals int) string {
	switch k {
	case moneyCell:
		return Money(x, moneyDecimals)
	case percentCell:
		return Percent(x, 2)
	case rateCell:
		return Percent(x, 4)
	case factorCell:
		return Fixed(x, 6)
	case countCell:
		return Money(x, 2)
	case periodsCell:
		return Fixed(x, 1)
	case intCell:
		return Fixed(x, 0)
	case sciCell:
		return "0.00E+00"
	case priceCell:
		return Money(x, 3)
	}
	return strconv.FormatFloat(x, 'g', 10, 64)
}

// column is one column of a sheet: its heading and how its numbers show.
type column struct {
	head string
	kind cellKind
}

// cell is a value with its own kind, for rows whose columns mix kinds
// (the value column of Summary and Assumptions).
type cell struct {
	v    any
	kind cellKind
}

// marked is a cell shown bold on a tint, for a value a note below the
// table explains (a year whose plan changed).
type marked struct{ v any }

// fact is one line of a Summary or Assumptions sheet.
type fact struct {
	item  string
	value any
}

// Layout of every sheet, in rows (1-based) and width units (the width of
// one digit of the default font).
const (
	cautionRow   = 1
	titleRow     = 2
	headRow      = 3
	firstDataRow = 4
	minWidth     = 6.0
	maxWidth     = 60.0
	defaultWidth = 9.14 // a column whose width is not set
	noteWidth    = 100.0
	lineHeight   = 15.0 // points per line of the 11-point font
	titleHeight  = 18.0
	// fontName is the font of every cell: the default font of the
	// spreadsheet template, named on every style so that no reader falls
	// back to another.
	fontName = "Calibri"
	fontSize = 11.0
	// markTint is the fill of a marked cell: the palest colour of the
	// action ramp.
	markTint = "B2D6CC"
)

// workbook is a spreadsheet being built for one view.
type workbook struct {
	f      *excelize.File
	h      *Header
	money  int // decimals of currency amounts
	styles [numKinds]int
	// left are the same styles aligned left, for the value column of the
	// Summary and Assumptions sheets; right is text in a number column;
	// tinted are the styles of marked cells.
	left    [numKinds]int
	tinted  [numKinds]int
	right   int
	wrapped int // wrapped text, top-aligned
	head    int
	title   int
	caution int
	sheets  []*sheet
	err     error
}

// newWorkbook starts a workbook of the view described by h; what names
// the view in the document properties ("advice per condition").
func newWorkbook(h *Header, what string) *workbook {
	f := excelize.NewFile()
	f.SetZipWriter(func(w io.Writer) excelize.ZipWriter { return datedZip{zip.NewWriter(w)} })
	b := &workbook{f: f, h: h, money: MinorUnit(h.Currency)}
	b.try(f.SetDocProps(&excelize.DocProperties{
		Title: h.Model + ": " + what, Subject: what, Creator: "fixpoint", LastModifiedBy: "fixpoint",
		Description: Caution, Language: "en", Created: workbookDate, Modified: workbookDate,
	}))
	b.try(f.SetAppProps(&excelize.AppProperties{Application: "fixpoint"}))
	plain := func() *excelize.Font { return &excelize.Font{Family: fontName, Size: fontSize} }
	bold := func(size float64) *excelize.Font { return &excelize.Font{Family: fontName, Size: size, Bold: true} }
	for k := range numKinds {
		fmtText := numberFormat(k, b.money)
		st := &excelize.Style{Font: plain(), CustomNumFmt: &fmtText, Alignment: &excelize.Alignment{Vertical: "top"}}
		if k == textCell {
			st.CustomNumFmt = nil
		}
		b.styles[k] = b.style(st)
		st.Alignment = &excelize.Alignment{Vertical: "top", Horizontal: "left"}
		b.left[k] = b.style(st)
		st.Alignment = &excelize.Alignment{Vertical: "top"}
		st.Font = bold(fontSize)
		st.Fill = excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{markTint}}
		b.tinted[k] = b.style(st)
	}
	b.right = b.style(&excelize.Style{Font: plain(), Alignment: &excelize.Alignment{Vertical: "top", Horizontal: "right"}})
	b.wrapped = b.style(&excelize.Style{Font: plain(), Alignment: &excelize.Alignment{Vertical: "top", WrapText: true}})
	b.head = b.style(&excelize.Style{
		Font:      bold(fontSize),
		Fill:      excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{"E8EEEC"}},
		Border:    []excelize.Border{{Type: "bottom", Color: "5E6A70", Style: 1}},
		Alignment: &excelize.Alignment{Vertical: "bottom", WrapText: true},
	})
	b.title = b.style(&excelize.Style{Font: bold(12)})
	b.caution = b.style(&excelize.Style{
		Font:      bold(fontSize),
		Fill:      excelize.Fill{Type: "pattern", Pattern: 1, Color: []string{"F7F0DC"}},
		Border:    []excelize.Border{{Type: "left", Color: "B2673E", Style: 5}},
		Alignment: &excelize.Alignment{Vertical: "top", WrapText: true},
	})
	return b
}

func (b *workbook) try(err error) {
	if err != nil && b.err == nil {
		b.err = fmt.Errorf("reports: workbook: %w", err)
	}
}

func (b *workbook) style(s *excelize.Style) int {
	id, err := b.f.NewStyle(s)
	b.try(err)
	return id
}

// sheet is one sheet being written: its columns, the widths its contents
// need and the next free row.
type sheet struct {
	b      *workbook
	name   string
	cols   []column
	widths []float64
	next   int
	// data is the row after the headings (the first data row).
	data int
	// widest caps the width of every column; facts aligns numbers left
	// (a sheet of one figure per row); filter puts a filter on the
	// headings (a long table of one row per period, class and
	// condition).
	widest float64
	facts  bool
	filter bool
	// long are the text cells that may need wrapping; notes the rows of
	// merged notes.
	long  []longText
	notes []longText
}

type longText struct {
	row, col int
	text     string
}

// sheet adds a sheet named name (at most 31 characters, no []:*?/\) with
// the caution, the title and the column headings, frozen above the data.
// A sheet without columns (charts) freezes the caution and the title.
func (b *workbook) sheet(name, title string, cols ...column) *sheet {
	s := &sheet{b: b, name: name, cols: cols, widths: make([]float64, len(cols)), next: firstDataRow, widest: maxWidth}
	if len(cols) == 0 {
		s.next = headRow
	}
	s.data = s.next
	if b.err != nil {
		return s
	}
	if len(b.sheets) == 0 {
		b.try(b.f.SetSheetName("Sheet1", name))
	} else {
		_, err := b.f.NewSheet(name)
		b.try(err)
	}
	b.sheets = append(b.sheets, s)
	s.text(1, cautionRow, "CAUTION: "+Caution, b.caution)
	s.text(1, titleRow, title, b.title)
	for i, c := range cols {
		s.text(i+1, headRow, c.head, b.head)
		s.widths[i] = min(float64(utf8.RuneCountInString(c.head)), 24)
	}
	b.try(b.f.SetRowHeight(name, titleRow, titleHeight))
	// The rows above the data stay in view, and are printed on every
	// page; a printed sheet is one page wide, landscape.
	top, _ := excelize.CoordinatesToCellName(1, s.next)
	b.try(b.f.SetPanes(name, &excelize.Panes{Freeze: true, YSplit: s.next - 1, TopLeftCell: top, ActivePane: "bottomLeft",
		Selection: []excelize.Selection{{SQRef: top, ActiveCell: top, Pane: "bottomLeft"}}}))
	b.try(b.f.SetDefinedName(&excelize.DefinedName{Name: "_xlnm.Print_Titles", Scope: name,
		RefersTo: fmt.Sprintf("%s!$1:$%d", quoteSheet(name), s.next-1)}))
	landscape, wide, tall, fit := "landscape", 1, 0, true
	b.try(b.f.SetPageLayout(name, &excelize.PageLayoutOptions{Orientation: &landscape, FitToWidth: &wide, FitToHeight: &tall}))
	b.try(b.f.SetSheetProps(name, &excelize.SheetPropsOptions{FitToPage: &fit}))
	return s
}

// text writes a text cell (never a formula: excelize stores strings as
// strings, whatever their first character).
func (s *sheet) text(col, row int, v string, style int) {
	b := s.b
	if b.err != nil {
		return
	}
	ref, err := excelize.CoordinatesToCellName(col, row)
	b.try(err)
	b.try(b.f.SetCellStr(s.name, ref, v))
	b.try(b.f.SetCellStyle(s.name, ref, ref, style))
}

// number writes a number cell of kind k; a number that is not finite
// cannot be a spreadsheet number and is written as the text "n/a".
func (s *sheet) number(col, row int, x float64, k cellKind) {
	b := s.b
	if b.err != nil {
		return
	}
	if math.IsNaN(x) || math.IsInf(x, 0) {
		s.text(col, row, "n/a", s.textStyle(k))
		return
	}
	ref, err := excelize.CoordinatesToCellName(col, row)
	b.try(err)
	b.try(b.f.SetCellFloat(s.name, ref, x, -1, 64))
	style := b.styles[k]
	if s.facts {
		style = b.left[k]
	}
	b.try(b.f.SetCellStyle(s.name, ref, ref, style))
}

// textStyle is the style of text in a column of kind k: aligned with the
// numbers of a number column.
func (s *sheet) textStyle(k cellKind) int {
	if k != textCell && !s.facts {
		return s.b.right
	}
	return s.b.styles[textCell]
}

// add writes one row and returns its number. A string is text; a float64
// or an int is a number of the column's kind; a cell carries its own
// kind; a bool is "yes" or "no"; nil leaves the cell empty; marked is
// its value shown bold on a tint.
func (s *sheet) add(vals ...any) int {
	row := s.next
	s.next++
	for i, v := range vals {
		kind := textCell
		if i < len(s.cols) {
			kind = s.cols[i].kind
		}
		m, tint := v.(marked)
		if tint {
			v = m.v
		}
		if c, ok := v.(cell); ok {
			v, kind = c.v, c.kind
		}
		var width float64
		switch x := v.(type) {
		case nil:
			continue
		case bool:
			v := "no"
			if x {
				v = "yes"
			}
			s.text(i+1, row, v, s.textStyle(kind))
			width = float64(len(v))
		case string:
			s.text(i+1, row, x, s.textStyle(kind))
			width = float64(utf8.RuneCountInString(x))
			if width > s.widest {
				s.long = append(s.long, longText{row, i + 1, x})
			}
		case int:
			s.number(i+1, row, float64(x), kind)
			width = float64(len(strconv.Itoa(x)))
		case float64:
			s.number(i+1, row, x, kind)
			width = float64(len(shown(x, kind, s.b.money)))
		default:
			panic(fmt.Sprintf("reports: workbook cell of type %T", v))
		}
		if tint {
			s.tint(i+1, row, kind)
		}
		if i < len(s.widths) {
			s.widths[i] = max(s.widths[i], width)
		}
	}
	return row
}

// tint gives cell (col, row) of kind k the marked style.
func (s *sheet) tint(col, row int, k cellKind) {
	if s.b.err != nil {
		return
	}
	ref, err := excelize.CoordinatesToCellName(col, row)
	s.b.try(err)
	s.b.try(s.b.f.SetCellStyle(s.name, ref, ref, s.b.tinted[k]))
}

// note writes a line of text below the table, merged across the sheet and
// wrapped; the first note is preceded by an empty row, which ends the
// table for a reader.
func (s *sheet) note(text string) {
	if len(s.notes) == 0 {
		s.next++
	}
	s.text(1, s.next, text, s.b.wrapped)
	s.notes = append(s.notes, longText{s.next, 1, text})
	s.next++
}

// ref is the absolute reference of column col (1-based), rows from..to,
// with the sheet's name: 'By year'!$C$4:$C$13.
func (s *sheet) ref(col, from, to int) string {
	a, _ := excelize.CoordinatesToCellName(col, from, true)
	z, _ := excelize.CoordinatesToCellName(col, to, true)
	return quoteSheet(s.name) + "!" + a + ":" + z
}

// cellRef is the absolute reference of one cell: 'By year'!$C$3.
func (s *sheet) cellRef(col, row int) string {
	a, _ := excelize.CoordinatesToCellName(col, row, true)
	return quoteSheet(s.name) + "!" + a
}

func quoteSheet(name string) string { return "'" + strings.ReplaceAll(name, "'", "''") + "'" }

// chart places a native chart with its top-left corner at cell (col, row);
// combo are charts of other types drawn over it on the same axes.
func (s *sheet) chart(col, row int, c *excelize.Chart, combo ...*excelize.Chart) {
	if s.b.err != nil {
		return
	}
	ref, err := excelize.CoordinatesToCellName(col, row)
	s.b.try(err)
	s.b.try(s.b.f.AddChart(s.name, ref, c, combo...))
}

// finish sets the column widths, merges the caution and the notes across
// the sheet and sizes the rows of wrapped text.
func (s *sheet) finish() {
	b := s.b
	widths := make([]float64, len(s.widths))
	for i, w := range s.widths {
		pad := 2.0 // a digit's width each side
		if s.cols[i].kind != textCell {
			pad = 3 // a right-aligned number keeps clear of the text beside it
		}
		widths[i] = math.Min(math.Max(w+pad, minWidth), s.widest)
		name, _ := excelize.ColumnNumberToName(i + 1)
		b.try(b.f.SetColWidth(s.name, name, name, widths[i]))
	}
	// The caution and the notes span the table, and at least noteWidth.
	span, total := len(widths), 0.0
	for _, w := range widths {
		total += w
	}
	for ; total < noteWidth; span++ {
		total += defaultWidth
	}
	last, _ := excelize.ColumnNumberToName(max(span, 1))
	for _, n := range append([]longText{{cautionRow, 1, "CAUTION: " + Caution}}, s.notes...) {
		if span > 1 {
			b.try(b.f.MergeCell(s.name, fmt.Sprintf("A%d", n.row), fmt.Sprintf("%s%d", last, n.row)))
		}
		b.try(b.f.SetRowHeight(s.name, n.row, lineHeight*lines(n.text, total)))
	}
	heights := map[int]float64{}
	for _, t := range s.long {
		w := widths[t.col-1]
		if float64(utf8.RuneCountInString(t.text)) <= w {
			continue
		}
		ref, _ := excelize.CoordinatesToCellName(t.col, t.row)
		b.try(b.f.SetCellStyle(s.name, ref, ref, b.wrapped))
		heights[t.row] = max(heights[t.row], lineHeight*lines(t.text, w))
	}
	for _, t := range s.long { // in row order, so that no map order reaches the file
		if h, ok := heights[t.row]; ok {
			b.try(b.f.SetRowHeight(s.name, t.row, h))
			delete(heights, t.row)
		}
	}
	if s.filter && s.next > s.data && len(s.cols) > 0 {
		last, _ := excelize.CoordinatesToCellName(len(s.cols), s.data+s.rows()-1)
		b.try(b.f.AutoFilter(s.name, fmt.Sprintf("A%d:%s", headRow, last), nil))
	}
	if len(s.cols) > 0 {
		rows := 1.0
		for i, c := range s.cols {
			rows = max(rows, lines(c.head, widths[i]))
		}
		b.try(b.f.SetRowHeight(s.name, headRow, lineHeight*rows))
	}
}

// lines estimates how many lines text takes wrapped in a width of w
// units (a digit of the default font; text runs about 10% narrower).
func lines(text string, w float64) float64 {
	n := float64(utf8.RuneCountInString(text))
	return math.Max(1, math.Ceil(n/(1.1*w-1)))
}

// rows is the number of rows of the table (the notes excluded).
func (s *sheet) rows() int {
	if len(s.notes) > 0 {
		return s.notes[0].row - 1 - s.data
	}
	return s.next - s.data
}

// summary adds a sheet of figures: one per row, with its value (a cell
// for a number of its own kind) and what the value is; notes may follow.
func (b *workbook) summary(title string, facts []fact) *sheet {
	s := b.sheet("Summary", title, column{"figure", textCell}, column{"value", numberCell})
	s.facts = true
	for _, f := range facts {
		s.add(f.item, f.value)
	}
	return s
}

// assumptions adds the Assumptions sheet: what the model is and where it
// came from (header), how the numbers were found (facts), then the
// caution and the model's limits.
func (b *workbook) assumptions(facts []fact) {
	h := b.h
	orNone := func(s string) string {
		if s == "" {
			return "(not recorded)"
		}
		return s
	}
	all := []fact{
		{"model", h.Model},
		{"config file", orNone(h.Source)},
		{"config SHA-256", orNone(h.SHA256)},
		{"fixpoint version", orNone(h.Version)},
		{"currency", fmt.Sprintf("%s (amounts shown with %d decimals, the ISO 4217 minor unit; 2 for a code not in ISO 4217)", h.Currency, b.money)},
	}
	if h.Period.Valid() {
		all = append(all, fact{"period (years)", cell{h.periodYears(), numberCell}})
	}
	all = append(all, facts...)
	all = append(all, fact{"caution", Caution}, fact{"model limits", ModelLimits})
	s := b.sheet("Assumptions", h.Model+": what the numbers rest on", column{"item", textCell}, column{"value", textCell})
	s.widest, s.facts = noteWidth, true // long texts wrap in a wide column
	for _, f := range all {
		s.add(f.item, f.value)
	}
}

// discountFacts states the discounting of the header.
func (h *Header) discountFacts() []fact {
	var out []fact
	if r, ok := h.rate(); ok {
		out = append(out, fact{"discount rate per year", cell{r, percentCell}})
	}
	return append(out, fact{"discount factor per period", cell{h.Discount.Factor(), factorCell}},
		fact{"timing", "costs are charged at the start of each period"})
}

// write finishes every sheet and writes the workbook, the first sheet
// active.
func (b *workbook) write(w io.Writer) error {
	defer b.f.Close()
	for _, s := range b.sheets {
		s.finish()
	}
	if b.err != nil {
		return b.err
	}
	b.f.SetActiveSheet(0)
	// excelize adds the image types of a drawing's content types in map
	// order (AddChart, v2.11.1): sort them, so that a workbook with charts
	// has the same bytes every time.
	if ct := b.f.ContentTypes; ct != nil {
		d := ct.Defaults
		sort.Slice(d, func(i, j int) bool { return d[i].Extension < d[j].Extension })
	}
	if err := b.f.Write(w); err != nil {
		return fmt.Errorf("reports: workbook: %w", err)
	}
	return nil
}
