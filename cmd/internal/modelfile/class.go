package modelfile

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"go.yaml.in/yaml/v3"

	"fixpoint/condition"
	"fixpoint/costs"
)

// Limits on a class file. A condition scale of a few dozen states is
// already unusual; the caps keep a hostile file from exhausting memory.
const (
	MaxStates  = 500
	MaxActions = 50
)

// Class is a decoded class config: one class of equipment.
type Class struct {
	Header
	Model *condition.Model
	Costs *costs.Schedule
	// CostScalar[a] is true when action a's cost is one number for every
	// state (or omitted), false when it is a map by state.
	CostScalar []bool
	// Inspection is the inspection block (inspection.go), or nil.
	Inspection *Inspection
	// Uncertainty is the uncertainty: block (robust advice), nil without.
	Uncertainty *Uncertainty

	loc classLocator
	// prefix is the field path of the model inside its file: "" for a
	// class config, "components[2]" for a component of a system.
	prefix string
}

// Unsafe returns the unsafe flag of every state.
func (c *Class) Unsafe() []bool {
	u := make([]bool, len(c.Model.States))
	for s, st := range c.Model.States {
		u[s] = st.Unsafe
	}
	return u
}

// p returns the field path of key inside the model.
func (c *Class) p(key string) string { return join(c.prefix, key) }

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
	// refused holds the state names refused as names (control or format
	// characters, ...): a use of one is not reported again as unknown.
	refused map[string]bool
	// decimals[a][s] is the most decimals written in an entry of the row.
	decimals [][]int
}

var classKeys = []string{"version", "kind", "name", "currency", "period_years", "criterion", "discount", "states", "actions", "inspection", "uncertainty"}

func (c *Class) decode(d *doc, root *yaml.Node) {
	c.loc.root = root
	top := d.mapping(root, "", classKeys)
	c.decodeHeader(d, root, top, true)
	c.Model = &condition.Model{PeriodYears: c.Period.Years()}
	c.Costs = &costs.Schedule{Currency: c.Currency}
	c.loc.period = c.periodNode
	sound := c.decodeBody(d, root, top)
	c.decodeInspection(d, top, sound && c.Period.Valid() && c.Model.Validate() == nil)
	c.decodeUncertainty(d, top)
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

// decodeBody reads the states and actions of a model from its fields and
// validates the model, locating every fault; it reports whether the
// structure was sound enough to validate.
func (c *Class) decodeBody(d *doc, node *yaml.Node, fields map[string]field) bool {
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
	if !structural || d.cancelled() {
		return false
	}
	if d.opts.Renormalize {
		for _, r := range c.Model.Renormalize(0.0005) {
			d.note("%s: %s: row summed to %s; each entry divided by it (--renormalize)",
				d.file, c.rowLabel(r.Action, r.State), condition.FormatSum(r.Sum))
		}
	}
	if !c.Period.Valid() {
		// The period's own fault is enough; Validate would repeat it.
		c.Model.PeriodYears = 1
	}
	for _, err := range unjoin(c.Model.Validate()) {
		c.locate(d, err)
	}
	for _, err := range unjoin(c.Costs.Validate(len(c.Model.States), len(c.Model.Actions))) {
		c.locateCost(d, err)
	}
	return true
}

func (c *Class) decodeStates(d *doc, n *yaml.Node) bool {
	items := d.sequence(n, c.p("states"))
	if items == nil {
		if d.resolve(n).Kind == yaml.SequenceNode {
			d.fault(n, c.p("states"), "the condition scale is empty; list the states best first")
		}
		return false
	}
	if len(items) > MaxStates {
		d.fault(n, c.p("states"), "%d states, over the limit of %d", len(items), MaxStates)
		return false
	}
	m := c.Model
	c.Costs.Running = make([]float64, len(items))
	ok := true
	for i, it := range items {
		path := index(c.p("states"), i)
		c.loc.stateNode = append(c.loc.stateNode, it)
		st := condition.State{}
		if r := d.resolve(it); r.Kind == yaml.ScalarNode {
			var good bool
			st.Name, good = d.name(r, path)
			c.refuse(d, r, good)
			ok = ok && good
			m.States = append(m.States, st)
			continue
		}
		f := d.mapping(it, path, []string{"name", "running_cost", "unsafe"})
		if nf, has := f["name"]; has {
			var good bool
			st.Name, good = d.name(nf.value, path+".name")
			c.refuse(d, nf.value, good)
			ok = ok && good
		} else {
			d.fault(it, path, "missing required key \"name\"")
			ok = false
		}
		if rf, has := f["running_cost"]; has {
			c.Costs.Running[i], _ = d.number(rf.value, path+".running_cost")
		}
		if uf, has := f["unsafe"]; has {
			st.Unsafe, _ = d.boolean(uf.value, path+".unsafe")
		}
		m.States = append(m.States, st)
	}
	return ok
}

func (c *Class) decodeActions(d *doc, n *yaml.Node) bool {
	items := d.sequence(n, c.p("actions"))
	if items == nil {
		if d.resolve(n).Kind == yaml.SequenceNode {
			d.fault(n, c.p("actions"), "there are no actions; list at least one")
		}
		return false
	}
	if len(items) > MaxActions {
		d.fault(n, c.p("actions"), "%d actions, over the limit of %d", len(items), MaxActions)
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
		c.loc.decimals = append(c.loc.decimals, make([]int, ns))
		act := condition.Action{Rows: make([][]condition.Entry, ns)}
		cost := make([]float64, ns)
		f := d.mapping(it, path, []string{"name", "passive", "out_of_service", "cost", "transitions", "matrix"})
		if nf, ok := f["name"]; ok {
			act.Name, _ = d.name(nf.value, path+".name")
		} else {
			d.fault(it, path, "missing required key \"name\"")
		}
		if pf, ok := f["passive"]; ok {
			act.Passive, _ = d.boolean(pf.value, path+".passive")
		}
		if of, ok := f["out_of_service"]; ok {
			act.OutOfService, _ = d.boolean(of.value, path+".out_of_service")
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

// refuse remembers the text of a state name that was refused (good is
// false), so that its uses are not reported again.
func (c *Class) refuse(d *doc, n *yaml.Node, good bool) {
	if r := d.resolve(n); !good && r.Kind == yaml.ScalarNode {
		if c.loc.refused == nil {
			c.loc.refused = make(map[string]bool)
		}
		c.loc.refused[r.Value] = true
	}
}

// decimals counts the decimals written in a number, with its exponent:
// "0.5555" has 4, "5.5e-3" has 4, "1" none.
func decimals(text string) int {
	mant, exp, _ := strings.Cut(strings.ToLower(strings.TrimSpace(text)), "e")
	n := 0
	if _, frac, ok := strings.Cut(mant, "."); ok {
		n = len(frac)
	}
	if e, err := strconv.Atoi(exp); err == nil {
		n -= e
	}
	return max(n, 0)
}

// roundedTo reports whether a row sum misses 1 by no more than rounding
// each of k entries to dec decimals could (half a unit of the last
// decimal each).
func roundedTo(sum float64, k, dec int) bool {
	return math.Abs(sum-1) <= float64(k)*0.5*math.Pow(10, -float64(dec))+condition.RowTolerance
}

// stateRef resolves a state name used as a key, with a hint when unknown;
// a name already refused where the state is declared is not reported
// again.
func (c *Class) stateRef(d *doc, key *yaml.Node, path string) int {
	s := c.Model.StateIndex(key.Value)
	if s < 0 && !c.loc.refused[key.Value] {
		d.fault(key, path, "unknown state %q%s", clip(key.Value), d.didYouMean(key.Value, c.Model.StateNames()))
	}
	return s
}

func (c *Class) decodeTransitions(d *doc, a int, n *yaml.Node, path string, rows [][]condition.Entry) {
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
			c.loc.decimals[a][s] = max(c.loc.decimals[a][s], decimals(d.resolve(tf.value).Value))
			row = append(row, condition.Entry{To: t, P: p})
		}
		rows[s] = row
	}
}

func (c *Class) decodeMatrix(d *doc, a int, n *yaml.Node, path string, rows [][]condition.Entry) {
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
				c.loc.decimals[a][s] = max(c.loc.decimals[a][s], decimals(d.resolve(cell).Value))
				row = append(row, condition.Entry{To: t, P: p})
			}
		}
		rows[s] = row
	}
}

// decodeCost reads a number (every admissible state) or a map by state.
func (c *Class) decodeCost(d *doc, n *yaml.Node, path string, rows [][]condition.Entry, cost []float64) {
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

// rowLabel names the row of action a in state s by its path and, in
// words, by the action's and the state's names.
func (c *Class) rowLabel(a, s int) string {
	path := c.loc.rowPath[a][s]
	if path == "" {
		path = index(c.p("actions"), a)
	}
	return fmt.Sprintf("%s (action %s, row %s)", path, c.Model.Actions[a].Name, c.Model.States[s].Name)
}

// locate turns a fault of the condition package into a located fault.
func (c *Class) locate(d *doc, err error) {
	var f *condition.Fault
	if !errors.As(err, &f) {
		d.fault(c.loc.root, c.prefix, "%s", Plain(err))
		return
	}
	l := &c.loc
	if f.Field == "sum" && l.broken[f.Action][f.State] {
		return
	}
	if f.Field == "name" && (f.State >= 0 && c.Model.States[f.State].Name == "" || f.Action >= 0 && f.State < 0 && c.Model.Actions[f.Action].Name == "") {
		return // the name's own fault was reported while decoding
	}
	if f.Field == "period_years" {
		return // decodeHeader reported it
	}
	if f.Field == "sum" {
		row := c.Model.Actions[f.Action].Rows[f.State]
		sum := 0.0
		for _, e := range row {
			sum += e.P
		}
		dec := l.decimals[f.Action][f.State]
		switch {
		case d.opts.Renormalize || !condition.RoundedLooking(sum, len(row)):
		case roundedTo(sum, len(row), dec):
			f.Problem += fmt.Sprintf("; it looks rounded to %d decimals: --renormalize divides such rows by their sum and says which", dec)
		case dec > 3:
			f.Problem += fmt.Sprintf("; its entries are written to %d decimals, and rounding them cannot miss 1 by this much: check the entries", dec)
		}
	}
	node, path := l.root, c.prefix
	switch {
	case f.Field == "states":
		node, path = l.states, c.p("states")
	case f.Field == "actions":
		node, path = l.actions, c.p("actions")
	case f.Action < 0 && f.State >= 0:
		node, path = l.stateNode[f.State], index(c.p("states"), f.State)
		switch f.Field {
		case "name":
			path += ".name"
		default:
			path += " (" + c.Model.States[f.State].Name + ")"
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
		path += fmt.Sprintf(" (action %s, row %s)", c.Model.Actions[f.Action].Name, c.Model.States[f.State].Name)
	case f.Action >= 0:
		node, path = l.actionNode[f.Action], l.actionPath[f.Action]
		switch f.Field {
		case "name", "passive", "out_of_service":
			path += "." + f.Field
		}
	}
	d.fault(node, path, "%s", f.Problem)
}

// locateCost turns a fault of the costs package into a located fault.
func (c *Class) locateCost(d *doc, err error) {
	var f *costs.Fault
	if !errors.As(err, &f) {
		d.fault(c.loc.root, c.prefix, "%s", Plain(err))
		return
	}
	switch {
	case f.Action < 0 && f.State >= 0:
		d.fault(c.loc.stateNode[f.State], index(c.p("states"), f.State)+".running_cost", "%s", f.Problem)
	case f.Action >= 0 && f.State >= 0:
		d.fault(c.loc.actionNode[f.Action], fmt.Sprintf("%s.cost (action %s, state %s)", c.loc.actionPath[f.Action],
			c.Model.Actions[f.Action].Name, c.Model.States[f.State].Name), "%s", f.Problem)
	case f.Action >= 0:
		d.fault(c.loc.actionNode[f.Action], c.loc.actionPath[f.Action]+".cost", "%s", f.Problem)
	default:
		d.fault(c.loc.root, c.prefix, "%s", f.Problem)
	}
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
