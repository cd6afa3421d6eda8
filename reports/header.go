package reports

import (
	"fmt"
	"io"

	"fixpoint/costs"
)

// Header is what every view says about the model it presents: its name,
// currency, period, discount, condition scale and unsafe set, and where
// the model came from. Every view embeds one, so that no view re-derives
// the discount or the period from loose fields.
type Header struct {
	Model    string
	Currency string
	Period   costs.Period
	// Discount is zero under the long-run average criterion.
	Discount costs.Discount
	// States and Unsafe are the condition scale (nil for views of several
	// classes).
	States []string
	Unsafe []bool
	// OutOfService names the actions that take a unit out of service
	// (decommissioning, locking out); outputs say so wherever one is
	// advised.
	OutOfService []string
	// Source is the config file, SHA256 its digest and Version the
	// fixpoint version that read it (printed by briefs and workbooks).
	Source, SHA256, Version string
}

// stateLabel is the name of state s, marked when the state is unsafe.
func (h *Header) stateLabel(s int) string { return stateLabel(h.States, h.Unsafe, s) }

// unsafe reports whether state s is unsafe.
func (h *Header) unsafe(s int) bool { return s < len(h.Unsafe) && h.Unsafe[s] }

// perYear converts an amount per period into the same amount per year.
func (h *Header) perYear(x float64) float64 { return h.Period.PerYear(x) }

// periodYears is the period length in years.
func (h *Header) periodYears() float64 { return h.Period.Years() }

// rate returns the annual discount rate and whether the file gave it as a
// rate (rather than a factor).
func (h *Header) rate() (float64, bool) { return h.Discount.RatePerYear(), h.Discount.ByRate() }

// jsonRate is the discount rate per year for JSON: nil when the discount
// was given as a factor.
func (h *Header) jsonRate() *float64 {
	if rate, ok := h.rate(); ok {
		return &rate
	}
	return nil
}

// discountLine describes the discounting in words.
func (h *Header) discountLine() string {
	s := fmt.Sprintf("Discount factor %s per period of %s", Fixed(h.Discount.Factor(), 6), h.Period)
	if r, ok := h.rate(); ok {
		s += fmt.Sprintf(" (rate %s per year)", Percent(r, 2))
	}
	return s + "; costs are charged at the start of each period."
}

// outOfService reports whether the named action takes a unit out of
// service.
func (h *Header) outOfService(action string) bool {
	for _, a := range h.OutOfService {
		if a == action {
			return true
		}
	}
	return false
}

// serviceNotes says, for every state where the advice takes the unit out
// of service, so in words.
func (h *Header) serviceNotes(policy []int, actions []string) []string {
	var out []string
	for s, a := range policy {
		if h.outOfService(actions[a]) {
			out = append(out, OutOfServiceNote(h.States[s], actions[a]))
		}
	}
	return out
}

// OutOfServiceNote says in words that in condition where the advice is
// action, which takes the unit out of service.
func OutOfServiceNote(where, action string) string {
	return fmt.Sprintf("In %s the advice is %s, which takes the unit out of service: it stays out of use until a competent person returns it to service.",
		where, action)
}

// notes are the out-of-service notes of the advice followed by warnings.
func (h *Header) notes(policy []int, actions []string, warnings []string) []string {
	return append(h.serviceNotes(policy, actions), warnings...)
}

// writeCSVNotes writes each note as a comment line.
func writeCSVNotes(w io.Writer, notes []string) error {
	for _, n := range notes {
		if _, err := fmt.Fprintf(w, "# note: %s\n", n); err != nil {
			return err
		}
	}
	return nil
}

// writeCSVPreamble writes the comment lines every CSV starts with: the
// caution, then what its numbers are (model, currency, period, discount
// or criterion), so that a bare file still says what it holds.
func (h *Header) writeCSVPreamble(w io.Writer, criterion string) error {
	return h.writeCSVPreambleRates(w, criterion, "")
}

// csvRatesLine says what the rates of a CSV's rows are, for its rates line.
func csvRatesLine(hasInflation bool, inflation float64) string {
	if hasInflation {
		return fmt.Sprintf("real rates per year in the rate column, converted from the nominal rates in the nominal_rate column at %s inflation by the Fisher relation", Percent(inflation, 2))
	}
	return "real rates per year, in the rate column"
}

// writeCSVPreambleRates is writeCSVPreamble for a file whose rows run at
// several rates: with rates non-empty, a rates line saying what the rates
// are takes the place of the config's own discount, which no row uses.
func (h *Header) writeCSVPreambleRates(w io.Writer, criterion, rates string) error {
	lines := []string{Caution, "model: " + h.Model, "currency: " + h.Currency}
	if h.Period.Valid() {
		lines = append(lines, "period: "+h.Period.String())
	}
	switch {
	case criterion == "average":
		lines = append(lines, "criterion: long-run average cost per period (undiscounted)")
	case criterion != "":
		lines = append(lines, "criterion: "+criterion)
	}
	switch {
	case rates != "":
		lines = append(lines, "rates: "+rates+"; costs at the start of each period")
	case !h.Discount.IsZero() && criterion != "average":
		lines = append(lines, "discount: "+h.Discount.String()+"; costs at the start of each period")
	}
	for _, l := range lines {
		if _, err := fmt.Fprintf(w, "# %s\n", l); err != nil {
			return err
		}
	}
	return nil
}
