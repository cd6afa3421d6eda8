package modelfile

import (
	"context"
	"crypto/sha256"
	"encoding/csv"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"path/filepath"
	"strings"

	"go.yaml.in/yaml/v3"
	"golang.org/x/text/unicode/norm"

	"fixpoint/optimize/fleet"
)

// Limits on a fleet.
const (
	MaxClasses    = 100
	MaxYears      = 100
	MaxUnits      = 5_000_000
	MaxBudgetYear = 1e15
	maxInvBytes   = 256 << 20
)

var fleetKeys = []string{"version", "kind", "name", "currency", "classes", "inventory", "budget"}

// Fleet is a decoded fleet file: classes (each a class config), an
// inventory of units and a budget per year.
type Fleet struct {
	// Path is the fleet file as named; SHA256 the hex digest of its
	// bytes (the class files and the inventory it names are not in it).
	Path     string
	SHA256   string
	Name     string
	Currency string
	// Names and Classes in file order.
	Names   []string
	Classes []*Class
	// Inventory is the path of the inventory CSV, InventorySHA256 the hex
	// digest of its bytes.
	Inventory, InventorySHA256 string
	// Counts[c][s] are the units of class c in condition s.
	Counts [][]float64
	Units  int
	// Years is the plan horizon in years; Budget[y] the budget of year y+1.
	Years  int
	Budget []float64
	// PerYear reports whether the file gave one budget for every year.
	PerYear bool
}

func (ff *Fleet) decode(l *loader, d *doc, root *yaml.Node) {
	top := d.mapping(root, "", fleetKeys)
	d.decodeIdentity(root, top, &ff.Name, &ff.Currency)
	if n, ok := d.required(root, top, "classes"); ok {
		classes := d.mapping(n, "classes", nil)
		if len(classes) > MaxClasses {
			d.fault(n, "classes", "%d classes, over the limit of %d", len(classes), MaxClasses)
			classes = nil
		}
		if len(classes) == 0 && d.resolve(n).Kind == yaml.MappingNode {
			d.fault(n, "classes", "there are no classes")
		}
		for _, name := range sortedKeys(classes) {
			f := classes[name]
			key := join("classes", name)
			if problem := NameProblem(name); problem != "" {
				d.fault(f.key, key, "%s", problem)
				continue
			}
			path, ok := ff.relative(d, f.value, key)
			if !ok {
				continue
			}
			c, err := l.class(path)
			if err != nil {
				// The class file's own faults name it; say where it is used.
				d.fault(f.value, key, "class file %s has problems (listed below)", path)
				d.add(unjoin(err)...)
				continue
			}
			ff.Names = append(ff.Names, name)
			ff.Classes = append(ff.Classes, c)
		}
	}
	ff.checkClasses(d, top)
	if n, ok := d.required(root, top, "budget"); ok {
		ff.decodeBudget(d, n)
	}
	if n, ok := d.required(root, top, "inventory"); ok {
		path, ok := ff.relative(d, n, "inventory")
		if ok && len(ff.Classes) == 0 {
			// No class to count its units by: say only whether it is
			// an inventory at all.
			data, err := l.read(path, maxInvBytes)
			if err != nil {
				d.add(unjoin(err)...)
			} else if k := Sniff(data); k != InventoryFile {
				d.add(&Fault{File: path, Msg: fmt.Sprintf("this is %s, not an inventory CSV (want a header unit,class,condition)", k.Article())})
			}
		}
		if ok && len(ff.Classes) == len(ff.Names) && len(ff.Classes) > 0 {
			ff.Inventory = path
			data, err := l.read(path, maxInvBytes)
			if err == nil {
				sum := sha256.Sum256(data)
				ff.InventorySHA256 = hex.EncodeToString(sum[:])
				err = ff.decodeInventory(d.ctx, path, norm.NFC.Bytes(data))
			}
			if err != nil {
				d.add(unjoin(err)...)
			}
		}
	}
}

// relative resolves a path given in the fleet file against the fleet
// file's directory. Absolute paths are refused, and so are paths that
// leave the fleet file's directory tree, by ".." or, once symbolic links
// are resolved, by a link: a fleet file names files of its own folder.
func (ff *Fleet) relative(d *doc, n *yaml.Node, key string) (string, bool) {
	rel, ok := d.str(n, key)
	if !ok {
		return "", false
	}
	if rel == "" || filepath.IsAbs(rel) || filepath.VolumeName(rel) != "" {
		d.fault(n, key, "give the file's path relative to the fleet file")
		return "", false
	}
	dir := filepath.Dir(ff.Path)
	if !filepath.IsLocal(rel) {
		d.fault(n, key, "%q leaves the fleet file's folder: give a path inside it (the fleet file's folder or below)", clip(rel))
		return "", false
	}
	path := filepath.Join(dir, rel)
	if real, err := filepath.EvalSymlinks(path); err == nil {
		// A missing file is reported when it is read.
		top, err := filepath.EvalSymlinks(dir)
		if err != nil {
			top = dir
		}
		if in, err := filepath.Rel(top, real); err != nil || !filepath.IsLocal(in) {
			d.fault(n, key, "%q leads through a symbolic link out of the fleet file's folder: give a path inside it (the fleet file's folder or below)", clip(rel))
			return "", false
		}
	}
	if same(path, ff.Path) {
		d.fault(n, key, "the fleet file cannot name itself")
		return "", false
	}
	return path, true
}

func (ff *Fleet) decodeBudget(d *doc, n *yaml.Node) {
	b := d.mapping(n, "budget", []string{"years", "per_year"})
	if f, ok := b["years"]; ok {
		if v, ok := d.integer(f.value, "budget.years"); ok {
			ff.Years = v
			if v < 1 || v > MaxYears {
				d.fault(f.value, "budget.years", "%d years is not in [1, %d]", v, MaxYears)
			}
		}
	} else {
		d.fault(n, "budget.years", "missing required key \"years\"")
	}
	f, ok := b["per_year"]
	if !ok {
		d.fault(n, "budget.per_year", "missing required key \"per_year\"")
		return
	}
	amount := func(it *yaml.Node, path string) float64 {
		v, ok := d.number(it, path)
		if ok && (v < 0 || v > MaxBudgetYear) {
			d.fault(it, path, "budget %g is not in [0, %g]", v, float64(MaxBudgetYear))
		}
		return v
	}
	if r := d.resolve(f.value); r.Kind == yaml.SequenceNode {
		for i, it := range r.Content {
			ff.Budget = append(ff.Budget, amount(it, index("budget.per_year", i)))
		}
		if ff.Years > 0 && len(r.Content) != ff.Years {
			d.fault(f.value, "budget.per_year", "%d budgets for %d years; give one number, or one per year", len(r.Content), ff.Years)
		}
		return
	}
	v := amount(f.value, "budget.per_year")
	ff.PerYear = true
	for range max(0, min(ff.Years, MaxYears)) {
		ff.Budget = append(ff.Budget, v)
	}
}

// same reports whether two paths name the same file.
func same(a, b string) bool {
	aa, err1 := filepath.Abs(a)
	bb, err2 := filepath.Abs(b)
	return err1 == nil && err2 == nil && aa == bb
}

// checkClasses requires one period, one discount and one currency, and
// the discounted criterion (the fleet plan is a present-value plan).
func (ff *Fleet) checkClasses(d *doc, top map[string]field) {
	if len(ff.Classes) == 0 {
		return
	}
	first := ff.Classes[0]
	if first.Discount.IsZero() {
		d.add(&Fault{File: first.Path, Path: "discount", Msg: "a fleet class needs a discount rate or factor"})
	}
	for i, c := range ff.Classes {
		at := top["classes"].value
		key := join("classes", ff.Names[i])
		if c.Currency != ff.Currency {
			d.fault(at, key, "class file %s is in %s, the fleet in %s", c.Path, c.Currency, ff.Currency)
		}
		if c.Criterion == Average {
			d.fault(at, key, "the fleet plan is a present-value plan (discounted criterion); class file %s has criterion: average", c.Path)
		}
		if i == 0 {
			continue
		}
		if c.Period != first.Period {
			// Their discount factors per period differ as a consequence:
			// not reported again.
			d.fault(at, key, "class files %s and %s have different periods (%s and %s); the classes of a fleet share one",
				first.Path, c.Path, first.Period, c.Period)
			continue
		}
		if g, g0 := c.Discount.Factor(), first.Discount.Factor(); !c.Discount.IsZero() && !first.Discount.IsZero() && g != g0 {
			d.fault(at, key, "class files %s and %s have different discount factors (%.6f and %.6f); a fleet shares one",
				first.Path, c.Path, g0, g)
		}
	}
}

// decodeInventory reads the units: a CSV with a header naming unit, class
// and condition (more columns allowed, ignored). Every fault is reported
// with its line, up to 100.
func (ff *Fleet) decodeInventory(ctx context.Context, path string, data []byte) error {
	cr := csv.NewReader(strings.NewReader(string(data)))
	cr.FieldsPerRecord = -1
	cr.Comment = '#'
	header, err := cr.Read()
	if errors.Is(err, io.EOF) {
		return &Fault{File: path, Msg: "the file is empty; want a header unit,class,condition"}
	}
	if err != nil {
		return &Fault{File: path, Msg: "not an inventory CSV (want a header unit,class,condition)"}
	}
	col := map[string]int{"unit": -1, "class": -1, "condition": -1}
	for i, h := range header {
		h = strings.ToLower(strings.TrimSpace(strings.TrimPrefix(h, "\ufeff")))
		if j, ok := col[h]; ok && j < 0 {
			col[h] = i
		}
	}
	for _, k := range []string{"unit", "class", "condition"} {
		if col[k] < 0 {
			return &Fault{File: path, Line: 1, Msg: fmt.Sprintf("the header has no %q column; want unit,class,condition", k)}
		}
	}
	ff.Counts = make([][]float64, len(ff.Classes))
	for i, c := range ff.Classes {
		ff.Counts[i] = make([]float64, len(c.Model.States))
	}
	seen := make(map[string]int)
	var faults []error
	more, hints := 0, 0
	fault := func(line int, format string, args ...any) {
		if len(faults) >= 100 {
			more++
			return
		}
		faults = append(faults, &Fault{File: path, Line: line, Msg: fmt.Sprintf(format, args...)})
	}
	hint := func(s string, candidates []string) string {
		if hints++; hints > maxHints {
			return ""
		}
		return DidYouMean(s, candidates)
	}
	get := func(rec []string, k string) string {
		if i := col[k]; i < len(rec) {
			return strings.TrimSpace(rec[i])
		}
		return ""
	}
	for n := 0; ; n++ {
		if n%4096 == 0 && ctx.Err() != nil {
			return ctx.Err()
		}
		rec, err := cr.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			var pe *csv.ParseError
			if errors.As(err, &pe) {
				fault(pe.Line, "%v", pe.Err)
				break
			}
			return &Fault{File: path, Msg: err.Error()}
		}
		line, _ := cr.FieldPos(0)
		if ff.Units >= MaxUnits {
			return &Fault{File: path, Line: line, Msg: fmt.Sprintf("more than %d units, over the limit", MaxUnits)}
		}
		unit, class, cond := get(rec, "unit"), get(rec, "class"), get(rec, "condition")
		if unit == "" {
			fault(line, "no unit id")
			continue
		}
		if prev, dup := seen[unit]; dup {
			fault(line, "unit %q is listed twice (also line %d)", clip(unit), prev)
			continue
		}
		seen[unit] = line
		ci := -1
		for i, n := range ff.Names {
			if n == class {
				ci = i
			}
		}
		if ci < 0 {
			fault(line, "unknown class %q%s", clip(class), hint(class, ff.Names))
			continue
		}
		s := ff.Classes[ci].Model.StateIndex(cond)
		if s < 0 {
			fault(line, "unknown condition %q for class %s%s", clip(cond), class, hint(cond, ff.Classes[ci].Model.StateNames()))
			continue
		}
		ff.Counts[ci][s]++
		ff.Units++
	}
	if more > 0 {
		faults = append(faults, &Fault{File: path, Msg: fmt.Sprintf("and %d more problems", more)})
	}
	if len(faults) > 0 {
		return errors.Join(faults...)
	}
	if ff.Units == 0 {
		return &Fault{File: path, Msg: "no units"}
	}
	return nil
}

// Problem builds the fleet.Problem with the given budget per year (nil:
// the file's budget).
func (ff *Fleet) Problem(budget []float64) (*fleet.Problem, error) {
	d := ff.Classes[0].Discount
	if budget == nil {
		budget = ff.Budget
	}
	f := &fleet.Problem{Discount: d, Budget: budget}
	for i, c := range ff.Classes {
		f.Classes = append(f.Classes, fleet.Class{Name: ff.Names[i], Model: c.Model, Costs: c.Costs, Counts: ff.Counts[i]})
	}
	return f, nil
}
