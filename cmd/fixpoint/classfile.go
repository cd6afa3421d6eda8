package main

import (
	"errors"
	"io"
	"os"
	"slices"

	"go.yaml.in/yaml/v3"

	"fixpoint/condition"
	"fixpoint/costs"
)

// Limits on a class file. A condition scale of a few dozen states is
// already unusual; the caps keep a hostile file from exhausting memory.
const (
	maxFileBytes = 4 << 20
	maxStates    = 500
	maxActions   = 50
	maxNameLen   = 200
)

// fileHeader holds what class and system files share: name, currency,
// period and discounting.
type fileHeader struct {
	Path        string
	Name        string
	Currency    string
	PeriodYears float64
	// Rate (per year) or Factor (per period), whichever the file gives.
	Rate, Factor       float64
	HasRate, HasFactor bool
	// Average is true for criterion: average (the discount block is then
	// optional).
	Average bool
	// Compare lists the annual rates of discount.compare.
	Compare []float64

	periodNode *yaml.Node
}

// classFile is a decoded class config: one class of equipment.
type classFile struct {
	fileHeader
	Model *condition.Model
	Costs *costs.Schedule
	// CostScalar[a] is true when action a's cost is one number for every
	// state (or omitted), false when it is a map by state.
	CostScalar []bool

	loc classLocator
	// prefix is the field path of the model inside its file: "" for a
	// class config, "components[2]" for a component of a system.
	prefix string
}

// p returns the field path of key inside the model.
func (c *classFile) p(key string) string { return join(c.prefix, key) }

// classLocator remembers where each part of the model came from, so that
// faults found by the libraries can name the file, line and field path.
type classLocator struct {
	root, states, actions, period *yaml.Node
	stateNode                     []*yaml.Node
	actionNode                    []*yaml.Node
	actionPath                    []string
	// rowPath[a][s] and rowNode[a][s] locate the row of action a in state
	// s; entryNode[a][s][t] the entry of target t.
	rowPath   [][]string
	rowNode   [][]*yaml.Node
	entryNode [][]map[int]*yaml.Node
	// broken[a][s] marks a row with an entry that could not be decoded; its
	// sum is not checked again.
	broken [][]bool
}

var classKeys = []string{"version", "kind", "name", "currency", "period_years", "criterion", "discount", "states", "actions"}

// loadClass reads and validates the class config at path; a system file
// is refused with a message.
func (a *app) loadClass(path string) (*classFile, error) {
	m, err := a.loadModel(path)
	if err != nil {
		return nil, err
	}
	return classOnly(path, m)
}

// classOnly returns the class of a model file, refusing systems and fleets.
func classOnly(path string, m *modelFile) (*classFile, error) {
	switch {
	case m.System != nil:
		return nil, &inputError{File: path, Path: "kind", Msg: "this is a system file; this command works on class configs (solve and check take systems)"}
	case m.Fleet != nil:
		return nil, &inputError{File: path, Path: "kind", Msg: "this is a fleet file; this command works on class configs (plan, forecast and check take fleets)"}
	}
	return m.Class, nil
}

// openProblem says why a file could not be opened, without repeating its path.
func openProblem(err error) string {
	var pe *os.PathError
	if errors.As(err, &pe) {
		err = pe.Err
	}
	if errors.Is(err, os.ErrNotExist) {
		return "file not found"
	}
	return err.Error()
}

// decodeClass decodes and validates a class config read from r; file
// names it in errors. Every fault found is returned, joined.
func decodeClass(file string, r io.Reader) (*classFile, error) {
	m, err := decodeModel(file, r, decodeOptions{}, nil)
	if err != nil {
		return nil, err
	}
	if m.Class == nil {
		return nil, &inputError{File: file, Path: "kind", Msg: "want a class config, not a system or fleet"}
	}
	return m.Class, nil
}

func (c *classFile) decode(d *doc, root *yaml.Node) {
	c.loc.root = root
	top := d.mapping(root, "", classKeys)
	c.decodeHeader(d, root, top, true)
	c.Model = &condition.Model{PeriodYears: c.PeriodYears}
	c.Costs = &costs.Schedule{Currency: c.Currency}
	c.loc.period = c.periodNode
	if c.decodeBody(d, root, top) && c.PeriodYears > 0 && !c.Average {
		c.checkDiscount(d, top["discount"].value)
	}
}

// required returns the value of a required top-level key, recording a
// fault when it is missing.
func (d *doc) required(root *yaml.Node, top map[string]field, key string) (*yaml.Node, bool) {
	f, ok := top[key]
	if !ok {
		d.fault(root, key, "missing required key %q", key)
	}
	return f.value, ok
}

// decodeIdentity reads what every model file starts with: version (1),
// an optional name (kept as given) and the currency.
func (d *doc) decodeIdentity(root *yaml.Node, top map[string]field, name, currency *string) {
	if n, ok := d.required(root, top, "version"); ok {
		if v, ok := d.integer(n, "version"); ok && v != 1 {
			d.fault(n, "version", "schema version %d is not supported; want 1", v)
		}
	}
	if f, ok := top["name"]; ok {
		if s, ok := d.str(f.value, "name"); ok {
			*name = s
		}
	}
	if n, ok := d.required(root, top, "currency"); ok {
		*currency, _ = d.name(n, "currency")
	}
}

// decodeHeader reads version, name, currency, period_years, criterion (when
// allowed) and discount from the top-level fields.
func (h *fileHeader) decodeHeader(d *doc, root *yaml.Node, top map[string]field, criterion bool) {
	d.decodeIdentity(root, top, &h.Name, &h.Currency)
	if n, ok := d.required(root, top, "period_years"); ok {
		h.periodNode = n
		if v, ok := d.number(n, "period_years"); ok {
			h.PeriodYears = v
			if v <= 0 {
				d.fault(n, "period_years", "period is %g years; want a number > 0", v)
			}
		}
	}
	if f, ok := top["criterion"]; ok && criterion {
		switch v, _ := d.str(f.value, "criterion"); v {
		case "average":
			h.Average = true
		case "discounted":
		default:
			d.fault(f.value, "criterion", "unknown criterion %q; want discounted (the default) or average", v)
		}
	}
	if f, ok := top["discount"]; ok {
		h.decodeDiscount(d, f.value)
	} else if !h.Average {
		d.fault(root, "discount", "missing required key \"discount\" (optional only with criterion: average)")
	}
}

// decodeBody reads the states and actions of a model from its fields and
// validates the model, locating every fault; it reports whether the
// structure was sound enough to validate.
func (c *classFile) decodeBody(d *doc, node *yaml.Node, fields map[string]field) bool {
	structural := true
	if f, ok := fields["states"]; ok {
		c.loc.states = f.value
		structural = c.decodeStates(d, f.value) && structural
	} else {
		d.fault(node, c.p("states"), "missing required key \"states\"")
		structural = false
	}
	if f, ok := fields["actions"]; ok {
		c.loc.actions = f.value
		structural = c.decodeActions(d, f.value) && structural
	} else {
		d.fault(node, c.p("actions"), "missing required key \"actions\"")
		structural = false
	}
	if !structural {
		return false
	}
	if d.opts.Renormalize {
		for _, r := range c.Model.Renormalize(0.0005) {
			d.note("%s: %s: row summed to %s; each entry divided by it (--renormalize)",
				d.file, c.rowPath(r.Action, r.State), condition.FormatSum(r.Sum))
		}
	}
	for _, err := range unjoin(c.Model.Validate()) {
		c.locate(d, err)
	}
	return true
}

func (c *fileHeader) decodeDiscount(d *doc, n *yaml.Node) {
	f := d.mapping(n, "discount", []string{"rate", "factor", "compare"})
	if cf, ok := f["compare"]; ok {
		for i, it := range d.sequence(cf.value, "discount.compare") {
			if v, ok := d.number(it, index("discount.compare", i)); ok {
				if v < 0 {
					d.fault(it, index("discount.compare", i), "rate %g is negative; compare real rates >= 0", v)
					continue
				}
				c.Compare = append(c.Compare, v)
			}
		}
	}
	rate, hasRate := f["rate"]
	factor, hasFactor := f["factor"]
	switch {
	case hasRate && hasFactor:
		d.fault(n, "discount", "give either rate or factor, not both")
	case !hasRate && !hasFactor && c.Average:
	case !hasRate && !hasFactor && d.resolve(n).Kind == yaml.MappingNode:
		d.fault(n, "discount", "give a rate (per year, e.g. rate: 0.04) or a factor (per period, e.g. factor: 0.96)")
	case hasRate:
		if v, ok := d.number(rate.value, "discount.rate"); ok {
			c.Rate, c.HasRate = v, true
			if v <= -1 {
				d.fault(rate.value, "discount.rate", "rate %g is not above -1", v)
				c.HasRate = false
			}
		}
	case hasFactor:
		if v, ok := d.number(factor.value, "discount.factor"); ok {
			c.Factor, c.HasFactor = v, true
			if !(v > 0 && v < 1) {
				d.fault(factor.value, "discount.factor", "factor %g is not in (0, 1)", v)
				c.HasFactor = false
			}
		}
	}
}

// checkDiscount rejects a rate that gives no discounting.
func (c *fileHeader) checkDiscount(d *doc, n *yaml.Node) {
	if !c.HasRate {
		return
	}
	if g, err := costs.DiscountFactor(c.Rate, c.PeriodYears); err == nil && !(g < 1) {
		d.fault(n, "discount.rate", "rate %g gives a discount factor of %g; the discounted criterion needs a rate above 0", c.Rate, g)
	}
}

// discount returns the file's discount (rate or factor) as a value.
func (c *fileHeader) discount() (costs.Discount, error) {
	p, err := costs.NewPeriod(c.PeriodYears)
	if err != nil {
		return costs.Discount{}, err
	}
	switch {
	case c.HasFactor:
		return costs.Factor(c.Factor, p)
	case c.HasRate:
		return costs.Rate(c.Rate, p)
	}
	return costs.Discount{}, errors.New("the config gives no discount rate or factor")
}

// DiscountFactor returns gamma per period from the file's rate or factor.
func (c *fileHeader) DiscountFactor() (float64, error) {
	switch {
	case c.HasFactor:
		return c.Factor, nil
	case c.HasRate:
		return costs.DiscountFactor(c.Rate, c.PeriodYears)
	}
	return 0, errors.New("the config gives no discount rate or factor")
}

func (c *classFile) decodeStates(d *doc, n *yaml.Node) bool {
	items := d.sequence(n, c.p("states"))
	if items == nil {
		if d.resolve(n).Kind == yaml.SequenceNode {
			d.fault(n, c.p("states"), "the condition scale is empty; list the states best first")
		}
		return false
	}
	if len(items) > maxStates {
		d.fault(n, c.p("states"), "%d states, over the limit of %d", len(items), maxStates)
		return false
	}
	m := c.Model
	c.Costs.Running = make([]float64, len(items))
	for i, it := range items {
		path := index(c.p("states"), i)
		c.loc.stateNode = append(c.loc.stateNode, it)
		st := condition.State{}
		if r := d.resolve(it); r.Kind == yaml.ScalarNode {
			st.Name, _ = d.name(r, path)
			m.States = append(m.States, st)
			continue
		}
		f := d.mapping(it, path, []string{"name", "running_cost", "unsafe"})
		if nf, ok := f["name"]; ok {
			st.Name, _ = d.name(nf.value, path+".name")
		} else {
			d.fault(it, path, "missing required key \"name\"")
		}
		if rf, ok := f["running_cost"]; ok {
			c.Costs.Running[i], _ = d.number(rf.value, path+".running_cost")
		}
		if uf, ok := f["unsafe"]; ok {
			st.Unsafe, _ = d.boolean(uf.value, path+".unsafe")
		}
		m.States = append(m.States, st)
	}
	return true
}

func (c *classFile) decodeActions(d *doc, n *yaml.Node) bool {
	items := d.sequence(n, c.p("actions"))
	if items == nil {
		if d.resolve(n).Kind == yaml.SequenceNode {
			d.fault(n, c.p("actions"), "there are no actions; list at least one")
		}
		return false
	}
	if len(items) > maxActions {
		d.fault(n, c.p("actions"), "%d actions, over the limit of %d", len(items), maxActions)
		return false
	}
	ns := len(c.Model.States)
	for a, it := range items {
		path := index(c.p("actions"), a)
		c.loc.actionNode = append(c.loc.actionNode, it)
		c.loc.actionPath = append(c.loc.actionPath, path)
		c.loc.rowPath = append(c.loc.rowPath, make([]string, ns))
		c.loc.rowNode = append(c.loc.rowNode, make([]*yaml.Node, ns))
		c.loc.entryNode = append(c.loc.entryNode, make([]map[int]*yaml.Node, ns))
		c.loc.broken = append(c.loc.broken, make([]bool, ns))
		act := condition.Action{Rows: make([][]condition.Entry, ns)}
		cost := make([]float64, ns)
		f := d.mapping(it, path, []string{"name", "passive", "cost", "transitions", "matrix"})
		if nf, ok := f["name"]; ok {
			act.Name, _ = d.name(nf.value, path+".name")
		} else {
			d.fault(it, path, "missing required key \"name\"")
		}
		if pf, ok := f["passive"]; ok {
			act.Passive, _ = d.boolean(pf.value, path+".passive")
		}
		tf, hasT := f["transitions"]
		mf, hasM := f["matrix"]
		switch {
		case hasT && hasM:
			d.fault(it, path, "give either transitions (map form) or matrix (matrix form), not both")
		case hasT:
			c.decodeTransitions(d, a, tf.value, path+".transitions", act.Rows)
		case hasM:
			c.decodeMatrix(d, a, mf.value, path+".matrix", act.Rows)
		default:
			d.fault(it, path, "missing transitions (map form) or matrix (matrix form)")
		}
		scalar := true
		if cf, ok := f["cost"]; ok {
			scalar = d.resolve(cf.value).Kind == yaml.ScalarNode
			c.decodeCost(d, cf.value, path+".cost", act.Rows, cost)
		} else if !act.Passive {
			d.fault(it, path, "missing required key \"cost\" (only the passive action may omit it, meaning 0)")
		}
		c.Model.Actions = append(c.Model.Actions, act)
		c.Costs.Action = append(c.Costs.Action, cost)
		c.CostScalar = append(c.CostScalar, scalar)
	}
	return true
}

// stateRef resolves a state name used as a key, with a hint when unknown.
func (c *classFile) stateRef(d *doc, key *yaml.Node, path string) int {
	s := c.Model.StateIndex(key.Value)
	if s < 0 {
		d.fault(key, path, "unknown state %q%s", key.Value, didYouMean(key.Value, c.Model.StateNames()))
	}
	return s
}

func (c *classFile) decodeTransitions(d *doc, a int, n *yaml.Node, path string, rows [][]condition.Entry) {
	from := d.mapping(n, path, nil)
	for _, name := range sortedKeys(from) {
		f := from[name]
		rp := join(path, name)
		s := c.stateRef(d, f.key, rp)
		if s < 0 {
			continue
		}
		c.loc.rowPath[a][s], c.loc.rowNode[a][s] = rp, f.key
		c.loc.entryNode[a][s] = make(map[int]*yaml.Node)
		to := d.mapping(f.value, rp, nil)
		row := []condition.Entry{}
		for _, tname := range sortedKeys(to) {
			tf := to[tname]
			ep := join(rp, tname)
			t := c.stateRef(d, tf.key, ep)
			p, ok := d.number(tf.value, ep)
			if t < 0 || !ok {
				c.loc.broken[a][s] = true
				continue
			}
			c.loc.entryNode[a][s][t] = tf.key
			row = append(row, condition.Entry{To: t, P: p})
		}
		rows[s] = row
	}
}

func (c *classFile) decodeMatrix(d *doc, a int, n *yaml.Node, path string, rows [][]condition.Entry) {
	items := d.sequence(n, path)
	if items == nil {
		return
	}
	ns := len(rows)
	if len(items) != ns {
		d.fault(n, path, "matrix has %d rows, want one per state (%d); write \"-\" for a state where the action is not admissible", len(items), ns)
		return
	}
	for s, it := range items {
		rp := index(path, s)
		c.loc.rowPath[a][s], c.loc.rowNode[a][s] = rp, it
		if r := d.resolve(it); r.Kind == yaml.ScalarNode && r.Tag == "!!str" && r.Value == "-" {
			continue
		}
		cells := d.sequence(it, rp)
		if cells == nil {
			continue
		}
		if len(cells) != ns {
			d.fault(it, rp, "row has %d entries, want %d (one per state)", len(cells), ns)
			continue
		}
		c.loc.entryNode[a][s] = make(map[int]*yaml.Node)
		row := []condition.Entry{}
		for t, cell := range cells {
			p, ok := d.number(cell, index(rp, t))
			if !ok {
				c.loc.broken[a][s] = true
			}
			if ok && p != 0 {
				c.loc.entryNode[a][s][t] = cell
				row = append(row, condition.Entry{To: t, P: p})
			}
		}
		rows[s] = row
	}
}

// decodeCost reads a number (every admissible state) or a map by state.
func (c *classFile) decodeCost(d *doc, n *yaml.Node, path string, rows [][]condition.Entry, cost []float64) {
	if r := d.resolve(n); r.Kind == yaml.ScalarNode {
		if v, ok := d.number(r, path); ok {
			for s := range cost {
				cost[s] = v
			}
		}
		return
	}
	given := make([]bool, len(cost))
	f := d.mapping(n, path, nil)
	for _, name := range sortedKeys(f) {
		sf := f[name]
		sp := join(path, name)
		s := c.stateRef(d, sf.key, sp)
		if s < 0 {
			continue
		}
		if rows[s] == nil {
			d.fault(sf.key, sp, "cost given for state %q, where the action has no transition row (not admissible)", name)
			continue
		}
		cost[s], given[s] = d.number(sf.value, sp)
	}
	for s, row := range rows {
		if row != nil && !given[s] {
			d.fault(n, path, "no cost for state %q, where the action is admissible", c.Model.States[s].Name)
		}
	}
}

// locate turns a fault of the condition package into a located input error.
func (c *classFile) locate(d *doc, err error) {
	var f *condition.Fault
	if !errors.As(err, &f) {
		d.fault(c.loc.root, "", "%v", err)
		return
	}
	l := &c.loc
	if f.Field == "sum" && l.broken[f.Action][f.State] {
		return
	}
	if f.Field == "sum" {
		row := c.Model.Actions[f.Action].Rows[f.State]
		sum := 0.0
		for _, e := range row {
			sum += e.P
		}
		if condition.RoundedLooking(sum, len(row)) {
			f.Problem += "; it looks rounded to 3 decimals: --renormalize divides such rows by their sum and says which"
		}
	}
	node, path := l.root, ""
	switch {
	case f.Field == "period_years":
		node, path = l.period, "period_years"
	case f.Field == "states":
		node, path = l.states, c.p("states")
	case f.Field == "actions":
		node, path = l.actions, c.p("actions")
	case f.Action < 0 && f.State >= 0:
		node, path = l.stateNode[f.State], index(c.p("states"), f.State)
		if f.Field == "name" {
			path += ".name"
		}
	case f.Action >= 0 && f.State >= 0 && l.rowNode[f.Action][f.State] != nil:
		node, path = l.rowNode[f.Action][f.State], l.rowPath[f.Action][f.State]
		if f.Field == "entry" && f.Target >= 0 {
			if en := l.entryNode[f.Action][f.State][f.Target]; en != nil {
				node = en
			}
			if l.rowNode[f.Action][f.State].Kind == yaml.SequenceNode {
				path = index(path, f.Target)
			} else {
				path = join(path, c.Model.States[f.Target].Name)
			}
		}
	case f.Action >= 0:
		node, path = l.actionNode[f.Action], l.actionPath[f.Action]
		if f.Field == "name" || f.Field == "passive" {
			path += "." + f.Field
		}
	}
	d.fault(node, path, "%s", f.Problem)
}

func unjoin(err error) []error {
	if err == nil {
		return nil
	}
	if j, ok := err.(interface{ Unwrap() []error }); ok {
		return j.Unwrap()
	}
	return []error{err}
}

// sortedKeys returns the keys of a mapping in file order (by line, then
// column), so that faults and rows come out in the order the user wrote them.
func sortedKeys(m map[string]field) []string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	slices.SortFunc(keys, func(a, b string) int {
		ka, kb := m[a].key, m[b].key
		if ka.Line != kb.Line {
			return ka.Line - kb.Line
		}
		return ka.Column - kb.Column
	})
	return keys
}

// rowPath is the field path of the row of action a in state s.
func (c *classFile) rowPath(a, s int) string {
	if p := c.loc.rowPath[a][s]; p != "" {
		return p
	}
	return index(c.p("actions"), a)
}
