package reports

// Tables of a brief: columns measured and grouped, rows broken across
// pages with their header repeated, numbers never broken.

import (
	"math"
	"strings"
)

// pdfTable is a table of wrapped text cells.
type pdfTable struct {
	// title is the table's title, printed above it by the caller and
	// repeated with "(continued)" above every part on a later page.
	title  string
	header []string
	// widths are relative; they are scaled to the content width, and
	// widened where a column's numbers or words would not fit.
	widths []float64
	// right marks right-aligned (numeric) columns, decimal columns aligned
	// on the decimal point; the cells of both never break.
	right   []bool
	decimal []bool
	rows    [][]string
	// shade, when not nil, gives a row's fill colour (nil entry: none).
	shade []*rgb
	// bold, when not nil, marks cells printed bold (row, column).
	bold [][]bool
	// keep is the number of leading columns repeated in each part when
	// the columns do not fit the page together (at least 1).
	keep int
	// minW is the narrowest each column can be (set by layoutColumns).
	minW []float64
}

func (t *pdfTable) numeric(i int) bool {
	return (i < len(t.right) && t.right[i]) || (i < len(t.decimal) && t.decimal[i])
}

// cellPad and cellLH are the padding and line height of table cells.
const cellPad, cellLH = 0.9, 3.6

// wordCap is the widest a column grows for one word before the word
// hyphenates.
const wordCap = 30.0

// layoutColumns returns the column widths of t, in groups of columns
// that fit the content width together (each group with the kept
// leading columns), or one group when all fit.
func (d *doc) layoutColumns(t *pdfTable) [][]int {
	n := len(t.header)
	minW := make([]float64, n)
	for i := range n {
		d.font("B", smallSize, ink)
		minW[i] = d.minWidth(t.header[i], wordCap)
		d.font("", smallSize, ink)
		for _, r := range t.rows {
			if t.numeric(i) {
				minW[i] = math.Max(minW[i], d.width(r[i]))
			} else {
				minW[i] = math.Max(minW[i], d.minWidth(r[i], wordCap))
			}
		}
		minW[i] += 2*cellPad + 0.4
	}
	t.minW = minW
	keep := max(t.keep, 1)
	total := 0.0
	for _, w := range minW {
		total += w
	}
	all := make([]int, n)
	for i := range all {
		all[i] = i
	}
	if total <= contentW || n <= keep+1 {
		return [][]int{all}
	}
	var groups [][]int
	lead := 0.0
	for i := range keep {
		lead += minW[i]
	}
	cur, w := all[:keep:keep], lead
	for i := keep; i < n; i++ {
		if w+minW[i] > contentW && len(cur) > keep {
			groups = append(groups, cur)
			cur, w = all[:keep:keep], lead
		}
		cur = append(cur, i)
		w += minW[i]
	}
	groups = append(groups, cur)
	if even := evenGroups(minW, keep, len(groups)); even != nil {
		return even
	}
	return groups
}

// evenGroups splits the columns after the keep leading ones into g parts
// of nearly equal count (the first parts one larger), each with the
// leading columns; nil when a part would not fit the content width.
func evenGroups(minW []float64, keep, g int) [][]int {
	rest := len(minW) - keep
	var groups [][]int
	next := keep
	for k := range g {
		size := rest / g
		if k < rest%g {
			size++
		}
		part := make([]int, 0, keep+size)
		w := 0.0
		for i := range keep {
			part = append(part, i)
			w += minW[i]
		}
		for i := next; i < next+size; i++ {
			part = append(part, i)
			w += minW[i]
		}
		if w > contentW && size > 1 {
			return nil
		}
		groups = append(groups, part)
		next += size
	}
	return groups
}

// widthsOf scales the relative widths of cols to the content width and
// raises any column below its minimum, taking the room from the columns
// with slack.
func widthsOf(t *pdfTable, cols []int) []float64 {
	rel := make([]float64, len(cols))
	total := 0.0
	for k, c := range cols {
		rel[k] = 1
		if c < len(t.widths) {
			rel[k] = t.widths[c]
		}
		total += rel[k]
	}
	w := make([]float64, len(cols))
	for k := range cols {
		w[k] = rel[k] / total * contentW
	}
	for range 4 {
		deficit, slack := 0.0, 0.0
		for k, c := range cols {
			if w[k] < t.minW[c] {
				deficit += t.minW[c] - w[k]
				w[k] = t.minW[c]
			} else {
				slack += w[k] - t.minW[c]
			}
		}
		if deficit == 0 || slack == 0 {
			break
		}
		f := math.Min(1, deficit/slack)
		for k, c := range cols {
			if w[k] > t.minW[c] {
				w[k] -= (w[k] - t.minW[c]) * f
			}
		}
	}
	return w
}

// tableRow is one laid-out row: its wrapped lines per cell and height.
type tableRow struct {
	lines [][]string
	h     float64
}

func (d *doc) layRow(t *pdfTable, cells []string, cols []int, w []float64, header bool, row int) tableRow {
	r := tableRow{lines: make([][]string, len(cols))}
	n := 1
	for k, c := range cols {
		d.font(t.style(row, c, header), smallSize, ink)
		if t.numeric(c) && !header {
			r.lines[k] = []string{cells[c]}
		} else {
			r.lines[k] = d.wrap(cells[c], w[k]-2*cellPad)
		}
		n = max(n, len(r.lines[k]))
	}
	r.h = float64(n)*cellLH + 2*cellPad
	return r
}

func (t *pdfTable) style(row, col int, header bool) string {
	if header || (row >= 0 && row < len(t.bold) && col < len(t.bold[row]) && t.bold[row][col]) {
		return "B"
	}
	return ""
}

// table draws t, starting a new page (with the header repeated) when a
// row does not fit, and in parts of columns when they do not fit the
// page together.
func (d *doc) table(t pdfTable) {
	for _, cols := range d.layoutColumns(&t) {
		d.tablePart(&t, cols, 0, contentBottom, 0)
	}
	d.setY(d.y() + 2)
}

// tableHeight is the height of the header and the first n rows of t
// (columns of the first part).
func (d *doc) tableHeight(t *pdfTable, n int) float64 {
	cols := d.layoutColumns(t)[0]
	w := widthsOf(t, cols)
	h := d.layRow(t, t.header, cols, w, true, -1).h
	for i := range min(n, len(t.rows)) {
		h += d.layRow(t, t.rows[i], cols, w, false, i).h
	}
	return h
}

// tableUntil draws the rows of t from row from that fit above limit on
// the current page (at least minRows of them, or none), and returns the
// index of the first row not drawn. It draws every column together; use
// it for tables whose columns fit the page.
func (d *doc) tableUntil(t *pdfTable, from int, limit float64, minRows int) int {
	groups := d.layoutColumns(t)
	return d.tablePart(t, groups[0], from, limit, minRows)
}

// minPartRows is the fewest rows a part of a table holds on a page when
// the table breaks; a table of fewer than twice as many rows does not
// break (it moves whole).
const minPartRows = 3

// splitAt returns how many of the n rows left of a table to draw on this
// page when fit of them fit: all when all fit, else as many as fit while
// leaving at least minPartRows for the next page, or 0 (the rest moves)
// when that leaves fewer than minPartRows here.
func splitAt(n, fit int) int {
	if fit >= n {
		return n
	}
	k := min(fit, n-minPartRows)
	if k < minPartRows {
		return 0
	}
	return k
}

// rowsFitting is how many rows of t from row from fit between y and
// limit under the header, with columns cols.
func (d *doc) rowsFitting(t *pdfTable, cols []int, from int, y, limit float64) int {
	w := widthsOf(t, cols)
	y += d.layRow(t, t.header, cols, w, true, -1).h
	n := 0
	for i := from; i < len(t.rows); i++ {
		y += d.layRow(t, t.rows[i], cols, w, false, i).h
		if y > limit {
			break
		}
		n++
	}
	return n
}

// tablePart draws columns cols of the rows from row from. With minRows 0
// it breaks pages as needed and draws every row; otherwise it stops at
// limit and returns the first row not drawn (len(rows) when all are).
// Every part on a page holds at least minPartRows rows unless the whole
// table is shorter; a part on a later page repeats the title with
// "(continued)" and the header row.
func (d *doc) tablePart(t *pdfTable, cols []int, from int, limit float64, minRows int) int {
	w := widthsOf(t, cols)
	head := d.layRow(t, t.header, cols, w, true, -1)
	rows := make([]tableRow, len(t.rows))
	for i := from; i < len(t.rows); i++ {
		rows[i] = d.layRow(t, t.rows[i], cols, w, false, i)
	}
	bounded := minRows > 0
	cont := ""
	if t.title != "" {
		cont = t.title + " (continued)"
	}
	i := from
	title := ""
	if from > 0 {
		title = cont
	}
	for i < len(t.rows) {
		y := d.y() + head.h
		if title != "" {
			y += d.headingBlock(title, false)
		}
		fit := 0
		for end := i; end < len(t.rows) && y+rows[end].h <= limit; end++ {
			y += rows[end].h
			fit++
		}
		k := splitAt(len(t.rows)-i, fit)
		if k == 0 {
			if bounded {
				return i
			}
			if d.y() > marginTop+1 {
				d.pdf.AddPage()
				if i > 0 {
					title = cont
				}
				continue
			}
			k = max(fit, 1) // a part taller than a page
		}
		if title != "" {
			d.headingBlock(title, true)
		}
		top := d.y()
		d.drawRow(t, t.header, cols, w, head, true, -1)
		end := i + k
		for ; i < end; i++ {
			d.drawRow(t, t.rows[i], cols, w, rows[i], false, i)
		}
		total := 0.0
		for _, x := range w {
			total += x
		}
		d.blocks = append(d.blocks, Block{Kind: "table", Page: d.pdf.PageNo(), X: marginX, Y: top, W: total, H: d.y() - top,
			Of: t.title, Title: title, Header: true, From: end - k, Rows: k, Total: len(t.rows)})
		if i < len(t.rows) {
			if bounded {
				return i
			}
			d.pdf.AddPage()
			title = cont
		}
	}
	return i
}

func (d *doc) drawRow(t *pdfTable, cells []string, cols []int, w []float64, r tableRow, header bool, row int) {
	p := d.pdf
	y := d.y()
	var fill *rgb
	if header {
		fill = &rgb{tableHeadShade, tableHeadShade, tableHeadShade}
	} else if row < len(t.shade) {
		fill = t.shade[row]
	}
	total := 0.0
	for _, x := range w {
		total += x
	}
	if fill != nil {
		p.SetFillColor(fill.R, fill.G, fill.B)
		p.Rect(marginX, y, total, r.h, "F")
	}
	x := marginX
	for k, c := range cols {
		d.font(t.style(row, c, header), smallSize, ink)
		align := "L"
		if t.numeric(c) {
			align = "R"
		}
		if !header && c < len(t.decimal) && t.decimal[c] {
			d.decimalCell(x, y+cellPad, w[k]-2*cellPad, cells[c], t, c)
		} else {
			for j, line := range r.lines[k] {
				d.putAligned(x+cellPad, y+cellPad+float64(j)*cellLH, w[k]-2*cellPad, cellLH, line, align)
			}
		}
		x += w[k]
	}
	p.SetDrawColor(tableRuleGrey, tableRuleGrey, tableRuleGrey)
	p.SetLineWidth(0.2)
	p.Line(marginX, y+r.h, marginX+total, y+r.h)
	d.setY(y + r.h)
}

// decimalCell draws a number with its decimal point where the widest
// fraction of column c puts it, so that a column of numbers with
// different decimals lines up.
func (d *doc) decimalCell(x, y, w float64, s string, t *pdfTable, c int) {
	frac := 0.0
	for _, r := range t.rows {
		if i := strings.IndexByte(r[c], '.'); i >= 0 {
			frac = math.Max(frac, d.width(r[c][i:]))
		}
	}
	point := x + w - frac
	whole, rest := s, ""
	if i := strings.IndexByte(s, '.'); i >= 0 {
		whole, rest = s[:i], s[i:]
	}
	d.put(point-d.width(whole), y, cellLH, whole+rest)
}
