package reports

import "unicode/utf8"

// The pieces of a brief's later pages: a page title, a table given as
// data (PageTable), a whole page given as data (Page) and the list of
// the files a brief was made from.

// pageTitle starts a new page with a title (wrapped when long).
func (d *doc) pageTitle(title string) {
	d.pdf.AddPage()
	d.titleLines(title)
}

// titleLines draws a page or part title at the current position.
func (d *doc) titleLines(title string) {
	d.font("B", 12, ink)
	y := d.y()
	for _, l := range d.wrap(title, contentW) {
		d.put(marginX, y, 6, l)
		y += 6
	}
	d.setY(y + 1)
}

// section starts a part of a brief: on a page of its own, or, when onPage
// is true (the page holds only the end of an earlier part), below it
// with the title as a heading when enough room is left.
func (d *doc) section(title string, onPage bool, need float64) {
	if !onPage || d.y()+need+8 > contentBottom {
		d.pageTitle(title)
		return
	}
	d.setY(d.y() + 2)
	d.titleLines(title)
}

// headedTable draws a heading and a table kept together: the whole table
// when it takes at most a third of a page, else the heading with the
// first three rows.
func (d *doc) headedTable(title string, t pdfTable) {
	h := d.tableHeight(&t, len(t.rows))
	if h > (contentBottom-marginTop)/3 {
		h = d.tableHeight(&t, 3)
	}
	d.need(d.headingBlock(title, false) + h)
	d.headingBlock(title, true)
	t.title = title
	d.table(t)
}

// pdfTableOf lays out a PageTable: headers capitalised, numbers
// right-aligned and never broken, each column's width to start with in
// proportion to its longest cell or half its header (text between 8 and
// 40 characters, numbers up to 20), and widthsOf then widens any column
// to its longest number or word.
func pdfTableOf(t PageTable, keep int) pdfTable {
	out := pdfTable{rows: t.Rows, keep: keep}
	for i, h := range t.Header {
		num := i < len(t.Numeric) && t.Numeric[i]
		out.header = append(out.header, capitalize(h))
		out.right = append(out.right, num)
		longest := (utf8.RuneCountInString(h) + 1) / 2
		for _, r := range t.Rows {
			longest = max(longest, utf8.RuneCountInString(r[i]))
		}
		if num {
			longest = min(longest, 20)
		} else {
			longest = min(max(longest, 8), 40)
		}
		out.widths = append(out.widths, float64(longest))
	}
	return out
}

// pageTable draws a PageTable: its caption (when given) as a paragraph,
// the table, and its note on what the columns mean.
func (d *doc) pageTable(t PageTable) {
	if t.Caption != "" {
		d.need(d.paragraphBlock(t.Caption, bodySize, ink, lineH, false) + 20)
		d.paragraph(t.Caption)
	}
	d.table(pdfTableOf(t, 1))
	if t.Note != "" {
		d.note(t.Note)
	}
}

// drawPage draws a Page: the title, the paragraphs, the tables and the
// notes, on a page of its own or, when onPage, below what the current
// page holds if room is left. It reports whether it ran onto another
// page.
func (d *doc) drawPage(pg Page, onPage bool) (spilled bool) {
	d.section(pg.Title, onPage, 50)
	start := d.pdf.PageNo()
	for _, p := range pg.Paragraphs {
		d.paragraph(p)
	}
	for _, t := range pg.Tables {
		d.setY(d.y() + 1)
		d.pageTable(t)
	}
	for _, n := range pg.Notes {
		d.note(n)
	}
	return d.pdf.PageNo() > start
}

// SourceFile is one file a brief was made from: what it is ("fleet
// file", "class config", "inventory"), its path and its SHA-256.
type SourceFile struct {
	Role, Path, SHA256 string
}

// sourceLines draws the files a brief was made from, each with its
// SHA-256 on a line of its own (a digest never breaks).
func (d *doc) sourceLines(files []SourceFile) {
	for _, f := range files {
		d.need(2 * 3.8)
		d.note(f.Role + ": " + f.Path)
		d.setY(d.y() - 1.2)
		d.note("SHA-256 " + f.SHA256)
	}
}
