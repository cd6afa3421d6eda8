package main

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"math"
	"regexp"
	"slices"
	"sort"
	"strconv"
	"strings"

	"go.yaml.in/yaml/v3"
)

// inputError is a fault in a user's file: the file, the line where known
// (0 if not), the field path (e.g. actions[1].transitions.worn) and what is
// wrong. It makes the command exit with code 1.
type inputError struct {
	File string
	Line int
	Path string
	Msg  string
}

func (e *inputError) Error() string {
	var b strings.Builder
	b.WriteString(e.File)
	if e.Line > 0 {
		fmt.Fprintf(&b, ":%d", e.Line)
	}
	if e.Path != "" {
		b.WriteString(": " + e.Path)
	}
	b.WriteString(": " + e.Msg)
	return b.String()
}

// maxNodes bounds the YAML nodes visited in one file, aliases included, so
// that a hostile file of nested aliases cannot blow up the walk.
const maxNodes = 1_000_000

// doc walks a YAML document strictly and collects every fault it meets.
type doc struct {
	file   string
	faults []error
	nodes  int
	opts   decodeOptions
	// notes collects what decoding changed (renormalized rows), for the
	// user; shared by the files a fleet reads.
	notes *[]string
}

// decodeOptions are the run-time choices that affect decoding.
type decodeOptions struct {
	// Renormalize rescales rows whose sum misses 1 only by rounding of
	// their entries to 3 decimals.
	Renormalize bool
}

func (d *doc) note(format string, args ...any) {
	*d.notes = append(*d.notes, fmt.Sprintf(format, args...))
}

var yamlLine = regexp.MustCompile(`^yaml: line (\d+): (.*)$`)

// parseYAML reads one YAML document of at most limit bytes from r.
func parseYAML(file string, r io.Reader, limit int64, opts decodeOptions, notes *[]string) (*doc, *yaml.Node, error) {
	data, err := io.ReadAll(io.LimitReader(r, limit+1))
	if err != nil {
		return nil, nil, &inputError{File: file, Msg: err.Error()}
	}
	if int64(len(data)) > limit {
		return nil, nil, &inputError{File: file, Msg: fmt.Sprintf("file is larger than the limit of %s", byteSize(limit))}
	}
	var root yaml.Node
	dec := yaml.NewDecoder(bytes.NewReader(data))
	if err := dec.Decode(&root); err != nil {
		if errors.Is(err, io.EOF) {
			return nil, nil, &inputError{File: file, Msg: "file is empty"}
		}
		msg := err.Error()
		line := 0
		if m := yamlLine.FindStringSubmatch(msg); m != nil {
			line, _ = strconv.Atoi(m[1])
			msg = m[2]
		}
		return nil, nil, &inputError{File: file, Line: line, Msg: "YAML syntax error: " + strings.TrimPrefix(msg, "yaml: ")}
	}
	var extra yaml.Node
	if err := dec.Decode(&extra); err == nil {
		return nil, nil, &inputError{File: file, Line: extra.Line, Msg: "more than one YAML document; want one"}
	}
	d := &doc{file: file, opts: opts, notes: notes}
	body := &root
	if body.Kind == yaml.DocumentNode && len(body.Content) == 1 {
		body = body.Content[0]
	}
	return d, body, nil
}

func byteSize(n int64) string {
	switch {
	case n >= 1<<20 && n%(1<<20) == 0:
		return fmt.Sprintf("%d MiB", n>>20)
	case n >= 1<<10 && n%(1<<10) == 0:
		return fmt.Sprintf("%d KiB", n>>10)
	}
	return fmt.Sprintf("%d bytes", n)
}

// fault records a fault at node n (n may be nil).
func (d *doc) fault(n *yaml.Node, path, format string, args ...any) {
	e := &inputError{File: d.file, Path: path, Msg: fmt.Sprintf(format, args...)}
	if n != nil {
		e.Line = n.Line
	}
	d.faults = append(d.faults, e)
}

// err returns every fault recorded, this file's sorted by line and those
// of other files (a fleet's class files, its inventory) after them, or nil.
func (d *doc) err() error {
	key := func(e error) (int, int) {
		var ie *inputError
		if errors.As(e, &ie) && ie.File == d.file {
			return 0, ie.Line
		}
		return 1, 0
	}
	sort.SliceStable(d.faults, func(i, j int) bool {
		fi, li := key(d.faults[i])
		fj, lj := key(d.faults[j])
		return fi < fj || fi == fj && li < lj
	})
	return errors.Join(d.faults...)
}

// resolve follows aliases and counts the node against the walk budget.
func (d *doc) resolve(n *yaml.Node) *yaml.Node {
	for depth := 0; n != nil && n.Kind == yaml.AliasNode && depth < 100; depth++ {
		n = n.Alias
	}
	d.nodes++
	if d.nodes == maxNodes {
		d.fault(n, "", "document has more than %d nodes (aliases counted where used)", maxNodes)
	}
	if d.nodes > maxNodes {
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
			d.fault(k, sub, "unknown key %q%s", name, didYouMean(name, known))
			continue
		}
		if prev, dup := out[name]; dup {
			d.fault(k, sub, "duplicate key %q (first at line %d)", name, prev.key.Line)
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

// name returns a non-empty name without leading or trailing space.
func (d *doc) name(n *yaml.Node, path string) (string, bool) {
	s, ok := d.str(n, path)
	if !ok {
		return "", false
	}
	if s == "" || strings.TrimSpace(s) != s {
		d.fault(n, path, "name %q is empty or has leading or trailing space", s)
		return "", false
	}
	if len(s) > maxNameLen {
		d.fault(n, path, "name is %d characters long, over the limit of %d", len(s), maxNameLen)
		return "", false
	}
	return s, true
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
		d.fault(n, path, "%q is not a number", n.Value)
		return 0, false
	}
	if math.IsNaN(x) || math.IsInf(x, 0) {
		d.fault(n, path, "%s is not a finite number", n.Value)
		return 0, false
	}
	return x, true
}

// boolean returns the value of a true/false scalar.
func (d *doc) boolean(n *yaml.Node, path string) (bool, bool) {
	n = d.resolve(n)
	if n.Kind != yaml.ScalarNode || n.Tag != "!!bool" {
		d.fault(n, path, "want true or false, got %s", describe(n))
		return false, false
	}
	var b bool
	if err := n.Decode(&b); err != nil {
		d.fault(n, path, "%q is not true or false", n.Value)
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
		d.fault(n, path, "%q is not a whole number", n.Value)
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
			return "the number " + n.Value
		}
		return fmt.Sprintf("%q", clip(n.Value))
	}
	return "an empty value"
}

func clip(s string) string {
	if len(s) > 40 {
		return s[:37] + "..."
	}
	return s
}

func join(path, key string) string {
	if path == "" {
		return key
	}
	return path + "." + key
}

func index(path string, i int) string { return fmt.Sprintf("%s[%d]", path, i) }

// didYouMean returns a hint naming the closest candidate to s, or "".
func didYouMean(s string, candidates []string) string {
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
