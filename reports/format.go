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
// newlines) and invisible format characters (see Hidden) as Go's %q
// would, so that text from data files never reaches a terminal raw and
// never reorders what follows it on the line.
func Printable(s string) string {
	if strings.IndexFunc(s, Hidden) < 0 {
		return s
	}
	var b strings.Builder
	for _, r := range s {
		if Hidden(r) {
			q := strconv.QuoteRune(r)
			b.WriteString(q[1 : len(q)-1])
			continue
		}
		b.WriteRune(r)
	}
	return b.String()
}

// Hidden reports whether r must not reach a terminal raw: a control
// character (Unicode category Cc), or a format character (category Cf:
// the bidirectional embeddings, overrides and isolates U+202A–U+202E and
// U+2066–U+2069, marks, zero-width space, soft hyphen, byte-order mark,
// tags ...), which are invisible and can make text display in another
// order than it is stored (Unicode Technical Report #36, Unicode Security
// Considerations, §2.4 "Bidirectional Text Spoofing"). The zero-width
// non-joiner and joiner (U+200C, U+200D) are not hidden: several scripts
// and emoji sequences need them to be written correctly, and they cannot
// reorder text.
func Hidden(r rune) bool {
	if unicode.IsControl(r) {
		return true
	}
	return unicode.Is(unicode.Cf, r) && r != '\u200c' && r != '\u200d'
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

// minorUnits are the ISO 4217 currencies whose minor unit is not a
// hundredth (ISO 4217 list of currency codes, minor unit column; from
// memory): 0 decimals for the yen, won and others, 3 for the dinars and
// rials below, 4 for the units of account CLF and UYW.
var minorUnits = map[string]int{
	"BIF": 0, "CLP": 0, "DJF": 0, "GNF": 0, "ISK": 0, "JPY": 0, "KMF": 0, "KRW": 0, "PYG": 0,
	"RWF": 0, "UGX": 0, "UYI": 0, "VND": 0, "VUV": 0, "XAF": 0, "XOF": 0, "XPF": 0,
	"BHD": 3, "IQD": 3, "JOD": 3, "KWD": 3, "LYD": 3, "OMR": 3, "TND": 3,
	"CLF": 4, "UYW": 4,
}

// MinorUnit returns the decimals of a currency's minor unit by ISO 4217:
// MinorUnit("JPY") is 0, MinorUnit("EUR") 2, MinorUnit("KWD") 3. Codes it
// does not know (and names that are not codes) get 2.
func MinorUnit(code string) int {
	if d, ok := minorUnits[strings.ToUpper(strings.TrimSpace(code))]; ok {
		return d
	}
	return 2
}

// money formats an amount in the header's currency with the decimals of
// its minor unit.
func (h *Header) money(x float64) string { return Money(x, MinorUnit(h.Currency)) }

// moneyBound is the smallest whole number of minor units not below x
// (at least one), formatted: the amount a proven bound is said as in
// words.
func (h *Header) moneyBound(x float64) string {
	dec := MinorUnit(h.Currency)
	unit := math.Pow(10, -float64(dec))
	return Money(math.Max(unit, math.Ceil(x/unit-1e-9)*unit), dec)
}

// nouns says a count with its noun in agreement: nouns(1, "class",
// "classes") is "1 class", nouns(1200, "class", "classes") "1,200 classes".
func nouns(n int, one, many string) string {
	if n == 1 {
		return "1 " + one
	}
	return Money(float64(n), 0) + " " + many
}

// unitsOf says an expected number of units (whole, or with two decimals)
// with "unit" or "units".
func unitsOf(x float64) string {
	if countText(x) == "1" {
		return "1 unit"
	}
	return countText(x) + " units"
}

// Nouns is nouns for the commands' own lines (check, fit).
func Nouns(n int, one, many string) string { return nouns(n, one, many) }
