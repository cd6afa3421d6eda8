package condition

import (
	"fmt"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"
)

// Limits on the text of data problems, so that the warnings about a file
// stay bounded whatever its size: a kind of problem that recurs is reported
// once, with its count and its first maxExamples occurrences ("and M
// more"); a value quoted from the data keeps its first maxQuoted bytes; a
// list of names (the states or actions wanted) its first maxNames names.
const (
	maxExamples = 5
	maxQuoted   = 40
	maxNames    = 10
)

// problemKind is one kind of data problem. many is the summary of several
// occurrences, formatted with their count ("%d records have no unit and are
// left out"); tail follows the list of examples ("; want one of ...").
type problemKind struct {
	many string
	tail string
}

// problemLog collects data problems by kind, in order of first
// occurrence, keeping the message of the first occurrence and the short
// details of the first maxExamples.
type problemLog struct {
	tallies []*problemTally
	byKind  map[*problemKind]*problemTally
}

type problemTally struct {
	kind    *problemKind
	n       int
	first   Warning // the whole message of the first occurrence
	lines   []int
	details []string
}

// add records one occurrence of kind k at a CSV line: one is the message
// used when it stays the only one of its kind, short its detail in a
// summary ("" for none).
func (l *problemLog) add(k *problemKind, line int, one, short string) {
	if l.byKind == nil {
		l.byKind = make(map[*problemKind]*problemTally)
	}
	t := l.byKind[k]
	if t == nil {
		t = &problemTally{kind: k, first: Warning{line, one}}
		l.byKind[k] = t
		l.tallies = append(l.tallies, t)
	}
	t.n++
	if len(t.lines) < maxExamples {
		t.lines = append(t.lines, line)
		t.details = append(t.details, short)
	}
}

// keeps reports whether the next occurrence of k keeps its details, so
// that callers build them only for the first few.
func (l *problemLog) keeps(k *problemKind) bool {
	t := l.byKind[k]
	return t == nil || len(t.lines) < maxExamples
}

// warnings returns one warning per kind: the occurrence itself, at its
// line, when it is the only one; otherwise a summary at line 0.
func (l *problemLog) warnings() []Warning {
	out := make([]Warning, 0, len(l.tallies))
	for _, t := range l.tallies {
		if t.n == 1 {
			out = append(out, t.first)
			continue
		}
		out = append(out, Warning{0, fmt.Sprintf(t.kind.many, t.n) + ": " + t.examples() + t.kind.tail})
	}
	return out
}

// examples lists the first occurrences: "line 2 "x", line 5 "y" and 7
// more", or "lines 2, 5 and 7 more" when they carry no detail.
func (t *problemTally) examples() string {
	var b strings.Builder
	bare := strings.Join(t.details, "") == ""
	if bare {
		b.WriteString("lines ")
	}
	for i, line := range t.lines {
		if i > 0 {
			b.WriteString(", ")
		}
		if !bare {
			b.WriteString("line ")
		}
		b.WriteString(strconv.Itoa(line))
		if d := t.details[i]; d != "" {
			b.WriteString(" " + d)
		}
	}
	if more := t.n - len(t.lines); more > 0 {
		fmt.Fprintf(&b, " and %d more", more)
	}
	return b.String()
}

// clip shortens s to at most maxQuoted bytes, on a rune boundary, marking
// the cut with "…", and writes control characters and invalid bytes as Go
// escapes (so that a name from the data cannot drive a terminal).
func clip(s string) string {
	if len(s) > maxQuoted {
		cut := maxQuoted
		for cut > 0 && !utf8.RuneStart(s[cut]) {
			cut--
		}
		s = s[:cut] + "…"
	}
	if strings.IndexFunc(s, func(r rune) bool { return !unicode.IsPrint(r) && r != ' ' }) >= 0 || !utf8.ValidString(s) {
		q := strconv.Quote(s)
		s = q[1 : len(q)-1]
	}
	return s
}

// quoted is the Go-quoted, clipped form of a value from the data.
func quoted(s string) string { return strconv.Quote(clip(s)) }

// nameList joins the first maxNames names, clipped, with "and M more".
func nameList(names []string) string {
	shown := names[:min(len(names), maxNames)]
	parts := make([]string, len(shown))
	for i, s := range shown {
		parts[i] = clip(s)
	}
	out := strings.Join(parts, ", ")
	if more := len(names) - len(shown); more > 0 {
		out += fmt.Sprintf(" and %d more", more)
	}
	return out
}

// normalName is the form in which two names are taken to be the same name
// mistyped: lower case, without spaces, "_" or "-".
func normalName(s string) string {
	return strings.Map(func(r rune) rune {
		switch r {
		case ' ', '_', '-':
			return -1
		}
		return r
	}, strings.ToLower(s))
}

// suggester proposes the name a mistyped value stands for. It looks up the
// value's normal form (normalName) in a map built once, so a suggestion
// costs one pass over the value and no comparison against the candidates
// (an edit-distance search would cost one comparison per candidate and
// value); values longer than maxQuoted get none.
type suggester map[string]string

func newSuggester(names []string) suggester {
	s := make(suggester, len(names))
	seen := make(map[string]bool, len(names))
	for _, n := range names {
		k := normalName(n)
		if seen[k] {
			delete(s, k) // two names with one normal form: suggest neither
			continue
		}
		seen[k] = true
		s[k] = n
	}
	return s
}

// suggest returns the name v stands for, or "".
func (s suggester) suggest(v string) string {
	if len(v) > maxQuoted {
		return ""
	}
	if n, ok := s[normalName(v)]; ok && n != v {
		return n
	}
	return ""
}
