package reports

import "testing"

// TestPrintableHidden: control and format characters (Unicode category
// Cc and Cf) are escaped; the zero-width joiner and non-joiner, which
// scripts and emoji need, are kept. Categories from the Unicode Character
// Database (UnicodeData.txt) as Go's unicode tables carry them.
func TestPrintableHidden(t *testing.T) {
	for _, tc := range []struct{ in, want string }{
		{"plain", "plain"},
		{"a\x1b[2Jb", `a\x1b[2Jb`},
		{"fair\u202e", `fair\u202e`},           // right-to-left override
		{"x\u2066y\u2069", `x\u2066y\u2069`},   // left-to-right isolate, pop isolate
		{"zero\u200bwidth", `zero\u200bwidth`}, // zero-width space
		{"\ufeffbom", `\ufeffbom`},             // byte-order mark
		{"soft\u00adhyphen", `soft\u00adhyphen`},
		{"می\u200cخواهم", "می\u200cخواهم"}, // zero-width non-joiner, kept
		{"👩\u200d🔧", "👩\u200d🔧"},           // zero-width joiner, kept
	} {
		if got := Printable(tc.in); got != tc.want {
			t.Errorf("Printable(%q) = %q, want %q", tc.in, got, tc.want)
		}
	}
}
