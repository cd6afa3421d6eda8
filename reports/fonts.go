package reports

import (
	"fmt"
	"strings"
	"unicode"
	"unicode/utf8"

	"golang.org/x/image/font/gofont/gobold"
	"golang.org/x/image/font/gofont/goregular"
	"golang.org/x/image/font/sfnt"
)

// Font is a TrueType font (one .ttf file, not a collection) that prints
// characters the built-in Go fonts lack, such as Chinese, Japanese and
// Korean. Bold may be nil: bold text in that font then prints regular.
type Font struct {
	Name          string
	Regular, Bold []byte
}

// face is one font of a document: its gofpdf family and its outlines,
// parsed to tell which characters it covers.
type face struct {
	family        string
	regular, bold []byte
	outline       *sfnt.Font
	// added records that the family was registered with gofpdf; fallback
	// faces are registered when first used, so a brief without such
	// characters does not carry them.
	added bool
}

// fontSet is the faces of a document in order of preference: the Go fonts
// first, then the fallbacks in the order given. A character prints in the
// first face that has a glyph for it.
type fontSet struct {
	faces []*face
	buf   sfnt.Buffer
	cache map[rune]int
}

func newFontSet(extra []Font) (*fontSet, error) {
	fs := &fontSet{cache: make(map[rune]int)}
	all := append([]Font{{Name: "Go", Regular: goregular.TTF, Bold: gobold.TTF}}, extra...)
	for i, f := range all {
		o, err := sfnt.Parse(f.Regular)
		if err != nil {
			return nil, fmt.Errorf("reports: font %s: %v", f.Name, err)
		}
		fam := fontFamily
		if i > 0 {
			fam = fmt.Sprintf("fallback%d", i)
		}
		fs.faces = append(fs.faces, &face{family: fam, regular: f.Regular, bold: f.Bold, outline: o, added: i == 0})
	}
	return fs, nil
}

// faceOf returns the index of the first face with a glyph for r, or -1.
// Spaces and other characters that print nothing count as covered by
// every face.
func (fs *fontSet) faceOf(r rune) int {
	if i, ok := fs.cache[r]; ok {
		return i
	}
	i := -1
	for k, f := range fs.faces {
		if g, err := f.outline.GlyphIndex(&fs.buf, r); err == nil && g != 0 {
			i = k
			break
		}
	}
	fs.cache[r] = i
	return i
}

// missing lists the characters of s that no face prints, each once, in
// order of appearance.
func (fs *fontSet) missing(s string) []rune {
	var out []rune
	for _, r := range s {
		// U+FFFD stands for bytes that are not UTF-8: never printable.
		if r == ' ' || (r != utf8.RuneError && fs.faceOf(r) >= 0) {
			continue
		}
		if !strings.ContainsRune(string(out), r) {
			out = append(out, r)
		}
	}
	return out
}

// run is a stretch of text printed in one face.
type run struct {
	face int
	text string
}

// runs splits s into runs of one face each; a space stays in the run it
// follows. Characters no face prints are dropped (the brief refuses them
// before printing: see GlyphError).
func (fs *fontSet) runs(s string) []run {
	var out []run
	var b strings.Builder
	cur := 0
	flush := func() {
		if b.Len() > 0 {
			out = append(out, run{cur, b.String()})
			b.Reset()
		}
	}
	for _, r := range s {
		k := cur
		if r != ' ' {
			k = fs.faceOf(r)
		}
		if k < 0 {
			continue
		}
		if k != cur {
			flush()
			cur = k
		}
		b.WriteRune(r)
	}
	flush()
	return out
}

// wide reports whether r belongs to a script written without spaces
// between words, so that a line may break before it.
func wide(r rune) bool {
	return unicode.In(r, unicode.Han, unicode.Hiragana, unicode.Katakana, unicode.Hangul) ||
		(r >= 0x3000 && r <= 0x303F) || (r >= 0xFF00 && r <= 0xFFEF)
}

// TextField is a piece of user text a brief prints, with where it comes
// from ("states[2].name"), for GlyphError.
type TextField struct {
	Field, Text string
}

// GlyphFault is one field with characters that no font of the brief
// prints.
type GlyphFault struct {
	Field, Text string
	Chars       []rune
}

// GlyphError refuses a brief that would print characters as blank boxes:
// it lists, per field, the characters that neither the built-in Go fonts
// nor any fallback font given has a glyph for.
type GlyphError struct {
	Faults []GlyphFault
}

func (e *GlyphError) Error() string {
	parts := make([]string, len(e.Faults))
	for i, f := range e.Faults {
		chars := make([]string, len(f.Chars))
		for k, r := range f.Chars {
			chars[k] = fmt.Sprintf("%q (U+%04X)", string(r), r)
		}
		parts[i] = fmt.Sprintf("%s %q: %s", f.Field, clipText(f.Text, 60), strings.Join(chars, ", "))
	}
	return "reports: no font of the brief prints these characters: " + strings.Join(parts, "; ")
}

// unshaped are the scripts a brief refuses whatever font it has: they
// are written right to left or need contextual shaping (joining forms,
// reordered vowel signs, stacked consonants), and gofpdf neither reorders
// nor shapes text, so their words would print wrong, not just blank.
var unshaped = []struct {
	name  string
	table *unicode.RangeTable
}{
	{"Arabic", unicode.Arabic}, {"Hebrew", unicode.Hebrew}, {"Syriac", unicode.Syriac}, {"Thaana", unicode.Thaana},
	{"NKo", unicode.Nko}, {"Samaritan", unicode.Samaritan}, {"Mandaic", unicode.Mandaic}, {"Adlam", unicode.Adlam},
	{"Hanifi Rohingya", unicode.Hanifi_Rohingya},
	{"Devanagari", unicode.Devanagari}, {"Bengali", unicode.Bengali}, {"Gurmukhi", unicode.Gurmukhi},
	{"Gujarati", unicode.Gujarati}, {"Oriya", unicode.Oriya}, {"Tamil", unicode.Tamil}, {"Telugu", unicode.Telugu},
	{"Kannada", unicode.Kannada}, {"Malayalam", unicode.Malayalam}, {"Sinhala", unicode.Sinhala},
	{"Thai", unicode.Thai}, {"Lao", unicode.Lao}, {"Tibetan", unicode.Tibetan}, {"Myanmar", unicode.Myanmar},
	{"Khmer", unicode.Khmer}, {"Mongolian", unicode.Mongolian}, {"Javanese", unicode.Javanese}, {"Balinese", unicode.Balinese},
	{"bidirectional control", unicode.Bidi_Control},
}

// scriptOf names the unshaped script of r, or "".
func scriptOf(r rune) string {
	for _, u := range unshaped {
		if unicode.Is(u.table, r) {
			return u.name
		}
	}
	return ""
}

// ScriptError refuses a brief with names in a script that gofpdf cannot
// print correctly with any font (right-to-left or complex-shaping
// scripts: Arabic, Hebrew, Devanagari, Thai, ...): it lists, per field,
// the characters with their script.
type ScriptError struct {
	Faults []GlyphFault
}

func (e *ScriptError) Error() string {
	parts := make([]string, len(e.Faults))
	for i, f := range e.Faults {
		chars := make([]string, len(f.Chars))
		for k, r := range f.Chars {
			chars[k] = fmt.Sprintf("%q (U+%04X, %s)", string(r), r, scriptOf(r))
		}
		parts[i] = fmt.Sprintf("%s %q: %s", f.Field, clipText(f.Text, 60), strings.Join(chars, ", "))
	}
	return "reports: the PDF brief cannot print right-to-left or complex-shaping scripts, whatever the font (its PDF library neither reorders nor shapes them): " +
		strings.Join(parts, "; ")
}

// check returns a *ScriptError listing every field with characters of an
// unshaped script, else a *GlyphError listing every field with
// characters that no face prints, or nil.
func (fs *fontSet) check(fields []TextField) error {
	var se ScriptError
	for _, f := range fields {
		var chars []rune
		for _, r := range f.Text {
			if scriptOf(r) != "" && !strings.ContainsRune(string(chars), r) {
				chars = append(chars, r)
			}
		}
		if len(chars) > 0 {
			se.Faults = append(se.Faults, GlyphFault{Field: f.Field, Text: f.Text, Chars: chars})
		}
	}
	if len(se.Faults) > 0 {
		return &se
	}
	var e GlyphError
	for _, f := range fields {
		if m := fs.missing(f.Text); len(m) > 0 {
			e.Faults = append(e.Faults, GlyphFault{Field: f.Field, Text: f.Text, Chars: m})
		}
	}
	if len(e.Faults) == 0 {
		return nil
	}
	return &e
}

func clipText(s string, n int) string {
	r := []rune(s)
	if len(r) <= n {
		return s
	}
	return string(r[:n-1]) + "…"
}
