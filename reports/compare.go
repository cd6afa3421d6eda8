package reports

import (
	"fmt"
	"io"
	"strings"

	"fixpoint/costs"
	"fixpoint/optimize"
)

// Comparison is the advice of one class across discount rates, ready to
// present. Rates in Compare are real; with HasInflation the user gave
// nominal rates, converted by the Fisher relation.
type Comparison struct {
	Header
	Actions []string
	// Inflation is the annual inflation rate when HasInflation.
	Inflation    float64
	HasInflation bool
	Compare      *optimize.Comparison
	// Warnings[i] are the safety warnings about the advice at the rate of
	// Compare.Rows[i].
	Warnings [][]string
}

// notes are the out-of-service notes and safety warnings of the advice at
// every rate, each once, led by the rates where it holds.
func (c *Comparison) notes() []string {
	var order []string
	rates := map[string][]string{}
	for i, r := range c.Compare.Rows {
		list := c.serviceNotes(r.Policy, c.Actions)
		if i < len(c.Warnings) {
			list = append(list, c.Warnings[i]...)
		}
		for _, n := range list {
			if _, ok := rates[n]; !ok {
				order = append(order, n)
			}
			rates[n] = append(rates[n], c.rateText(r.Rate, 2))
		}
	}
	out := make([]string, len(order))
	for i, n := range order {
		lead := "At rate "
		if len(rates[n]) > 1 {
			lead = "At rates "
		}
		out[i] = lead + strings.Join(rates[n], ", ") + ": " + n
	}
	return out
}

// nominal converts a real rate back to the nominal one the user gave.
func (c *Comparison) nominal(real float64) float64 { return costs.NominalRate(real, c.Inflation) }

// rateText writes a rate as a percentage, with its nominal twin when the
// user gave nominal rates: "5.0000% real" or "7.1000% nominal (5.0000% real)".
func (c *Comparison) rateText(real float64, decimals int) string {
	if c.HasInflation {
		return fmt.Sprintf("%s nominal (%s real)", Percent(c.nominal(real), decimals), Percent(real, decimals))
	}
	return Percent(real, decimals) + " real"
}

// SwitchSentences says each switch point in words: "Above 5.1235% real the
// advice for worn changes from overhaul to leave."
func (c *Comparison) SwitchSentences() []string {
	var out []string
	for _, sw := range c.Compare.Switches {
		out = append(out, fmt.Sprintf("Above %s the advice for %s changes from %s to %s.",
			c.rateText(sw.Rate, 4), c.States[sw.State], c.Actions[sw.Above], c.Actions[sw.Below]))
	}
	return out
}

func (c *Comparison) averageLine() string {
	cmp := c.Compare
	if cmp.Average == nil {
		return "Long-run average (undiscounted): " + strings.TrimPrefix(cmp.AverageErr.Error(), "optimize: ") + "."
	}
	a := cmp.Average
	return fmt.Sprintf("Long-run average cost (undiscounted, rate 0): %s %s per year, proven within [%s, %s] (%s).",
		c.money(c.perYear(a.Gain)), c.Currency, c.money(c.perYear(a.GainLower)), c.money(c.perYear(a.GainUpper)), a.Status)
}

// WriteTable writes the advice per rate, the present values per rate, the
// switch points and the long-run average, then the caution.
func (c *Comparison) WriteTable(w io.Writer) error {
	cmp := c.Compare
	kind := "real rates"
	if c.HasInflation {
		kind = fmt.Sprintf("nominal rates converted to real at %s inflation (Fisher)", Percent(c.Inflation, 2))
	}
	fmt.Fprintf(w, "%s: advice by discount rate (%s)\n", c.Model, kind)
	header := []string{"rate"}
	numeric := []bool{true}
	if c.HasInflation {
		header = []string{"nominal", "real (used)"}
		numeric = []bool{true, true}
	}
	header = append(header, "factor")
	numeric = append(numeric, true)
	lead := len(header)
	header = append(append(header, c.States...), "EAC ("+c.Currency+"/yr)", "changed")
	numeric = append(numeric, make([]bool, len(c.States))...)
	numeric = append(numeric, true, false)
	var rows, values [][]string
	for _, r := range cmp.Rows {
		row := []string{Percent(r.Rate, 2)}
		if c.HasInflation {
			row = []string{Percent(c.nominal(r.Rate), 2), Percent(r.Rate, 2)}
		}
		row = append(row, Fixed(r.Discount, 6))
		val := append([]string(nil), row...)
		for s, a := range r.Policy {
			row = append(row, c.Actions[a])
			if r.Result != nil {
				val = append(val, c.money(r.Result.Value[s]))
			} else {
				val = append(val, "unbounded")
			}
		}
		changed := make([]string, len(r.Changed))
		for i, s := range r.Changed {
			changed[i] = c.States[s]
		}
		rows = append(rows, append(row, c.money(r.EquivalentAnnual), strings.Join(changed, ", ")))
		values = append(values, append(val, c.money(r.EquivalentAnnual)))
	}
	if err := table(w, header, numeric, rows); err != nil {
		return err
	}
	note := ""
	if cmp.Rows[0].Rate == 0 {
		note = "; at rate 0 it is unbounded"
	}
	fmt.Fprintf(w, "\nPresent value of expected costs per condition (%s)%s:\n", c.Currency, note)
	vh := append(append([]string(nil), header[:lead]...), c.States...)
	vh = append(vh, "EAC ("+c.Currency+"/yr)")
	vn := make([]bool, len(vh))
	for i := range vn {
		vn[i] = true
	}
	if err := table(w, vh, vn, values); err != nil {
		return err
	}
	lines := []string{"EAC: equivalent annual cost of a unit starting " + c.States[0] +
		": the level amount per year, paid at the start of each year for ever, with the same present value (v·r/(1+r)); at rate 0 the long-run average cost per year."}
	if len(cmp.Rows) > 1 {
		if sw := c.SwitchSentences(); len(sw) > 0 {
			lines = append(lines, fmt.Sprintf("Switch points between %s and %s (every one in the range, located to 1e-9):",
				c.rateText(cmp.Rows[0].Rate, 2), c.rateText(cmp.Rows[len(cmp.Rows)-1].Rate, 2)))
			lines = append(lines, sw...)
		} else {
			lines = append(lines, "The advice is the same at every rate in the range.")
		}
	}
	for _, n := range c.notes() {
		lines = append(lines, "Note: "+n)
	}
	lines = append(lines, c.averageLine(), "CAUTION: "+Caution)
	return writeLines(w, lines)
}

type compareState struct {
	State  string   `json:"state"`
	Action string   `json:"action"`
	Value  *float64 `json:"value"`
}

type compareRate struct {
	Rate                 float64        `json:"rate"`
	NominalRate          *float64       `json:"nominal_rate,omitempty"`
	DiscountFactor       float64        `json:"discount_factor"`
	States               []compareState `json:"states"`
	EquivalentAnnualCost float64        `json:"equivalent_annual_cost"`
	Changed              []string       `json:"changed"`
}

type compareSwitch struct {
	Rate        float64  `json:"rate"`
	NominalRate *float64 `json:"nominal_rate,omitempty"`
	State       string   `json:"state"`
	From        string   `json:"from"`
	To          string   `json:"to"`
	Text        string   `json:"text"`
}

type compareAverage struct {
	GainPerYear   float64 `json:"gain_per_year"`
	Lower         float64 `json:"lower"`
	Upper         float64 `json:"upper"`
	GainPerPeriod float64 `json:"gain_per_period"`
	Status        string  `json:"status"`
}

type compareJSON struct {
	Model       string          `json:"model"`
	Currency    string          `json:"currency"`
	PeriodYears float64         `json:"period_years"`
	Inflation   *float64        `json:"inflation"`
	RatesAre    string          `json:"rates_are"`
	Rates       []compareRate   `json:"rates"`
	Switches    []compareSwitch `json:"switch_points"`
	Average     *compareAverage `json:"average"`
	AverageNote string          `json:"average_note,omitempty"`
	Notes       []string        `json:"notes,omitempty"`
	Caution     string          `json:"caution"`
}

func (c *Comparison) json() compareJSON {
	cmp := c.Compare
	out := compareJSON{Model: c.Model, Currency: c.Currency, PeriodYears: c.periodYears(), RatesAre: "real",
		Rates: []compareRate{}, Switches: []compareSwitch{}, Notes: c.notes(), Caution: Caution}
	nominal := func(real float64) *float64 {
		if !c.HasInflation {
			return nil
		}
		x := c.nominal(real)
		return &x
	}
	if c.HasInflation {
		inf := c.Inflation
		out.Inflation, out.RatesAre = &inf, "real, converted from nominal by the Fisher relation"
	}
	for _, r := range cmp.Rows {
		row := compareRate{Rate: r.Rate, NominalRate: nominal(r.Rate), DiscountFactor: r.Discount,
			EquivalentAnnualCost: r.EquivalentAnnual, Changed: []string{}}
		for s, a := range r.Policy {
			st := compareState{State: c.States[s], Action: c.Actions[a]}
			if r.Result != nil {
				st.Value = num(r.Result.Value[s])
			}
			row.States = append(row.States, st)
		}
		for _, s := range r.Changed {
			row.Changed = append(row.Changed, c.States[s])
		}
		out.Rates = append(out.Rates, row)
	}
	for i, sw := range cmp.Switches {
		out.Switches = append(out.Switches, compareSwitch{Rate: sw.Rate, NominalRate: nominal(sw.Rate),
			State: c.States[sw.State], From: c.Actions[sw.Above], To: c.Actions[sw.Below], Text: c.SwitchSentences()[i]})
	}
	if a := cmp.Average; a != nil {
		out.Average = &compareAverage{GainPerYear: c.perYear(a.Gain), Lower: c.perYear(a.GainLower), Upper: c.perYear(a.GainUpper),
			GainPerPeriod: a.Gain, Status: a.Status.String()}
	} else {
		out.AverageNote = cmp.AverageErr.Error()
	}
	return out
}

// WriteJSON writes the comparison as one JSON object (keys in the README).
func (c *Comparison) WriteJSON(w io.Writer) error { return writeJSON(w, c.json()) }

// WriteCSV writes a caution comment line, then one row per rate and
// condition: rate, nominal_rate (empty without inflation), discount_factor,
// state, action, value (empty at rate 0), equivalent_annual_cost, changed.
func (c *Comparison) WriteCSV(w io.Writer) error {
	if err := c.writeCSVPreambleRates(w, "expected discounted cost at each rate below (rate 0: long-run average)", csvRatesLine(c.HasInflation, c.Inflation)); err != nil {
		return err
	}
	if err := writeCSVNotes(w, c.notes()); err != nil {
		return err
	}
	cw := newCSV(w)
	cw.Write([]string{"rate", "nominal_rate", "discount_factor", "state", "action", "value", "equivalent_annual_cost", "changed"})
	for _, r := range c.Compare.Rows {
		nom := ""
		if c.HasInflation {
			nom = Fixed(c.nominal(r.Rate), 8)
		}
		for s, a := range r.Policy {
			val := ""
			if r.Result != nil {
				val = Fixed(r.Result.Value[s], 6)
			}
			changed := "false"
			for _, x := range r.Changed {
				if x == s {
					changed = "true"
				}
			}
			cw.Write([]string{Fixed(r.Rate, 8), nom, Fixed(r.Discount, 10), c.States[s], c.Actions[a], val, Fixed(r.EquivalentAnnual, 6), changed})
		}
	}
	cw.Flush()
	return cw.Error()
}
