package modelfile

import (
	"errors"
	"slices"

	"go.yaml.in/yaml/v3"

	"fixpoint/optimize/inspect"
)

// Inspection is the optional inspection block of a class config: when to
// inspect next is decided with the action (package optimize/inspect).
//
//	inspection:
//	  cost: 80                 # each inspection, and each call-out after a self-announcing failure
//	  downtime_cost: 40        # optional: the downtime one inspection causes
//	  intervals: [1, 2, 4, 8]  # allowed intervals, in periods, increasing
//	  hidden: [stuck]          # unsafe states found only by an inspection (optional)
//	  risk_cost: {stuck: 1200} # per period a hidden failure stays in service unseen (optional)
//	  max_interval_years: 2    # the limit of the statutory or written scheme of examination
//
// Unsafe states not listed in hidden are self-announcing. The block needs
// the discounted criterion.
type Inspection struct {
	// Plan holds the block with states as indices into the class's scale.
	Plan inspect.Plan
	// Line is the line of the inspection key.
	Line int
}

// Limits on an inspection block. Building the problem stores, for every
// admissible (state, action) and interval, two rows of up to n entries,
// and walks the unseen chain up to the longest interval; the caps keep a
// hostile file from exhausting memory or time.
const (
	MaxInspectionIntervals = 100
	// maxInspectionEntries bounds (admissible pairs)·(intervals)·2n, the
	// kernel entries stored (16 bytes each).
	maxInspectionEntries = 4e7
	// maxInspectionWork bounds (admissible pairs)·K·(n + passive entries),
	// the steps of the unseen walks.
	maxInspectionWork = 1e9
)

var inspectionKeys = []string{"cost", "downtime_cost", "intervals", "hidden", "risk_cost", "max_interval_years"}

// inspectionNodes remembers where each part of the block came from.
type inspectionNodes struct {
	key, block *yaml.Node
	fields     map[string]field
	intervals  []*yaml.Node
	hidden     []*yaml.Node
	// risk[s] is the key of state s in risk_cost.
	risk map[int]*yaml.Node
}

// decodeInspection reads the inspection block of a class config, if any,
// and validates it against the model when the model is sound (valid is
// false when decoding the model found faults). Faults of the block's
// values are reported with those of its meaning (package inspect's
// Plan.Validate), except those that follow from a value already faulted.
func (c *Class) decodeInspection(d *doc, top map[string]field, valid bool) {
	f, ok := top["inspection"]
	if !ok {
		return
	}
	in := &Inspection{Line: f.key.Line}
	nodes := inspectionNodes{key: f.key, block: f.value, fields: d.mapping(f.value, "inspection", inspectionKeys), risk: map[int]*yaml.Node{}}
	if d.resolve(f.value).Kind != yaml.MappingNode {
		return
	}
	fields := nodes.fields
	pl := &in.Plan
	// bad marks the fields (named as inspect.Fault names them) whose
	// values could not be decoded.
	bad := map[string]bool{}
	unnamed := false // an entry of hidden or risk_cost names no state
	number := func(key, field string, required bool, hint string) float64 {
		fv, has := fields[key]
		if !has {
			if required {
				d.fault(f.value, "inspection."+key, "missing required key %q%s", key, hint)
				bad[field] = true
			}
			return 0
		}
		v, good := d.number(fv.value, "inspection."+key)
		bad[field] = bad[field] || !good
		return v
	}
	pl.Cost = number("cost", "cost", true, " (the cost of one inspection; 0 if it costs nothing)")
	pl.Downtime = number("downtime_cost", "downtime", false, "")
	pl.MaxIntervalYears = number("max_interval_years", "max_interval_years", true,
		" (the longest interval, in years, that the statutory or written scheme of examination allows)")
	if fv, has := fields["intervals"]; has {
		nodes.intervals = d.sequence(fv.value, "inspection.intervals")
		if nodes.intervals == nil && d.resolve(fv.value).Kind == yaml.SequenceNode {
			d.fault(fv.value, "inspection.intervals", "no interval is allowed; list the intervals in periods, e.g. [1, 2, 4]")
		}
		if len(nodes.intervals) > MaxInspectionIntervals {
			d.fault(fv.value, "inspection.intervals", "%d intervals, over the limit of %d", len(nodes.intervals), MaxInspectionIntervals)
			nodes.intervals = nil
		}
		bad["intervals"] = len(nodes.intervals) == 0
		for i, it := range nodes.intervals {
			k, good := d.integer(it, index("inspection.intervals", i))
			bad["intervals"] = bad["intervals"] || !good
			pl.Intervals = append(pl.Intervals, k)
		}
	} else {
		d.fault(f.value, "inspection.intervals", "missing required key \"intervals\" (the allowed intervals between inspections, in periods)")
		bad["intervals"] = true
	}
	if fv, has := fields["hidden"]; has {
		nodes.hidden = d.sequence(fv.value, "inspection.hidden")
		bad["hidden"] = d.resolve(fv.value).Kind != yaml.SequenceNode
		// An entry that names no state is faulted here and left out, so
		// that the faults of meaning of the others are still listed.
		var kept []*yaml.Node
		for i, it := range nodes.hidden {
			path := index("inspection.hidden", i)
			s := -1
			if _, good := d.str(it, path); good {
				s = c.stateRef(d, d.resolve(it), path)
			}
			if s < 0 {
				unnamed = true
				continue
			}
			kept = append(kept, it)
			pl.Hidden = append(pl.Hidden, s)
		}
		nodes.hidden = kept
	}
	if fv, has := fields["risk_cost"]; has {
		risk := d.mapping(fv.value, "inspection.risk_cost", nil)
		pl.RiskCost = make([]float64, len(c.Model.States))
		bad["risk_cost"] = d.resolve(fv.value).Kind != yaml.MappingNode
		for _, key := range sortedKeys(risk) {
			rf := risk[key]
			path := join("inspection.risk_cost", key)
			s := c.stateRef(d, rf.key, path)
			v, good := d.number(rf.value, path)
			bad["risk_cost"] = bad["risk_cost"] || !good
			unnamed = unnamed || s < 0
			if s >= 0 {
				pl.RiskCost[s] = v
				nodes.risk[s] = rf.key
			}
		}
	}
	sound := c.Criterion != Average
	if !sound {
		d.fault(f.key, "inspection", "the inspection model is solved under the discounted criterion; a class with an inspection block cannot ask for criterion: average")
	}
	for _, b := range bad {
		sound = sound && !b
	}
	sound = sound && !unnamed
	if !valid || d.cancelled() {
		return
	}
	// A fault that follows from a value already faulted is not repeated.
	follows := func(field string) bool {
		switch field {
		case "passive", "max_interval_years":
			return bad[field] || bad["intervals"]
		case "risk_cost":
			return bad[field] || bad["hidden"]
		}
		return bad[field]
	}
	errs := unjoin(pl.Validate(c.Model))
	for _, err := range errs {
		var lf *inspect.Fault
		if errors.As(err, &lf) && follows(lf.Field) {
			continue
		}
		c.locateInspection(d, &nodes, err)
	}
	if sound && len(errs) == 0 && c.inspectionSize(d, &nodes, pl) {
		c.Inspection = in
	}
}

// locateInspection turns a fault of package inspect into a located fault.
func (c *Class) locateInspection(d *doc, nodes *inspectionNodes, err error) {
	var f *inspect.Fault
	if !errors.As(err, &f) {
		d.fault(nodes.key, "inspection", "%s", Plain(err))
		return
	}
	at := func(key string) (*yaml.Node, string) {
		if fv, ok := nodes.fields[key]; ok {
			return fv.value, "inspection." + key
		}
		return nodes.block, "inspection"
	}
	node, path := nodes.key, "inspection"
	switch f.Field {
	case "cost", "max_interval_years":
		node, path = at(f.Field)
	case "downtime":
		node, path = at("downtime_cost")
	case "intervals", "passive":
		node, path = at("intervals")
		if f.Field == "intervals" && f.Index >= 0 && f.Index < len(nodes.intervals) {
			node, path = nodes.intervals[f.Index], index("inspection.intervals", f.Index)
		}
	case "hidden":
		node, path = at("hidden")
		if f.Index >= 0 && f.Index < len(nodes.hidden) {
			node, path = nodes.hidden[f.Index], index("inspection.hidden", f.Index)
		}
	case "risk_cost":
		node, path = at("risk_cost")
		if k, ok := nodes.risk[f.State]; ok {
			node, path = k, join("inspection.risk_cost", k.Value)
		}
	}
	d.fault(node, path, "%s", f.Problem)
}

// inspectionSize refuses a block whose problem would be too large to
// build, and reports whether it is within the limits.
func (c *Class) inspectionSize(d *doc, nodes *inspectionNodes, pl *inspect.Plan) bool {
	m := c.Model
	n := float64(len(m.States))
	pairs := 0.0
	for _, act := range m.Actions {
		for s := range m.States {
			if act.Admissible(s) {
				pairs++
			}
		}
	}
	passive := 0.0
	if pa := m.Passive(); pa >= 0 {
		for _, row := range m.Actions[pa].Rows {
			passive += float64(len(row))
		}
	}
	k := float64(slices.Max(pl.Intervals))
	entries := pairs * float64(len(pl.Intervals)) * 2 * n
	work := pairs * k * (n + passive)
	if entries <= maxInspectionEntries && work <= maxInspectionWork {
		return true
	}
	d.fault(nodes.fields["intervals"].value, "inspection.intervals",
		"the inspection model is too large: %.0f admissible (condition, action) pairs × %d intervals up to %d periods would store about %.2g kernel entries and take about %.2g steps to build; "+
			"allow fewer intervals, a shorter longest interval, or use a coarser condition scale",
		pairs, len(pl.Intervals), int(k), entries, work)
	return false
}
