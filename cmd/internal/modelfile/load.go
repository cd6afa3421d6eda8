package modelfile

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"unicode/utf8"

	"go.yaml.in/yaml/v3"
	"golang.org/x/text/unicode/norm"
)

// MaxFileBytes bounds a YAML model file.
const MaxFileBytes = 4 << 20

// Kind is what a file holds.
type Kind int

const (
	// ClassFile is a class config: one class of equipment.
	ClassFile Kind = iota + 1
	// SystemFile is a machine of components sharing a shutdown.
	SystemFile
	// FleetFile lists class configs, an inventory and a budget.
	FleetFile
	// RecordsFile is a CSV of inspection records (unit, date, condition).
	RecordsFile
	// InventoryFile is a CSV of units (unit, class, condition).
	InventoryFile
	// SettingsFile is a mapping of run-time settings.
	SettingsFile
	// EmptyFile has no content.
	EmptyFile
	// BinaryFile is not text.
	BinaryFile
	// OtherFile is text that is none of the above.
	OtherFile
)

var kindNames = map[Kind]string{
	ClassFile: "class config", SystemFile: "system file", FleetFile: "fleet file", RecordsFile: "inspection-records CSV",
	InventoryFile: "inventory CSV", SettingsFile: "settings file", EmptyFile: "empty file", BinaryFile: "binary file",
	OtherFile: "file fixpoint does not recognise",
}

func (k Kind) String() string { return kindNames[k] }

// File is one file read by Load. Exactly one of Class, System and Fleet is
// set for the model kinds; the CSV and other kinds carry only Kind.
type File struct {
	// Path is the file as named; SHA256 the hex digest of its bytes.
	Path   string
	Kind   Kind
	SHA256 string
	Class  *Class
	System *System
	Fleet  *Fleet
	// Inputs lists every file the load read (the file itself, a fleet's
	// class files and inventory), so that no output replaces one of them.
	Inputs []string
	// Notes says what decoding changed (rows renormalised), for the user.
	Notes []string
	// Warnings are what the user should look at although the file is
	// valid (a rate of 1: 100% a year), located.
	Warnings []string
}

// Header returns the header of a class or system file, or nil.
func (f *File) Header() *Header {
	switch {
	case f.Class != nil:
		return &f.Class.Header
	case f.System != nil:
		return &f.System.Header
	}
	return nil
}

// Options are the run-time choices that affect decoding.
type Options struct {
	// Renormalize rescales rows whose sum misses 1 only by the rounding
	// of their entries to 3 decimals (each is noted).
	Renormalize bool
}

// Load reads the file at path once, recognises its kind and decodes the
// model kinds strictly: every fault is returned, joined, each a *Fault
// naming the file, line and field. The other kinds are only recognised.
func Load(ctx context.Context, path string, opts Options) (*File, error) {
	l := &loader{ctx: ctx, opts: opts}
	data, err := l.read(path, MaxFileBytes)
	var tooBig *tooBigError
	if errors.As(err, &tooBig) {
		// Records and inventories may be larger than a model file.
		if kind := sniffCSV(tooBig.head); kind != OtherFile {
			return &File{Path: path, Kind: kind, Inputs: l.inputs}, nil
		}
		return nil, err
	}
	if err != nil {
		return nil, err
	}
	return l.file(path, data, 0)
}

// Decode decodes the model file data named file, as Load does (fleets
// read their class files and inventory from the disk).
func Decode(ctx context.Context, file string, data []byte, opts Options) (*File, error) {
	l := &loader{ctx: ctx, opts: opts, inputs: []string{file}}
	return l.file(file, data, 0)
}

// loader reads the files of one load.
type loader struct {
	ctx      context.Context
	opts     Options
	inputs   []string
	notes    []string
	warnings []string
}

type tooBigError struct {
	Fault
	head []byte
}

// read reads a file of at most limit bytes and records it as an input.
// The open and the read run in a goroutine, and read returns ctx.Err() as
// soon as ctx is done: an input that blocks (a FIFO with no writer, a
// process substitution that writes late) must not hold off an interrupt.
// An abandoned read ends when its input does, or with the process.
func (l *loader) read(path string, limit int64) ([]byte, error) {
	if err := l.ctx.Err(); err != nil {
		return nil, err
	}
	type result struct {
		data []byte
		err  error
	}
	done := make(chan result, 1) // buffered: an abandoned read does not block
	go func() {
		data, err := readFile(path, limit)
		done <- result{data, err}
	}()
	var r result
	select {
	case r = <-done:
	case <-l.ctx.Done():
		return nil, l.ctx.Err()
	}
	if r.err != nil {
		var tooBig *tooBigError
		if !errors.As(r.err, &tooBig) {
			return nil, r.err
		}
	}
	if abs, err := filepath.Abs(path); err == nil && !slices.Contains(l.inputs, abs) {
		l.inputs = append(l.inputs, abs)
	}
	return r.data, r.err
}

// readFile reads the file at path, at most limit bytes.
func readFile(path string, limit int64) ([]byte, error) {
	fh, err := os.Open(path)
	if err != nil {
		return nil, &Fault{File: path, Msg: OpenProblem(err)}
	}
	defer fh.Close()
	if info, err := fh.Stat(); err == nil && info.IsDir() {
		return nil, &Fault{File: path, Msg: "is a directory, not a file"}
	}
	data, err := io.ReadAll(io.LimitReader(fh, limit+1))
	if err != nil {
		return nil, &Fault{File: path, Msg: OpenProblem(err)}
	}
	if int64(len(data)) > limit {
		return nil, &tooBigError{Fault{File: path, Msg: fmt.Sprintf("file is larger than the limit of %s", byteSize(limit))}, data[:64<<10]}
	}
	return data, nil
}

// file recognises data and decodes it when it is a model file of kind
// want (0: any kind); a model file of another kind is refused before its
// content is decoded (so fleet files naming each other cannot recurse).
func (l *loader) file(path string, data []byte, want Kind) (*File, error) {
	f := &File{Path: path, Kind: sniffBytes(data)}
	if f.Kind != OtherFile {
		f.Inputs = l.inputs
		return f, nil
	}
	// Names are compared and printed in Unicode NFC (precomposed), so
	// that "e" + U+0301 and U+00E9 are one name; the digest is of the
	// bytes as read.
	d, root, err := parseYAML(l.ctx, path, norm.NFC.Bytes(data), l.opts, &l.notes, &l.warnings)
	if err != nil {
		if cerr := l.ctx.Err(); cerr != nil {
			return nil, cerr
		}
		if looksLikeModel(data) {
			return nil, err
		}
		f.Inputs = l.inputs
		return f, nil
	}
	sum := sha256.Sum256(data)
	f.SHA256 = hex.EncodeToString(sum[:])
	f.Kind = sniffNode(root)
	if want != 0 && f.Kind != want {
		return nil, &Fault{File: path, Msg: fmt.Sprintf("is %s, not a %s", f.Kind.Article(), want)}
	}
	switch f.Kind {
	case FleetFile:
		f.Fleet = &Fleet{Path: path, Name: path, SHA256: f.SHA256}
		f.Fleet.decode(l, d, root)
	case SystemFile:
		f.System = &System{Header: Header{Path: path, Name: path}}
		f.System.decode(d, root)
	case ClassFile:
		if k := topValue(root, "kind"); k != "" && k != "class" {
			d.fault(root, "kind", "unknown kind %q; want class (the default), system or fleet", clip(k))
			return nil, d.err()
		}
		f.Class = &Class{Header: Header{Path: path, Name: path}}
		f.Class.decode(d, root)
	default:
		f.Inputs = l.inputs
		return f, nil
	}
	if err := d.err(); err != nil {
		return nil, err
	}
	if h := f.Header(); h != nil {
		h.SHA256 = f.SHA256
	}
	if f.Fleet != nil {
		f.Fleet.SHA256 = f.SHA256
	}
	f.Inputs, f.Notes, f.Warnings = l.inputs, l.notes, l.warnings
	return f, nil
}

// class reads a fleet's class file: it must be a class config. Nothing of
// a file of another kind is echoed.
func (l *loader) class(path string) (*Class, error) {
	data, err := l.read(path, MaxFileBytes)
	if err != nil {
		var tooBig *tooBigError
		if errors.As(err, &tooBig) {
			return nil, &tooBig.Fault
		}
		return nil, err
	}
	if k := sniffBytes(data); k != OtherFile {
		return nil, &Fault{File: path, Msg: fmt.Sprintf("is %s, not a class config", k.Article())}
	}
	f, err := l.file(path, data, ClassFile)
	if err != nil {
		return nil, err
	}
	if f.Class == nil {
		return nil, &Fault{File: path, Msg: "is not a class config"}
	}
	return f.Class, nil
}

// Article returns the kind's name after "a" or "an": "an inventory CSV".
func (k Kind) Article() string {
	word := k.String()
	if word != "" && strings.ContainsRune("aeiou", rune(word[0])) {
		return "an " + word
	}
	return "a " + word
}

// modelKeys are top-level keys only model files have.
var modelKeys = []string{"version", "kind", "states", "actions", "components", "classes", "period_years", "discount", "currency", "inventory", "budget"}

// sniffBytes recognises the kinds that are not YAML: empty, binary and
// CSV files; OtherFile means "parse it as YAML".
func sniffBytes(data []byte) Kind {
	switch {
	case len(bytes.TrimSpace(data)) == 0:
		return EmptyFile
	case bytes.IndexByte(data, 0) >= 0 || !utf8.Valid(data):
		return BinaryFile
	}
	return sniffCSV(data)
}

// looksLikeModel reports whether a file that is not valid YAML starts like
// a model file, so that its syntax error is worth reporting.
func looksLikeModel(data []byte) bool {
	for _, line := range strings.SplitN(string(data[:min(len(data), 4096)]), "\n", 40) {
		key, _, ok := strings.Cut(strings.TrimSpace(line), ":")
		if ok && slices.Contains(modelKeys, key) {
			return true
		}
	}
	return false
}

// sniffNode recognises a parsed YAML document.
func sniffNode(body *yaml.Node) Kind {
	if body.Kind != yaml.MappingNode {
		return OtherFile
	}
	switch kind := topValue(body, "kind"); {
	case kind == "fleet" || kind == "" && hasKey(body, "classes"):
		return FleetFile
	case kind == "system":
		return SystemFile
	case kind != "":
		return ClassFile // the decoder names the unknown kind
	}
	for i := 0; i+1 < len(body.Content); i += 2 {
		if slices.Contains(modelKeys, body.Content[i].Value) {
			return ClassFile
		}
	}
	return SettingsFile
}

// sniffCSV recognises the header of a records or an inventory CSV.
func sniffCSV(data []byte) Kind {
	text := strings.TrimPrefix(string(data[:min(len(data), 64<<10)]), "\ufeff")
	for _, line := range strings.Split(text, "\n") {
		line = strings.TrimSpace(line)
		if line == "" || strings.HasPrefix(line, "#") {
			continue
		}
		cols := map[string]bool{}
		for _, c := range strings.Split(line, ",") {
			cols[strings.ToLower(strings.Trim(strings.TrimSpace(c), `"`))] = true
		}
		switch {
		case cols["unit"] && cols["date"] && cols["condition"]:
			return RecordsFile
		case cols["unit"] && cols["class"] && cols["condition"]:
			return InventoryFile
		}
		return OtherFile
	}
	return OtherFile
}

func topValue(n *yaml.Node, key string) string {
	if n.Kind != yaml.MappingNode {
		return ""
	}
	for i := 0; i+1 < len(n.Content); i += 2 {
		if n.Content[i].Value == key && n.Content[i+1].Kind == yaml.ScalarNode {
			return n.Content[i+1].Value
		}
	}
	return ""
}

func hasKey(n *yaml.Node, key string) bool {
	for i := 0; i+1 < len(n.Content); i += 2 {
		if n.Content[i].Value == key {
			return true
		}
	}
	return false
}

// OpenProblem says why a file could not be opened, without repeating its
// path.
func OpenProblem(err error) string {
	var pe *os.PathError
	if errors.As(err, &pe) {
		err = pe.Err
	}
	switch {
	case errors.Is(err, os.ErrNotExist):
		return "file not found"
	case errors.Is(err, os.ErrPermission):
		return "permission denied"
	}
	return err.Error()
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
