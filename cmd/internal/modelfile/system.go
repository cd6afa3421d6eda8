package modelfile

import (
	"strings"

	"go.yaml.in/yaml/v3"

	"fixpoint/condition"
	"fixpoint/costs"
	"fixpoint/optimize/system"
)

// MaxComponents bounds the components of a system file.
const MaxComponents = 16

var systemKeys = []string{"version", "kind", "name", "currency", "period_years", "discount",
	"shutdown_cost", "components", "down_when", "down_cost"}

// System is a decoded system file: a machine of components that share a
// shutdown.
type System struct {
	Header
	Shutdown, Down float64
	DownOnUnsafe   bool
	Components     []*Class
}

func (s *System) decode(d *doc, root *yaml.Node) {
	top := d.mapping(root, "", systemKeys)
	s.decodeHeader(d, root, top, false)
	if f, ok := top["shutdown_cost"]; ok {
		s.Shutdown = d.cost(f.value, "shutdown_cost")
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
			d.fault(f.value, "down_when", "unknown rule %q; want any_unsafe or never", clip(v))
		}
	}
	if f, ok := top["down_cost"]; ok {
		s.Down = d.cost(f.value, "down_cost")
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
	case len(items) > MaxComponents:
		d.fault(f.value, "components", "%d components, over the limit of %d", len(items), MaxComponents)
		return
	}
	names := make(map[string]int)
	for i, it := range items {
		c := &Class{Header: Header{Path: s.Path, Currency: s.Currency, Period: s.Period, Discount: s.Discount},
			prefix: index("components", i)}
		c.loc.root = it
		c.Model = &condition.Model{PeriodYears: s.Period.Years()}
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
		first := len(d.faults)
		c.decodeBody(d, it, fields)
		c.nameFaults(d.faults[first:])
		s.Components = append(s.Components, c)
	}
}

// nameFaults adds the component's name to the field path of its faults:
// "components[1].actions[0] (component brake)", or "(component brake,
// action tape, row worn)" where the path already says more.
func (c *Class) nameFaults(faults []error) {
	if c.Name == "" {
		return
	}
	for _, err := range faults {
		f, ok := err.(*Fault)
		if !ok || f.File != c.Path || (f.Path != c.prefix && !strings.HasPrefix(f.Path, c.prefix+".")) {
			continue
		}
		label := "component " + c.Name
		if strings.HasSuffix(f.Path, ")") {
			if i := strings.LastIndex(f.Path, " ("); i >= 0 {
				f.Path = f.Path[:i+2] + label + ", " + f.Path[i+2:]
				continue
			}
		}
		f.Path += " (" + label + ")"
	}
}

// cost reads a shared cost: a finite number >= 0.
func (d *doc) cost(n *yaml.Node, path string) float64 {
	v, ok := d.number(n, path)
	if ok && v < 0 {
		d.fault(n, path, "cost %g is negative", v)
	}
	return v
}

// Machine builds the system.Machine of the file and validates it; the
// errors name the file.
func (s *System) Machine() (*system.Machine, error) {
	if s.Discount.IsZero() {
		return nil, &Fault{File: s.Path, Path: "discount", Msg: "a system needs a discount rate or factor"}
	}
	m := &system.Machine{Shutdown: s.Shutdown, Down: s.Down, DownOnUnsafe: s.DownOnUnsafe, Discount: s.Discount}
	for _, c := range s.Components {
		m.Components = append(m.Components, system.Component{Name: c.Name, Model: c.Model, Costs: c.Costs})
	}
	if err := m.Validate(); err != nil {
		return nil, &Fault{File: s.Path, Msg: Plain(err)}
	}
	return m, nil
}
