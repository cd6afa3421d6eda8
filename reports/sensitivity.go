package reports

import (
	"fmt"
	"io"
	"math"

	"fixpoint/optimize"
)

// CostFigure is one cost figure of a config with the range over which it
// can vary without changing the advice anywhere.
type CostFigure struct {
	// Name describes the figure ("cost of overhaul in worn"); Path is its
	// place in the config ("actions[2].cost.worn").
	Name, Path string
	Value      float64
	Range      optimize.CostRange
}

// Sensitivity is the cost sensitivity of one class's advice.
type Sensitivity struct {
	Header
	Problem *optimize.Problem
	Result  *optimize.Result
	Figures []CostFigure
	// Warnings are safety warnings about the advice, printed with it
	// after its out-of-service notes.
	Warnings []string
}

// notes are the out-of-service notes of the advice and its warnings.
func (s *Sensitivity) notes() []string {
	return s.Header.notes(s.Result.Policy, s.Problem.Actions, s.Warnings)
}

func (s *Sensitivity) change(state, action int) string {
	if state < 0 {
		return "none"
	}
	p := s.Problem
	return fmt.Sprintf("%s: %s -> %s", p.States[state], p.Actions[s.Result.Policy[state]], p.Actions[action])
}

func (s *Sensitivity) limitText(x float64) string {
	if math.IsInf(x, 0) {
		return "no limit"
	}
	return s.money(x)
}

// WriteTable writes the margins of every non-advised action, then the
// range of every cost figure, then the caution.
func (s *Sensitivity) WriteTable(w io.Writer) error {
	fmt.Fprintf(w, "%s: how much costs must change before the advice changes (%s)\n", s.Model, s.Currency)
	var rows [][]string
	for _, m := range s.margins() {
		rows = append(rows, []string{m.State, m.Advice, m.Action, s.money(m.Margin)})
	}
	if err := table(w, []string{"condition", "advice", "alternative", "margin"}, []bool{false, false, false, true}, rows); err != nil {
		return err
	}
	fmt.Fprintf(w, "Margin: by how much the alternative's cost in that condition must fall before it becomes the advice there.\n\n")
	rows = nil
	for _, f := range s.Figures {
		lo, hi := f.Value+f.Range.Lower, f.Value+f.Range.Upper
		rows = append(rows, []string{f.Name, s.money(f.Value), s.limitText(lo), s.limitText(hi),
			s.change(f.Range.LowerState, f.Range.LowerAction), s.change(f.Range.UpperState, f.Range.UpperAction)})
	}
	if err := table(w, []string{"cost figure", "now", "advice holds from", "up to", "first change below", "first change above"},
		[]bool{false, true, true, true, false, false}, rows); err != nil {
		return err
	}
	lines := []string{"Each range moves one figure alone, all others fixed; within it the advice is optimal in every condition (exact: the values move linearly while the advice is fixed)."}
	for _, n := range s.notes() {
		lines = append(lines, "Note: "+n)
	}
	return writeLines(w, append(lines, "CAUTION: "+Caution))
}

type sensitivityChange struct {
	State string `json:"state"`
	From  string `json:"from"`
	To    string `json:"to"`
}

type sensitivityFigure struct {
	Figure string             `json:"figure"`
	Path   string             `json:"path"`
	Value  float64            `json:"value"`
	Lower  *float64           `json:"lower"`
	Upper  *float64           `json:"upper"`
	Below  *sensitivityChange `json:"below"`
	Above  *sensitivityChange `json:"above"`
}

type sensitivityMargin struct {
	State  string  `json:"state"`
	Advice string  `json:"advice"`
	Action string  `json:"action"`
	Margin float64 `json:"margin"`
}

// margins lists, state by state, every admissible action other than the
// advice with its margin: how much dearer it is than the advice there.
func (s *Sensitivity) margins() []sensitivityMargin {
	p, r := s.Problem, s.Result
	var out []sensitivityMargin
	for st, cs := range p.Choices {
		var q0 float64
		for k, c := range cs {
			if c.Action == r.Policy[st] {
				q0 = r.Q[st][k]
			}
		}
		for k, c := range cs {
			if c.Action != r.Policy[st] {
				out = append(out, sensitivityMargin{p.States[st], p.Actions[r.Policy[st]], p.Actions[c.Action], r.Q[st][k] - q0})
			}
		}
	}
	return out
}

// WriteJSON writes {"margins": [...], "figures": [...], "caution": str};
// a limit is null when the figure can move without limit that way.
func (s *Sensitivity) WriteJSON(w io.Writer) error {
	p, r := s.Problem, s.Result
	out := struct {
		Model          string              `json:"model"`
		Currency       string              `json:"currency"`
		PeriodYears    float64             `json:"period_years"`
		DiscountRate   *float64            `json:"discount_rate"`
		DiscountFactor float64             `json:"discount_factor"`
		Margins        []sensitivityMargin `json:"margins"`
		Figures        []sensitivityFigure `json:"figures"`
		Notes          []string            `json:"notes,omitempty"`
		Caution        string              `json:"caution"`
	}{Notes: s.notes(), Model: s.Model, Currency: s.Currency, PeriodYears: s.periodYears(), DiscountRate: s.jsonRate(), DiscountFactor: s.Discount.Factor(), Margins: append([]sensitivityMargin{}, s.margins()...), Figures: []sensitivityFigure{}, Caution: Caution}
	change := func(state, action int) *sensitivityChange {
		if state < 0 {
			return nil
		}
		return &sensitivityChange{p.States[state], p.Actions[r.Policy[state]], p.Actions[action]}
	}
	for _, f := range s.Figures {
		out.Figures = append(out.Figures, sensitivityFigure{Figure: f.Name, Path: f.Path, Value: f.Value,
			Lower: num(f.Value + f.Range.Lower), Upper: num(f.Value + f.Range.Upper),
			Below: change(f.Range.LowerState, f.Range.LowerAction), Above: change(f.Range.UpperState, f.Range.UpperAction)})
	}
	return writeJSON(w, out)
}

// WriteCSV writes a caution comment line, then the margins (kind
// "margin": state, advice, action, margin) and the cost figures (kind
// "figure": figure, path, value, lower, upper; empty when unlimited).
func (s *Sensitivity) WriteCSV(w io.Writer) error {
	if err := s.writeCSVPreamble(w, "expected discounted cost (present value)"); err != nil {
		return err
	}
	if err := writeCSVNotes(w, s.notes()); err != nil {
		return err
	}
	cw := newCSV(w)
	cw.Write([]string{"kind", "state_or_figure", "advice_or_path", "action_or_value", "margin_or_lower", "upper"})
	for _, m := range s.margins() {
		cw.Write([]string{"margin", m.State, m.Advice, m.Action, Fixed(m.Margin, 6), ""})
	}
	limit := func(x float64) string {
		if math.IsInf(x, 0) {
			return ""
		}
		return Fixed(x, 6)
	}
	for _, f := range s.Figures {
		cw.Write([]string{"figure", f.Name, f.Path, Fixed(f.Value, 6), limit(f.Value + f.Range.Lower), limit(f.Value + f.Range.Upper)})
	}
	cw.Flush()
	return cw.Error()
}
