package main

import (
	"fmt"
	"io"
	"os"

	"go.yaml.in/yaml/v3"

	"fixpoint/condition"
	"fixpoint/costs"
	"fixpoint/optimize/system"
)

// maxComponents bounds the components of a system file.
const maxComponents = 16

var systemKeys = []string{"version", "kind", "name", "currency", "period_years", "discount",
	"shutdown_cost", "components", "down_when", "down_cost"}

// systemFile is a decoded system file: a machine of components that share
// a shutdown.
type systemFile struct {
	fileHeader
	Shutdown, Down float64
	DownOnUnsafe   bool
	Components     []*classFile
}

// modelFile is what a model file holds: a class config, a system or a
// fleet.
type modelFile struct {
	Class  *classFile
	System *systemFile
	Fleet  *fleetFile
}

// loadModel reads a class config, a system file or a fleet file, with the
// run's decode options, and prints on stderr what decoding changed.
func (a *app) loadModel(path string) (*modelFile, error) {
	renorm, err := a.boolean("renormalize")
	if err != nil {
		return nil, err
	}
	var notes []string
	m, err := loadModelWith(path, decodeOptions{Renormalize: renorm}, &notes)
	for _, n := range notes {
		fmt.Fprintln(a.stderr, "fixpoint: note: "+n)
	}
	return m, err
}

// loadModelWith reads a model file.
func loadModelWith(path string, opts decodeOptions, notes *[]string) (*modelFile, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, &inputError{File: path, Msg: openProblem(err)}
	}
	defer f.Close()
	return decodeModel(path, f, opts, notes)
}

// decodeModel decodes a class config, a system file or a fleet file read
// from r.
func decodeModel(file string, r io.Reader, opts decodeOptions, notes *[]string) (*modelFile, error) {
	if notes == nil {
		notes = new([]string)
	}
	d, root, err := parseYAML(file, r, maxFileBytes, opts, notes)
	if err != nil {
		return nil, err
	}
	kind := ""
	if root.Kind == yaml.MappingNode {
		for i := 0; i+1 < len(root.Content); i += 2 {
			if root.Content[i].Value == "kind" {
				kind = root.Content[i+1].Value
			}
		}
	}
	switch {
	case isFleet(root, kind):
		ff := &fleetFile{Path: file, Name: file}
		ff.decode(d, root)
		if err := d.err(); err != nil {
			return nil, err
		}
		return &modelFile{Fleet: ff}, nil
	case kind == "system":
		s := &systemFile{fileHeader: fileHeader{Path: file, Name: file}}
		s.decode(d, root)
		if err := d.err(); err != nil {
			return nil, err
		}
		return &modelFile{System: s}, nil
	case kind == "" || kind == "class":
		c := &classFile{fileHeader: fileHeader{Path: file, Name: file}}
		c.decode(d, root)
		if err := d.err(); err != nil {
			return nil, err
		}
		return &modelFile{Class: c}, nil
	}
	d.fault(root, "kind", "unknown kind %q; want class (the default), system or fleet", kind)
	return nil, d.err()
}

func (s *systemFile) decode(d *doc, root *yaml.Node) {
	top := d.mapping(root, "", systemKeys)
	s.decodeHeader(d, root, top, false)
	if f, ok := top["shutdown_cost"]; ok {
		if v, ok := d.number(f.value, "shutdown_cost"); ok {
			s.Shutdown = v
			if v < 0 {
				d.fault(f.value, "shutdown_cost", "cost %g is negative", v)
			}
		}
	} else {
		d.fault(root, "shutdown_cost", "missing required key \"shutdown_cost\" (0 if stopping the machine costs nothing)")
	}
	s.DownOnUnsafe = true
	if f, ok := top["down_when"]; ok {
		switch v, _ := d.str(f.value, "down_when"); v {
		case "any_unsafe":
		case "never":
			s.DownOnUnsafe = false
		default:
			d.fault(f.value, "down_when", "unknown rule %q; want any_unsafe or never", v)
		}
	}
	if f, ok := top["down_cost"]; ok {
		if v, ok := d.number(f.value, "down_cost"); ok {
			s.Down = v
			if v < 0 {
				d.fault(f.value, "down_cost", "cost %g is negative", v)
			}
		}
	}
	f, ok := top["components"]
	if !ok {
		d.fault(root, "components", "missing required key \"components\"")
		return
	}
	items := d.sequence(f.value, "components")
	switch {
	case items == nil && d.resolve(f.value).Kind == yaml.SequenceNode:
		d.fault(f.value, "components", "there are no components")
		return
	case len(items) > maxComponents:
		d.fault(f.value, "components", "%d components, over the limit of %d", len(items), maxComponents)
		return
	}
	names := make(map[string]int)
	for i, it := range items {
		c := &classFile{fileHeader: fileHeader{Path: s.Path, Currency: s.Currency, PeriodYears: s.PeriodYears},
			prefix: index("components", i)}
		c.loc.root = it
		c.Model = &condition.Model{PeriodYears: s.PeriodYears}
		c.Costs = &costs.Schedule{Currency: s.Currency}
		fields := d.mapping(it, c.prefix, []string{"name", "states", "actions"})
		if nf, ok := fields["name"]; ok {
			if name, ok := d.name(nf.value, c.p("name")); ok {
				c.Name = name
				if j, dup := names[name]; dup {
					d.fault(nf.value, c.p("name"), "component name %q is used twice (also components[%d])", name, j)
				}
				names[name] = i
			}
		} else {
			d.fault(it, c.p("name"), "missing required key \"name\"")
		}
		if c.decodeBody(d, it, fields) && c.Model.Passive() < 0 {
			d.fault(c.loc.actions, c.p("actions"), "component %q has no passive action; mark its leave-as-is action passive: true", c.Name)
		}
		s.Components = append(s.Components, c)
	}
}

// system builds the system.Machine of the file and validates it; the
// errors name the file.
func (s *systemFile) system() (*system.Machine, error) {
	g, err := s.discount()
	if err != nil {
		return nil, &inputError{File: s.Path, Path: "discount", Msg: err.Error()}
	}
	sys := &system.Machine{Shutdown: s.Shutdown, Down: s.Down, DownOnUnsafe: s.DownOnUnsafe, Discount: g}
	for _, c := range s.Components {
		sys.Components = append(sys.Components, system.Component{Name: c.Name, Model: c.Model, Costs: c.Costs})
	}
	if err := sys.Validate(); err != nil {
		return nil, &inputError{File: s.Path, Msg: err.Error()}
	}
	return sys, nil
}

// byteSizeText formats a byte count for messages: "1.5 GiB".
func byteSizeText(b float64) string {
	switch {
	case b >= 1<<30:
		return fmt.Sprintf("%.1f GiB", b/(1<<30))
	case b >= 1<<20:
		return fmt.Sprintf("%.1f MiB", b/(1<<20))
	}
	return fmt.Sprintf("%.0f KiB", b/(1<<10))
}
