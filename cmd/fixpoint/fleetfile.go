package main

import (
	"encoding/csv"
	"errors"
	"fixpoint/optimize/fleet"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"

	"go.yaml.in/yaml/v3"
)

// Limits on a fleet.
const (
	maxClasses    = 100
	maxYears      = 100
	maxUnits      = 5_000_000
	maxInvBytes   = 256 << 20
	maxBudgetYear = 1e15
)

var fleetKeys = []string{"version", "kind", "name", "currency", "classes", "inventory", "budget"}

// fleetFile is a decoded fleet file: classes (each a class config), an
// inventory of units and an annual budget.
type fleetFile struct {
	Path     string
	Name     string
	Currency string
	// Names and Classes in file order.
	Names   []string
	Classes []*classFile
	// Counts[c][s] are the units of class c in condition s.
	Counts [][]float64
	Units  int
	Years  int
	// Budget is one number per year, or PerYear for every year.
	Budget     []float64
	PerYear    float64
	HasPerYear bool

	budgetNode *yaml.Node
}

// isFleet reports whether a decoded top level is a fleet file.
func isFleet(root *yaml.Node, kind string) bool {
	if kind == "fleet" {
		return true
	}
	if kind != "" || root.Kind != yaml.MappingNode {
		return false
	}
	for i := 0; i+1 < len(root.Content); i += 2 {
		if root.Content[i].Value == "classes" {
			return true
		}
	}
	return false
}

func (ff *fleetFile) decode(d *doc, root *yaml.Node) {
	top := d.mapping(root, "", fleetKeys)
	required := func(key string) (*yaml.Node, bool) { return d.required(root, top, key) }
	d.decodeIdentity(root, top, &ff.Name, &ff.Currency)
	dir := filepath.Dir(ff.Path)
	if n, ok := required("classes"); ok {
		classes := d.mapping(n, "classes", nil)
		if len(classes) > maxClasses {
			d.fault(n, "classes", "%d classes, over the limit of %d", len(classes), maxClasses)
		}
		if len(classes) == 0 && d.resolve(n).Kind == yaml.MappingNode {
			d.fault(n, "classes", "there are no classes")
		}
		for _, name := range sortedKeys(classes) {
			f := classes[name]
			rel, ok := d.str(f.value, join("classes", name))
			if !ok {
				continue
			}
			path := rel
			if !filepath.IsAbs(rel) {
				path = filepath.Join(dir, rel)
			}
			if same(path, ff.Path) {
				d.fault(f.value, join("classes", name), "the fleet file cannot be its own class")
				continue
			}
			m, err := loadModelWith(path, d.opts, d.notes)
			var c *classFile
			if err == nil {
				c, err = classOnly(path, m)
			}
			if err != nil {
				// The class file's own faults name it; say where it is used.
				d.fault(f.value, join("classes", name), "class file %s has problems (listed below)", path)
				d.faults = append(d.faults, unjoin(err)...)
				continue
			}
			ff.Names = append(ff.Names, name)
			ff.Classes = append(ff.Classes, c)
		}
	}
	ff.checkClasses(d, top)
	if n, ok := required("budget"); ok {
		ff.budgetNode = n
		b := d.mapping(n, "budget", []string{"years", "per_year"})
		if f, ok := b["years"]; ok {
			if v, ok := d.integer(f.value, "budget.years"); ok {
				ff.Years = v
				if v < 1 || v > maxYears {
					d.fault(f.value, "budget.years", "%d years is not in [1, %d]", v, maxYears)
				}
			}
		} else {
			d.fault(n, "budget.years", "missing required key \"years\"")
		}
		if f, ok := b["per_year"]; ok {
			if r := d.resolve(f.value); r.Kind == yaml.SequenceNode {
				for i, it := range r.Content {
					if v, ok := d.number(it, index("budget.per_year", i)); ok {
						if v < 0 || v > maxBudgetYear {
							d.fault(it, index("budget.per_year", i), "budget %g is negative or too large", v)
						}
						ff.Budget = append(ff.Budget, v)
					}
				}
				if ff.Years > 0 && len(r.Content) != ff.Years {
					d.fault(f.value, "budget.per_year", "%d budgets for %d years; give one number, or one per year", len(r.Content), ff.Years)
				}
			} else if v, ok := d.number(f.value, "budget.per_year"); ok {
				ff.PerYear, ff.HasPerYear = v, true
				if v < 0 || v > maxBudgetYear {
					d.fault(f.value, "budget.per_year", "budget %g is negative or too large", v)
				}
			}
		} else {
			d.fault(n, "budget.per_year", "missing required key \"per_year\"")
		}
	}
	if n, ok := required("inventory"); ok {
		if rel, ok := d.str(n, "inventory"); ok && len(ff.Classes) == len(ff.Names) {
			path := rel
			if !filepath.IsAbs(rel) {
				path = filepath.Join(dir, rel)
			}
			if err := ff.readInventory(path); err != nil {
				d.faults = append(d.faults, unjoin(err)...)
			}
		}
	}
}

// same reports whether two paths name the same file.
func same(a, b string) bool {
	aa, err1 := filepath.Abs(a)
	bb, err2 := filepath.Abs(b)
	return err1 == nil && err2 == nil && aa == bb
}

// checkClasses requires one period, one discount and one currency.
func (ff *fleetFile) checkClasses(d *doc, top map[string]field) {
	if len(ff.Classes) == 0 {
		return
	}
	first := ff.Classes[0]
	g0, err := first.DiscountFactor()
	if err != nil {
		d.faults = append(d.faults, &inputError{File: first.Path, Path: "discount", Msg: "a fleet class needs a discount rate or factor"})
	}
	for i, c := range ff.Classes {
		if c.Currency != ff.Currency {
			d.fault(top["classes"].value, join("classes", ff.Names[i]), "class file %s is in %s, the fleet in %s", c.Path, c.Currency, ff.Currency)
		}
		if i == 0 {
			continue
		}
		if c.PeriodYears != first.PeriodYears {
			d.fault(top["classes"].value, join("classes", ff.Names[i]), "class files %s and %s have different periods (%g and %g years); a plan year is one period of every class",
				first.Path, c.Path, first.PeriodYears, c.PeriodYears)
		}
		if g, err := c.DiscountFactor(); err == nil && math.Abs(g-g0) > 1e-12 {
			d.fault(top["classes"].value, join("classes", ff.Names[i]), "class files %s and %s have different discount factors (%.6f and %.6f); a fleet shares one",
				first.Path, c.Path, g0, g)
		}
	}
}

// readInventory reads the units: a CSV with a header naming unit, class
// and condition (more columns allowed, ignored). Every fault is reported
// with its line.
func (ff *fleetFile) readInventory(path string) error {
	f, err := os.Open(path)
	if err != nil {
		return &inputError{File: path, Msg: openProblem(err)}
	}
	defer f.Close()
	inv, err := decodeInventory(path, io.LimitReader(f, maxInvBytes), ff.Names, ff.Classes, maxUnits)
	if err != nil {
		return err
	}
	ff.Counts, ff.Units = inv.counts, inv.units
	return nil
}

type inventory struct {
	counts [][]float64
	units  int
}

// decodeInventory parses an inventory CSV against the classes.
func decodeInventory(path string, r io.Reader, names []string, classes []*classFile, limit int) (*inventory, error) {
	cr := csv.NewReader(r)
	cr.FieldsPerRecord = -1
	cr.Comment = '#'
	header, err := cr.Read()
	if errors.Is(err, io.EOF) {
		return nil, &inputError{File: path, Msg: "the file is empty; want a header unit,class,condition"}
	}
	if err != nil {
		return nil, &inputError{File: path, Msg: err.Error()}
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
			return nil, &inputError{File: path, Line: 1, Msg: fmt.Sprintf("the header has no %q column; want unit,class,condition", k)}
		}
	}
	inv := &inventory{counts: make([][]float64, len(classes))}
	for i, c := range classes {
		inv.counts[i] = make([]float64, len(c.Model.States))
	}
	seen := make(map[string]int)
	var faults []error
	fault := func(line int, format string, args ...any) {
		if len(faults) < 100 {
			faults = append(faults, &inputError{File: path, Line: line, Msg: fmt.Sprintf(format, args...)})
		}
	}
	get := func(rec []string, k string) string {
		if i := col[k]; i < len(rec) {
			return strings.TrimSpace(rec[i])
		}
		return ""
	}
	for {
		rec, err := cr.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			var pe *csv.ParseError
			if errors.As(err, &pe) {
				faults = append(faults, &inputError{File: path, Line: pe.Line, Msg: pe.Err.Error()})
				break
			}
			return nil, &inputError{File: path, Msg: err.Error()}
		}
		line, _ := cr.FieldPos(0)
		if inv.units >= limit {
			return nil, &inputError{File: path, Line: line, Msg: fmt.Sprintf("more than %d units, over the limit", limit)}
		}
		unit, class, cond := get(rec, "unit"), get(rec, "class"), get(rec, "condition")
		if unit == "" {
			fault(line, "no unit id")
			continue
		}
		if prev, dup := seen[unit]; dup {
			fault(line, "unit %q is listed twice (also line %d)", unit, prev)
			continue
		}
		seen[unit] = line
		ci := -1
		for i, n := range names {
			if n == class {
				ci = i
			}
		}
		if ci < 0 {
			fault(line, "unknown class %q%s", class, didYouMean(class, names))
			continue
		}
		s := classes[ci].Model.StateIndex(cond)
		if s < 0 {
			fault(line, "unknown condition %q for class %s%s", cond, class, didYouMean(cond, classes[ci].Model.StateNames()))
			continue
		}
		inv.counts[ci][s]++
		inv.units++
	}
	if len(faults) > 0 {
		return nil, errors.Join(faults...)
	}
	if inv.units == 0 {
		return nil, &inputError{File: path, Msg: "no units"}
	}
	return inv, nil
}

// fleet builds the fleet.Problem for years of budget.
func (ff *fleetFile) fleet(budget []float64) (*fleet.Problem, error) {
	d, err := ff.Classes[0].discount()
	if err != nil {
		return nil, &inputError{File: ff.Classes[0].Path, Path: "discount", Msg: err.Error()}
	}
	f := &fleet.Problem{Discount: d, Budget: budget}
	for i, c := range ff.Classes {
		f.Classes = append(f.Classes, fleet.Class{Name: ff.Names[i], Model: c.Model, Costs: c.Costs, Counts: ff.Counts[i]})
	}
	return f, nil
}
