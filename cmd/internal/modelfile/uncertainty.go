package modelfile

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"go.yaml.in/yaml/v3"

	"fixpoint/optimize/robust"
)

// Uncertainty is the optional uncertainty: block of a class config: how
// far each transition row may be from the truth, for robust advice
// (solve --robust). Indices follow the model: [a][s] is the row of action
// a in state s.
//
//	uncertainty:
//	  set: l1                 # l1 (default) or kl
//	  radius: 0.1             # one radius for every row, or {action: R | {state: R}}
//	  confidence: 0.9         # or: radii from the observations at this confidence
//	  observations:           # transitions observed per row (fit's n)
//	    leave: {good: 120, fair: 80}
//	  widen:                  # transitions a row gives 0 that the set may reach
//	    leave: {good: [poor]}
//	  no_data: whole_simplex  # rows without observations: whole_simplex or refuse
//
// radius and confidence exclude each other; confidence needs
// observations. A radius map must give every admissible row that has two
// or more possible next states (after widening) a radius.
type Uncertainty struct {
	// Set is the kind of ambiguity set; HasSet says the file named it
	// (l1 otherwise).
	Set    robust.Kind
	HasSet bool
	// Radius is the radius of every row (radius: R), when HasRadius.
	Radius    float64
	HasRadius bool
	// Radii[a][s] is the radius of each row (radius given as a map), NaN
	// where none is given (rows that are not admissible or known
	// exactly); nil unless the map form is used.
	Radii [][]float64
	// Confidence derives the radii from Observations, when HasConfidence.
	Confidence    float64
	HasConfidence bool
	// Observations[a][s] is the number of observed one-period transitions
	// of row s of action a (0 where none are given); nil without
	// observations, and Observations[a] nil for an action without any.
	Observations [][]int
	// Widen[a][s] lists the states the set of row (s, a) may reach
	// although the row gives them probability zero; nil without widen.
	Widen [][][]int
	// NoData says what a confidence-derived set does with a row without
	// observations (no_data: whole_simplex, the default, or refuse).
	NoData robust.NoData

	// line is the line of the block's key; keyNode the value of each key.
	line      int
	keyNode   map[string]*yaml.Node
	rowNode   map[rowKey]*yaml.Node
	rowsGiven map[rowKey]bool
}

type rowKey struct{ action, state int }

// Options returns the library options of the block: widened supports and
// the rule for rows without observations.
func (u *Uncertainty) Options() *robust.Options {
	return &robust.Options{Widen: u.Widen, NoData: u.NoData}
}

// MaxObservations bounds one row's number of observed transitions.
const MaxObservations = 1_000_000_000

var uncertaintyKeys = []string{"set", "radius", "confidence", "observations", "widen", "no_data"}

// decodeUncertainty reads the uncertainty block, when the file has one,
// after the states and actions.
func (c *Class) decodeUncertainty(d *doc, top map[string]field) {
	f, ok := top["uncertainty"]
	if !ok {
		return
	}
	const path = "uncertainty"
	u := &Uncertainty{line: f.key.Line, keyNode: map[string]*yaml.Node{}, rowNode: map[rowKey]*yaml.Node{}, rowsGiven: map[rowKey]bool{}}
	fields := d.mapping(f.value, path, uncertaintyKeys)
	if d.resolve(f.value).Kind == yaml.MappingNode && len(fields) == 0 && len(d.resolve(f.value).Content) == 0 {
		d.fault(f.value, path, "the block is empty; give a radius, or a confidence with observations (or remove the block)")
	}
	for k, v := range fields {
		u.keyNode[k] = v.value
	}
	m := c.Model
	usable := len(m.States) > 0 && len(m.Actions) == len(c.loc.actionNode) && len(m.Actions) > 0
	if sf, ok := fields["set"]; ok {
		if s, ok := d.str(sf.value, path+".set"); ok {
			k, err := robust.ParseKind(s)
			if err != nil {
				d.fault(sf.value, path+".set", "unknown set %q; want l1 (L1 distance) or kl (likelihood divergence)", clip(s))
			}
			u.Set, u.HasSet = k, err == nil
		}
	}
	if nf, ok := fields["no_data"]; ok {
		switch s, _ := d.str(nf.value, path+".no_data"); s {
		case "whole_simplex":
		case "refuse":
			u.NoData = robust.Refuse
		default:
			d.fault(nf.value, path+".no_data", "unknown rule %q; want whole_simplex (the default) or refuse", clip(s))
		}
	}
	if cf, ok := fields["confidence"]; ok {
		u.Confidence, u.HasConfidence = d.confidence(cf.value, path+".confidence")
	}
	if !usable {
		return
	}
	if wf, ok := fields["widen"]; ok {
		c.decodeWiden(d, u, wf.value, path+".widen")
	}
	if rf, ok := fields["radius"]; ok {
		c.decodeRadius(d, u, rf.value, path+".radius")
	}
	if of, ok := fields["observations"]; ok {
		c.decodeObservations(d, u, of.value, path+".observations")
	}
	_, hasRadius := fields["radius"]
	_, hasConfidence := fields["confidence"]
	_, hasObs := fields["observations"]
	switch {
	case hasRadius && hasConfidence:
		d.fault(fields["radius"].key, path, "give either radius (the sets' size) or confidence (sets sized from the observations), not both")
	case hasConfidence && !hasObs:
		d.fault(fields["confidence"].key, path+".confidence", "the radii come from the observed transitions per row: add observations (fixpoint fit --merge writes them)")
	}
	c.Uncertainty = u
}

// confidence reads a level in (0, 1) written as a fraction (0.9) or a
// percentage (90%).
func (d *doc) confidence(n *yaml.Node, path string) (float64, bool) {
	r := d.resolve(n)
	var x float64
	if r.Kind == yaml.ScalarNode && r.Tag == "!!str" && strings.HasSuffix(r.Value, "%") {
		v, err := ParseNumber(r.Value)
		if err != nil {
			d.fault(r, path, "%v", err)
			return 0, false
		}
		x = v
	} else {
		v, ok := d.number(r, path)
		if !ok {
			return 0, false
		}
		x = v
	}
	if !(x > 0 && x < 1) {
		d.fault(r, path, "confidence %s is not in (0, 1); write 0.9 or 90%%", clip(r.Value))
		return 0, false
	}
	return x, true
}

// actionRef resolves an action name used as a key, with a hint when
// unknown.
func (c *Class) actionRef(d *doc, key *yaml.Node, path string) int {
	a := c.Model.ActionIndex(key.Value)
	if a < 0 {
		d.fault(key, path, "unknown action %q%s", clip(key.Value), d.didYouMean(key.Value, c.Model.ActionNames()))
	}
	return a
}

// eachRow walks a map action -> (scalar | map state -> value) and calls
// row for every admissible row named, scalar for an action given one
// value; names that are not actions or states, and rows that are not
// admissible, are faults.
func (c *Class) eachRow(d *doc, u *Uncertainty, n *yaml.Node, path string, scalar func(a int, v *yaml.Node, p string), row func(a, s int, v *yaml.Node, p string)) {
	acts := d.mapping(n, path, nil)
	for _, name := range sortedKeys(acts) {
		af := acts[name]
		ap := join(path, name)
		a := c.actionRef(d, af.key, ap)
		if a < 0 {
			continue
		}
		if r := d.resolve(af.value); r.Kind != yaml.MappingNode && scalar != nil {
			scalar(a, af.value, ap)
			continue
		}
		states := d.mapping(af.value, ap, nil)
		for _, sname := range sortedKeys(states) {
			sf := states[sname]
			sp := join(ap, sname)
			s := c.stateRef(d, sf.key, sp)
			if s < 0 {
				continue
			}
			if !c.Model.Actions[a].Admissible(s) {
				d.fault(sf.key, sp, "action %s is not admissible in %s (it has no transition row there)", c.Model.Actions[a].Name, sname)
				continue
			}
			u.rowNode[rowKey{a, s}] = sf.key
			row(a, s, sf.value, sp)
		}
	}
}

func (c *Class) decodeWiden(d *doc, u *Uncertainty, n *yaml.Node, path string) {
	m := c.Model
	u.Widen = make([][][]int, len(m.Actions))
	c.eachRow(d, u, n, path, nil, func(a, s int, v *yaml.Node, p string) {
		if u.Widen[a] == nil {
			u.Widen[a] = make([][]int, len(m.States))
		}
		for i, it := range d.sequence(v, p) {
			ip := index(p, i)
			name, ok := d.str(it, ip)
			if !ok {
				continue
			}
			t := m.StateIndex(name)
			if t < 0 && c.loc.refused[name] {
				continue
			}
			if t < 0 {
				d.fault(it, ip, "unknown state %q%s", clip(name), d.didYouMean(name, m.StateNames()))
				continue
			}
			u.Widen[a][s] = append(u.Widen[a][s], t)
		}
	})
}

func (c *Class) decodeRadius(d *doc, u *Uncertainty, n *yaml.Node, path string) {
	m := c.Model
	radius := func(v *yaml.Node, p string) (float64, bool) {
		x, ok := d.number(v, p)
		if ok && x < 0 {
			d.fault(v, p, "radius %g is negative; want a number >= 0 (0: the row is known exactly)", x)
			return 0, false
		}
		return x, ok
	}
	if r := d.resolve(n); r.Kind != yaml.MappingNode {
		u.Radius, u.HasRadius = radius(n, path)
		return
	}
	u.Radii = make([][]float64, len(m.Actions))
	for a := range u.Radii {
		u.Radii[a] = make([]float64, len(m.States))
		for s := range u.Radii[a] {
			u.Radii[a][s] = math.NaN()
		}
	}
	c.eachRow(d, u, n, path, func(a int, v *yaml.Node, p string) {
		if x, ok := radius(v, p); ok {
			for s := range u.Radii[a] {
				if m.Actions[a].Admissible(s) {
					u.Radii[a][s] = x
					u.rowsGiven[rowKey{a, s}] = true
				}
			}
		}
	}, func(a, s int, v *yaml.Node, p string) {
		if x, ok := radius(v, p); ok {
			u.Radii[a][s] = x
			u.rowsGiven[rowKey{a, s}] = true
		}
	})
	// Every row that is not known exactly needs a radius; a row with one
	// possible next state (and no widening) is exact.
	var missing []string
	for a, act := range m.Actions {
		for s, row := range act.Rows {
			if row == nil || u.rowsGiven[rowKey{a, s}] {
				continue
			}
			if c.support(u, a, s) >= 2 {
				missing = append(missing, fmt.Sprintf("%s in %s", act.Name, m.States[s].Name))
			} else {
				u.Radii[a][s] = 0
			}
		}
	}
	if len(missing) > 0 {
		d.fault(n, path, "no radius for %s; give each row with several possible next states a radius, or one number per action (or one number for every row)",
			firstOf(missing))
	}
}

// support counts the states row (s, a) may reach: its positive entries
// and its widened targets.
func (c *Class) support(u *Uncertainty, a, s int) int {
	seen := map[int]bool{}
	for _, e := range c.Model.Actions[a].Rows[s] {
		if e.P > 0 {
			seen[e.To] = true
		}
	}
	if u.Widen != nil && u.Widen[a] != nil {
		for _, t := range u.Widen[a][s] {
			seen[t] = true
		}
	}
	return len(seen)
}

// firstOf lists the first five items, with "and M more".
func firstOf(items []string) string {
	const shown = 5
	if len(items) <= shown {
		return strings.Join(items, ", ")
	}
	return strings.Join(items[:shown], ", ") + fmt.Sprintf(" and %d more", len(items)-shown)
}

func (c *Class) decodeObservations(d *doc, u *Uncertainty, n *yaml.Node, path string) {
	m := c.Model
	u.Observations = make([][]int, len(m.Actions))
	c.eachRow(d, u, n, path, nil, func(a, s int, v *yaml.Node, p string) {
		k, ok := d.integer(v, p)
		switch {
		case !ok:
			return
		case k < 0 || k > MaxObservations:
			d.fault(v, p, "%d is not a number of observed transitions in [0, %d]", k, MaxObservations)
			return
		}
		if u.Observations[a] == nil {
			u.Observations[a] = make([]int, len(m.States))
		}
		u.Observations[a][s] = k
	})
}

// UncertaintyFault returns a fault at key of the uncertainty block (the
// block itself for "", the file when the class has no block).
func (c *Class) UncertaintyFault(key, format string, args ...any) error {
	path := "uncertainty"
	if key != "" {
		path = join(path, key)
	}
	e := &Fault{File: c.Path, Path: path, Msg: fmt.Sprintf(format, args...)}
	if u := c.Uncertainty; u != nil {
		e.Line = u.line
		if n := u.keyNode[key]; n != nil {
			e.Line = n.Line
		}
	}
	return e
}

// LocateUncertainty turns the faults the robust library finds in the
// block (a *robust.RowError with state and action) into located faults.
func (c *Class) LocateUncertainty(err error) error {
	var out []error
	for _, e := range unjoin(err) {
		var re *robust.RowError
		if !errors.As(e, &re) {
			out = append(out, c.UncertaintyFault("", "%s", strings.TrimPrefix(e.Error(), "robust: ")))
			continue
		}
		key := "observations"
		if c.Uncertainty == nil || c.Uncertainty.keyNode[key] == nil {
			key = ""
		}
		f := c.UncertaintyFault(key, "%s", re.Problem).(*Fault)
		if re.Action >= 0 && re.State >= 0 {
			m := c.Model
			f.Path += fmt.Sprintf(" (action %s, row %s)", m.Actions[re.Action].Name, m.States[re.State].Name)
			if c.Uncertainty != nil {
				if n := c.Uncertainty.rowNode[rowKey{re.Action, re.State}]; n != nil {
					f.Line = n.Line
				}
			}
		}
		out = append(out, f)
	}
	return errors.Join(out...)
}

// NotCounted lists, as located faults, the rows with observations whose
// entries are not counts over the observations (n·p a whole number,
// within the six-decimal rounding fit writes): for those rows the model's
// row is not the counting estimate from these records, which the
// confidence statement assumes. Rows with so many observations that the
// rounding hides the counts are not checked.
func (c *Class) NotCounted() []error {
	u := c.Uncertainty
	if u == nil || u.Observations == nil {
		return nil
	}
	const rounding = 5e-7 // half a unit in the sixth decimal
	var out []error
	for a, obs := range u.Observations {
		for s, n := range obs {
			row := c.Model.Actions[a].Rows[s]
			if n == 0 || row == nil {
				continue
			}
			tol := float64(n) * float64(len(row)+1) * rounding
			if tol > 0.05 {
				continue
			}
			for _, e := range row {
				x := float64(n) * e.P
				if math.Abs(x-math.Round(x)) > tol+1e-9 {
					f := &Fault{File: c.Path, Path: fmt.Sprintf("uncertainty.observations.%s.%s (action %s, row %s)",
						c.Model.Actions[a].Name, c.Model.States[s].Name, c.Model.Actions[a].Name, c.Model.States[s].Name),
						Msg: fmt.Sprintf("the row is not a counting estimate from %d transitions (%d × %g = %.4g is not a whole number), so the confidence statement does not hold for it; "+
							"use the row fit estimated from these records", n, n, e.P, x)}
					if nd := u.rowNode[rowKey{a, s}]; nd != nil {
						f.Line = nd.Line
					}
					out = append(out, f)
					break
				}
			}
		}
	}
	return out
}
