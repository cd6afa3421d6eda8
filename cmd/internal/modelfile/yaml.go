package modelfile

import (
	"bytes"
	"context"
	"errors"
	"fixpoint/reports"
	"fmt"
	"io"
	"math"
	"regexp"
	"slices"
	"sort"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"

	"go.yaml.in/yaml/v3"
)

// Fault is a fault in a user's file: the file, the line where known (0 if
// not), the field path (e.g. actions[1].transitions.worn) and what is
// wrong.
type Fault struct {
	File string
	Line int
	Path string
	Msg  string
}

func (e *Fault) Error() string {
	var b strings.Builder
	b.WriteString(e.File)
	if e.Line > 0 {
		fmt.Fprintf(&b, ":%d", e.Line)
	}
	if e.Path != "" {
		b.WriteString(": " + e.Path)
	}
	b.WriteString(": " + e.Msg)
	return reports.Printable(b.String())
}

// Limits on the walk of one document.
const (
	// maxNodes bounds the YAML nodes visited in one file, aliases
	// included, so that nested aliases cannot blow up the walk.
	maxNodes = 1_000_000
	// maxFaults is the number of faults listed per file; the rest are
	// counted in one line.
	maxFaults = 50
	// maxHints bounds the "did you mean" searches per file, and
	// maxHintCandidates the names one search compares with: the search is
	// quadratic in name length, and hostile files are long.
	maxHints          = 20
	maxHintCandidates = 200
)

// doc walks a YAML document strictly and collects every fault it meets.
type doc struct {
	ctx    context.Context
	file   string
	faults []error
	more   int // faults beyond maxFaults
	hints  int
	nodes  int
	opts   Options
	// notes collects what decoding changed (renormalised rows); shared by
	// the files a fleet reads.
	notes *[]string
	// warnings collects what the user should look at (a rate of 1, 100%
	// a year); shared like notes.
	warnings *[]string
}

func (d *doc) note(format string, args ...any) {
	*d.notes = append(*d.notes, fmt.Sprintf(format, args...))
}

// cancelled reports whether the run was cancelled; it is checked as the
// walk visits nodes.
func (d *doc) cancelled() bool { return d.ctx.Err() != nil }

var yamlLine = regexp.MustCompile(`^yaml: line (\d+): (.*)$`)

// ctxReader reads from r until ctx is done, then fails with ctx.Err():
// the YAML parser reads its input a few hundred bytes at a time, so
// parsing a large file stops soon after an interrupt.
type ctxReader struct {
	ctx context.Context
	r   io.Reader
}

func (c ctxReader) Read(p []byte) (int, error) {
	if err := c.ctx.Err(); err != nil {
		return 0, err
	}
	return c.r.Read(p)
}

// parseYAML parses one YAML document from data.
func parseYAML(ctx context.Context, file string, data []byte, opts Options, notes, warnings *[]string) (*doc, *yaml.Node, error) {
	var root yaml.Node
	dec := yaml.NewDecoder(ctxReader{ctx, bytes.NewReader(data)})
	if err := dec.Decode(&root); err != nil {
		if ctx.Err() != nil {
			return nil, nil, ctx.Err()
		}
		if errors.Is(err, io.EOF) {
			return nil, nil, &Fault{File: file, Msg: "file is empty"}
		}
		return nil, nil, syntaxError(ctx, file, data, err)
	}
	var extra yaml.Node
	if err := dec.Decode(&extra); err == nil {
		return nil, nil, &Fault{File: file, Line: extra.Line, Msg: "more than one YAML document; want one"}
	}
	d := &doc{ctx: ctx, file: file, opts: opts, notes: notes, warnings: warnings}
	body := &root
	if body.Kind == yaml.DocumentNode && len(body.Content) == 1 {
		body = body.Content[0]
	}
	return d, body, nil
}

// byteReader hands out one byte per Read and remembers how far the
// parser read, which is where it found the problem (plus a token of
// lookahead).
type byteReader struct {
	ctx  context.Context
	data []byte
	off  int
}

func (r *byteReader) Read(p []byte) (int, error) {
	if r.off >= len(r.data) {
		return 0, io.EOF
	}
	if r.off%4096 == 0 {
		if err := r.ctx.Err(); err != nil {
			return 0, err
		}
	}
	if len(p) == 0 {
		return 0, nil
	}
	p[0] = r.data[r.off]
	r.off++
	return 1, nil
}

// syntaxError locates a YAML syntax error. The parser reports the line
// where the enclosing block or flow collection starts (counted from 0 for
// parser errors); the problem itself is where the parser stopped reading,
// found by parsing again one byte at a time.
func syntaxError(ctx context.Context, file string, data []byte, err error) error {
	msg := strings.TrimPrefix(err.Error(), "yaml: ")
	context := 0
	if m := yamlLine.FindStringSubmatch(err.Error()); m != nil {
		context, _ = strconv.Atoi(m[1])
		msg = m[2]
	}
	parserError := strings.HasPrefix(msg, "did not find expected") || strings.Contains(msg, "not allowed in this context") && strings.HasPrefix(msg, "block")
	if parserError && context > 0 {
		context++ // the parser's context line counts from 0
	}
	r := &byteReader{ctx: ctx, data: data}
	var n yaml.Node
	_ = yaml.NewDecoder(r).Decode(&n)
	if err := ctx.Err(); err != nil {
		return err
	}
	read := bytes.TrimRight(data[:r.off], " \t\r\n")
	line := bytes.Count(read, []byte("\n")) + 1
	if !parserError && context > 0 {
		// Scanner errors name the line of the token being scanned.
		line = context
	}
	out := &Fault{File: file, Line: line, Msg: "YAML syntax error: " + msg}
	if context > 0 && context < line {
		out.Msg += fmt.Sprintf(" (in the block that starts at line %d)", context)
	}
	return out
}

// fault records a fault at node n (n may be nil). After maxFaults faults
// the rest are only counted.
func (d *doc) fault(n *yaml.Node, path, format string, args ...any) {
	if len(d.faults) >= maxFaults {
		d.more++
		return
	}
	e := &Fault{File: d.file, Path: path, Msg: fmt.Sprintf(format, args...)}
	if n != nil {
		e.Line = n.Line
	}
	d.faults = append(d.faults, e)
}

// add records faults found elsewhere (in another file of a fleet).
func (d *doc) add(errs ...error) { d.faults = append(d.faults, errs...) }

// err returns every fault recorded, this file's sorted by line and those
// of other files (a fleet's class files, its inventory) after them, or nil.
func (d *doc) err() error {
	if err := d.ctx.Err(); err != nil {
		return err
	}
	key := func(e error) (int, int) {
		var f *Fault
		if errors.As(e, &f) && f.File == d.file {
			return 0, f.Line
		}
		return 1, 0
	}
	sort.SliceStable(d.faults, func(i, j int) bool {
		fi, li := key(d.faults[i])
		fj, lj := key(d.faults[j])
		return fi < fj || fi == fj && li < lj
	})
	faults := d.faults
	if d.more > 0 {
		faults = append(slices.Clone(faults), &Fault{File: d.file, Msg: fmt.Sprintf("and %d more problems (fix the ones above first)", d.more)})
	}
	return errors.Join(faults...)
}

// resolve follows aliases and counts the node against the walk budget;
// past the budget, or once the run is cancelled, it returns an empty
// node so that the walk ends quickly.
func (d *doc) resolve(n *yaml.Node) *yaml.Node {
	for depth := 0; n != nil && n.Kind == yaml.AliasNode && depth < 100; depth++ {
		n = n.Alias
	}
	d.nodes++
	if d.nodes == maxNodes {
		d.fault(n, "", "document has more than %d nodes (aliases counted where used)", maxNodes)
	}
	if d.nodes > maxNodes || d.nodes%1024 == 0 && d.cancelled() || n == nil {
		return &yaml.Node{Kind: yaml.ScalarNode, Tag: "!!null"}
	}
	return n
}

// field is one value of a mapping with the line of its key.
type field struct {
	key   *yaml.Node
	value *yaml.Node
}

// mapping checks that n is a mapping whose keys are all in known, unique,
// and returns its fields by key. Unknown keys get a "did you mean" hint.
// With known nil, any key is accepted (user-named keys such as states).
func (d *doc) mapping(n *yaml.Node, path string, known []string) map[string]field {
	n = d.resolve(n)
	out := make(map[string]field)
	if n.Kind != yaml.MappingNode {
		d.fault(n, path, "want a mapping (key: value lines), got %s", describe(n))
		return out
	}
	for i := 0; i+1 < len(n.Content); i += 2 {
		k, v := d.resolve(n.Content[i]), n.Content[i+1]
		if k.Kind != yaml.ScalarNode {
			d.fault(k, path, "a key must be a plain name, got %s", describe(k))
			continue
		}
		name := k.Value
		sub := join(path, name)
		if known != nil && !slices.Contains(known, name) {
			d.fault(k, sub, "unknown key %q%s", clip(name), d.didYouMean(name, known))
			continue
		}
		if prev, dup := out[name]; dup {
			d.fault(k, sub, "duplicate key %q (first at line %d)", clip(name), prev.key.Line)
			continue
		}
		out[name] = field{key: k, value: v}
	}
	return out
}

// sequence checks that n is a sequence and returns its items.
func (d *doc) sequence(n *yaml.Node, path string) []*yaml.Node {
	n = d.resolve(n)
	if n.Kind != yaml.SequenceNode {
		d.fault(n, path, "want a list, got %s", describe(n))
		return nil
	}
	return n.Content
}

// str returns the string value of a scalar.
func (d *doc) str(n *yaml.Node, path string) (string, bool) {
	n = d.resolve(n)
	if n.Kind != yaml.ScalarNode || n.Tag == "!!null" {
		d.fault(n, path, "want a text value, got %s", describe(n))
		return "", false
	}
	return n.Value, true
}

// maxNameLen bounds names, in bytes.
const maxNameLen = 200

// name returns a non-empty name without leading or trailing space, control
// characters, or the separators "," and "=" (which --mix and joint state
// names use). One fault per bad name.
func (d *doc) name(n *yaml.Node, path string) (string, bool) {
	s, ok := d.str(n, path)
	if !ok {
		return "", false
	}
	if problem := NameProblem(s); problem != "" {
		d.fault(n, path, "%s", problem)
		return "", false
	}
	return s, true
}

// NameProblem says what is wrong with a state, action, component or class
// name, or returns "".
func NameProblem(s string) string {
	if p := TextProblem(s); p != "" {
		return p
	}
	if strings.ContainsAny(s, ",=") {
		return fmt.Sprintf("name %q contains \",\" or \"=\", which separate names in --mix and joint states", s)
	}
	return ""
}

// TextProblem says what is wrong with a text that reaches outputs (a
// name or a model title), or returns "".
func TextProblem(s string) string {
	switch {
	case s == "":
		return "name is empty"
	case len(s) > maxNameLen:
		return fmt.Sprintf("name is %d bytes long, over the limit of %d", len(s), maxNameLen)
	case !utf8.ValidString(s):
		return "name is not valid UTF-8 text"
	case strings.TrimSpace(s) != s:
		return fmt.Sprintf("name %q has leading or trailing space", s)
	case strings.IndexFunc(s, unicode.IsControl) >= 0:
		return fmt.Sprintf("name %q contains a control character (tab, newline, escape, ...)", s)
	case strings.IndexFunc(s, reports.Hidden) >= 0:
		r, _ := utf8.DecodeRuneInString(s[strings.IndexFunc(s, reports.Hidden):])
		return fmt.Sprintf("name %q contains the invisible format character U+%04X (a bidirectional control, zero-width space, soft hyphen or the like), which can make text display in another order than it is stored", s, r)
	}
	return ""
}

// number returns the finite numeric value of a scalar.
func (d *doc) number(n *yaml.Node, path string) (float64, bool) {
	n = d.resolve(n)
	if n.Kind != yaml.ScalarNode || (n.Tag != "!!int" && n.Tag != "!!float") {
		d.fault(n, path, "want a number, got %s", describe(n))
		return 0, false
	}
	var x float64
	if err := n.Decode(&x); err != nil {
		d.fault(n, path, "%q is not a number", clip(n.Value))
		return 0, false
	}
	if math.IsNaN(x) || math.IsInf(x, 0) {
		d.fault(n, path, "%s is not a finite number", clip(n.Value))
		return 0, false
	}
	return x, true
}

// rate returns an annual rate written as a fraction (0.035) or a percent
// (3.5% or "3.5%"). A plain number above 1 is refused: it is almost
// always a percentage typed without its sign.
func (d *doc) rate(n *yaml.Node, path string) (float64, bool) {
	n = d.resolve(n)
	if n.Kind == yaml.ScalarNode && n.Tag == "!!str" && strings.HasSuffix(n.Value, "%") {
		x, err := ParseNumber(n.Value)
		if err != nil {
			d.fault(n, path, "%v", err)
			return 0, false
		}
		return x, true
	}
	x, ok := d.number(n, path)
	if ok && x == 1 && d.warnings != nil {
		w := &Fault{File: d.file, Line: n.Line, Path: path, Msg: RateOfOne}
		*d.warnings = append(*d.warnings, w.Error())
	}
	if ok && x > 1 {
		d.fault(n, path, "rate %s per year is over 100%%; write %s%% for %s percent (or %g as a fraction)", clip(n.Value), clip(n.Value), clip(n.Value), x/100)
		return 0, false
	}
	return x, ok
}

// RateOfOne is the warning of a rate written 1 (without %): 100% a year,
// most likely meant as 1%.
const RateOfOne = "rate 1 is 100% a year; for 1% write 1%"

// boolean returns the value of a true/false scalar.
func (d *doc) boolean(n *yaml.Node, path string) (bool, bool) {
	n = d.resolve(n)
	if n.Kind != yaml.ScalarNode || n.Tag != "!!bool" {
		d.fault(n, path, "want true or false, got %s", describe(n))
		return false, false
	}
	var b bool
	if err := n.Decode(&b); err != nil {
		d.fault(n, path, "%q is not true or false", clip(n.Value))
		return false, false
	}
	return b, true
}

// integer returns the value of an integer scalar.
func (d *doc) integer(n *yaml.Node, path string) (int, bool) {
	n = d.resolve(n)
	if n.Kind != yaml.ScalarNode || n.Tag != "!!int" {
		d.fault(n, path, "want a whole number, got %s", describe(n))
		return 0, false
	}
	var i int
	if err := n.Decode(&i); err != nil {
		d.fault(n, path, "%q is not a whole number", clip(n.Value))
		return 0, false
	}
	return i, true
}

func describe(n *yaml.Node) string {
	switch n.Kind {
	case yaml.MappingNode:
		return "a mapping"
	case yaml.SequenceNode:
		return "a list"
	case yaml.ScalarNode:
		switch n.Tag {
		case "!!null":
			return "nothing"
		case "!!str":
			return fmt.Sprintf("the text %q", clip(n.Value))
		case "!!bool":
			return "true/false " + n.Value
		case "!!int", "!!float":
			return "the number " + clip(n.Value)
		}
		return fmt.Sprintf("%q", clip(n.Value))
	}
	return "an empty value"
}

// clip shortens a value quoted in a message to 40 bytes, on a rune
// boundary.
func clip(s string) string {
	if len(s) <= 40 {
		return s
	}
	cut := 37
	for cut > 0 && !utf8.RuneStart(s[cut]) {
		cut--
	}
	return s[:cut] + "..."
}

func join(path, key string) string {
	if path == "" {
		return key
	}
	return path + "." + key
}

func index(path string, i int) string { return fmt.Sprintf("%s[%d]", path, i) }

// didYouMean returns a hint naming the closest candidate to s, or "";
// it does the work only for the first maxHints names of a file and for
// short names and candidate lists.
func (d *doc) didYouMean(s string, candidates []string) string {
	if d.hints >= maxHints || len(candidates) > maxHintCandidates || len(s) > 2*maxNameLen {
		return ""
	}
	d.hints++
	return DidYouMean(s, candidates)
}

// DidYouMean returns a hint naming the closest candidate to s, or the
// candidates themselves when there are few, or "".
func DidYouMean(s string, candidates []string) string {
	if len(candidates) > maxHintCandidates || len(s) > 2*maxNameLen {
		return ""
	}
	candidates = slices.DeleteFunc(slices.Clone(candidates), func(c string) bool { return c == "" })
	best, bestD := "", 1<<30
	for _, c := range candidates {
		if d := editDistance(strings.ToLower(s), strings.ToLower(c)); d < bestD {
			best, bestD = c, d
		}
	}
	if best == "" || bestD > max(2, len(s)/3) {
		if len(candidates) > 0 && len(candidates) <= 12 {
			return fmt.Sprintf("; known: %s", strings.Join(candidates, ", "))
		}
		return ""
	}
	return fmt.Sprintf("; did you mean %q?", best)
}

// editDistance is the Levenshtein distance between a and b, in bytes.
func editDistance(a, b string) int {
	prev := make([]int, len(b)+1)
	cur := make([]int, len(b)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(a); i++ {
		cur[0] = i
		for j := 1; j <= len(b); j++ {
			cost := 1
			if a[i-1] == b[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
		}
		prev, cur = cur, prev
	}
	return prev[len(b)]
}

// ParseNumber accepts a plain decimal number, optionally in exponent form
// or with a trailing "%" (divided by 100). It refuses what
// strconv.ParseFloat would also accept but no user means: NaN, Inf, hex
// floats and "_" separators, and results that are not finite.
func ParseNumber(s string) (float64, error) {
	s = strings.TrimSpace(s)
	pct := strings.HasSuffix(s, "%")
	body := strings.TrimSpace(strings.TrimSuffix(s, "%"))
	if body == "" || strings.ContainsAny(body, "_xXpPnNiI") {
		return 0, fmt.Errorf("%q is not a number", clip(s))
	}
	x, err := strconv.ParseFloat(body, 64)
	if err != nil || math.IsInf(x, 0) {
		return 0, fmt.Errorf("%q is not a finite number", clip(s))
	}
	if pct {
		x /= 100
	}
	return x, nil
}
