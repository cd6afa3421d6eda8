package reports

import (
	"encoding/csv"
	"io"
	"math"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"

	"github.com/olekukonko/tablewriter"
	"github.com/olekukonko/tablewriter/tw"
)

// Money formats x with the given number of decimals, "." as the decimal
// point and "," between groups of thousands: Money(-1234.5, 2) is
// "-1,234.50". Non-finite numbers print as "n/a".
func Money(x float64, decimals int) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return "n/a"
	}
	s := strconv.FormatFloat(math.Abs(x), 'f', decimals, 64)
	intPart, frac, _ := strings.Cut(s, ".")
	var b strings.Builder
	if x < 0 && strings.Trim(s, "0.") != "" {
		b.WriteByte('-')
	}
	for i, r := range intPart {
		if i > 0 && (len(intPart)-i)%3 == 0 {
			b.WriteByte(',')
		}
		b.WriteRune(r)
	}
	if frac != "" {
		b.WriteByte('.')
		b.WriteString(frac)
	}
	return b.String()
}

// Percent formats a fraction as a percentage with the given decimals:
// Percent(0.035, 2) is "3.50%".
func Percent(x float64, decimals int) string {
	s := strconv.FormatFloat(100*x, 'f', decimals, 64)
	if strings.Trim(s, "-0.") == "" {
		s = strings.TrimPrefix(s, "-") // no "-0.000%"
	}
	return s + "%"
}

// Fixed formats x with the given number of decimals and no grouping.
func Fixed(x float64, decimals int) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return "n/a"
	}
	return strconv.FormatFloat(x, 'f', decimals, 64)
}

// table renders a terminal table: header, rows, numbers right-aligned in
// the columns marked true in numeric.
func table(w io.Writer, header []string, numeric []bool, rows [][]string) error {
	align := make([]tw.Align, len(header))
	for i := range align {
		align[i] = tw.AlignLeft
		if i < len(numeric) && numeric[i] {
			align[i] = tw.AlignRight
		}
	}
	t := tablewriter.NewTable(w,
		tablewriter.WithHeaderAutoFormat(tw.Off),
		tablewriter.WithHeaderAlignmentConfig(tw.CellAlignment{PerColumn: align}),
		tablewriter.WithRowAlignmentConfig(tw.CellAlignment{PerColumn: align}),
	)
	t.Header(printable(header))
	for _, r := range rows {
		if err := t.Append(printable(r)); err != nil {
			return err
		}
	}
	return t.Render()
}

// printable returns a copy of cells made Printable.
func printable(cells []string) []string {
	out := make([]string, len(cells))
	for i, c := range cells {
		out[i] = Printable(c)
	}
	return out
}

// Printable escapes control characters (terminal escape sequences,
// newlines) as Go's %q would, so that text from data files never reaches
// a terminal raw.
func Printable(s string) string {
	if strings.IndexFunc(s, unicode.IsControl) < 0 {
		return s
	}
	var b strings.Builder
	for _, r := range s {
		if unicode.IsControl(r) {
			q := strconv.QuoteRune(r)
			b.WriteString(q[1 : len(q)-1])
			continue
		}
		b.WriteRune(r)
	}
	return b.String()
}

// stateLabel is the name of state s, marked when the state is unsafe.
func stateLabel(states []string, unsafe []bool, s int) string {
	if unsafe[s] {
		return states[s] + " (unsafe)"
	}
	return states[s]
}

// joinOr joins names as "a", "a or b", "a, b or c".
func joinOr(names []string) string {
	switch len(names) {
	case 0:
		return ""
	case 1:
		return names[0]
	}
	return strings.Join(names[:len(names)-1], ", ") + " or " + names[len(names)-1]
}

// lineWidth is the width at which notes below tables are wrapped.
const lineWidth = 100

// writeLines writes each line wrapped at lineWidth on word boundaries;
// continuation lines are indented by two spaces.
func writeLines(w io.Writer, lines []string) error {
	var b strings.Builder
	for _, line := range lines {
		wrap(&b, line, lineWidth)
	}
	_, err := io.WriteString(w, b.String())
	return err
}

func wrap(b *strings.Builder, line string, width int) {
	col := 0
	for i, word := range strings.Fields(line) {
		switch {
		case i == 0:
		case col+1+utf8.RuneCountInString(word) > width:
			b.WriteString("\n  ")
			col = 2
		default:
			b.WriteByte(' ')
			col++
		}
		b.WriteString(word)
		col += utf8.RuneCountInString(word)
	}
	b.WriteByte('\n')
}

// csvWriter is a CSV writer that neutralises cells a spreadsheet would run
// as a formula: text (not a number) that starts with "=", "+", "-", "@",
// a tab or a carriage return gets a leading "'" (OWASP, "CSV Injection").
type csvWriter struct{ *csv.Writer }

func newCSV(w io.Writer) csvWriter { return csvWriter{csv.NewWriter(w)} }

// Write writes one row, neutralised.
func (w csvWriter) Write(row []string) error {
	out := make([]string, len(row))
	for i, cell := range row {
		out[i] = csvCell(cell)
	}
	return w.Writer.Write(out)
}

func csvCell(s string) string {
	if s == "" || !strings.ContainsRune("=+-@\t\r", rune(s[0])) {
		return s
	}
	if _, err := strconv.ParseFloat(s, 64); err == nil {
		return s
	}
	return "'" + s
}
