package modelfile

import (
	"fixpoint/costs"

	"go.yaml.in/yaml/v3"
)

// Criterion is the objective a file asks for.
type Criterion int

const (
	// Discounted minimises the expected present value of costs.
	Discounted Criterion = iota
	// Average minimises the long-run average cost per period.
	Average
)

func (c Criterion) String() string {
	if c == Average {
		return "average"
	}
	return "discounted"
}

// Header holds what class and system files share: name, currency, period,
// discount and criterion.
type Header struct {
	// Path is the file as named by the user; Name the model's name (the
	// path when the file gives none).
	Path, Name string
	Currency   string
	Period     costs.Period
	// Discount is the file's rate or factor; zero when it gives neither
	// (allowed only with criterion: average).
	Discount  costs.Discount
	Criterion Criterion
	// Compare lists the annual rates of discount.compare.
	Compare []float64
	// SHA256 is the hex digest of the file's bytes.
	SHA256 string

	periodNode *yaml.Node
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
			if problem := TextProblem(s); problem != "" {
				d.fault(f.value, "name", "%s", problem)
			} else {
				*name = s
			}
		}
	}
	if n, ok := d.required(root, top, "currency"); ok {
		*currency, _ = d.name(n, "currency")
	}
}

// decodeHeader reads version, name, currency, period_years, criterion (when
// allowed) and discount from the top-level fields.
func (h *Header) decodeHeader(d *doc, root *yaml.Node, top map[string]field, criterion bool) {
	d.decodeIdentity(root, top, &h.Name, &h.Currency)
	if n, ok := d.required(root, top, "period_years"); ok {
		h.periodNode = n
		if v, ok := d.number(n, "period_years"); ok {
			p, err := costs.NewPeriod(v)
			if err != nil {
				d.fault(n, "period_years", "period of %g years; want a number of years in (0, %d]", v, costs.MaxPeriodYears)
			}
			h.Period = p
		}
	}
	if f, ok := top["criterion"]; ok && criterion {
		switch v, _ := d.str(f.value, "criterion"); v {
		case "average":
			h.Criterion = Average
		case "discounted":
		default:
			d.fault(f.value, "criterion", "unknown criterion %q; want discounted (the default) or average", clip(v))
		}
	}
	if f, ok := top["discount"]; ok {
		h.decodeDiscount(d, f.value)
	} else if h.Criterion != Average {
		d.fault(root, "discount", "missing required key \"discount\" (optional only with criterion: average)")
	}
}

func (h *Header) decodeDiscount(d *doc, n *yaml.Node) {
	f := d.mapping(n, "discount", []string{"rate", "factor", "compare"})
	if cf, ok := f["compare"]; ok {
		for i, it := range d.sequence(cf.value, "discount.compare") {
			if v, ok := d.rate(it, index("discount.compare", i)); ok {
				if v < 0 {
					d.fault(it, index("discount.compare", i), "rate %g is negative; compare real rates >= 0", v)
					continue
				}
				h.Compare = append(h.Compare, v)
			}
		}
	}
	rate, hasRate := f["rate"]
	factor, hasFactor := f["factor"]
	switch {
	case hasRate && hasFactor:
		d.fault(n, "discount", "give either rate or factor, not both")
	case !hasRate && !hasFactor && h.Criterion == Average:
	case !hasRate && !hasFactor && d.resolve(n).Kind == yaml.MappingNode:
		d.fault(n, "discount", "give a rate (per year, e.g. rate: 4%% or rate: 0.04) or a factor (per period, e.g. factor: 0.96)")
	case hasRate:
		if v, ok := d.rate(rate.value, "discount.rate"); ok && h.Period.Valid() {
			disc, err := costs.Rate(v, h.Period)
			if err != nil {
				d.fault(rate.value, "discount.rate", "%s%s", Plain(err), averageHint(v))
			}
			h.Discount = disc
		}
	case hasFactor:
		if v, ok := d.number(factor.value, "discount.factor"); ok && h.Period.Valid() {
			disc, err := costs.Factor(v, h.Period)
			if err != nil {
				d.fault(factor.value, "discount.factor", "%s", Plain(err))
			}
			h.Discount = disc
		}
	}
}

func averageHint(rate float64) string {
	if rate == 0 {
		return "; for no discounting use criterion: average"
	}
	return ""
}

// trimPkg drops a library's package prefix from its message.
func Plain(err error) string {
	s := err.Error()
	for _, p := range []string{"costs: ", "condition: ", "optimize: ", "system: ", "fleet: ", "robust: ", "inspect: "} {
		if len(s) > len(p) && s[:len(p)] == p {
			return s[len(p):]
		}
	}
	return s
}
