package reports

import (
	"fmt"
	"io"
	"strconv"

	"fixpoint/optimize"
)

// AverageAdvice is the answer of the long-run average-cost criterion for
// one class, ready to present.
type AverageAdvice struct {
	Header
	Problem *optimize.Problem
	Result  *optimize.AverageResult
	// Warnings are safety warnings about the advice, printed with it.
	Warnings []string
}

// Thresholds is the threshold sentence of the advice (see Advice.Thresholds).
func (a *AverageAdvice) Thresholds() string {
	return thresholds(a.Problem.States, a.Problem.Actions, a.Result.Policy)
}

// WriteTable writes the advice per condition with the bias (relative
// value), the gain and its proven bounds, and the caution.
func (a *AverageAdvice) WriteTable(w io.Writer) error {
	r, p := a.Result, a.Problem
	fmt.Fprintf(w, "%s: advice per condition, long-run average cost criterion (undiscounted, %s)\n", a.Model, a.Currency)
	rows := make([][]string, len(r.Policy))
	for s := range r.Policy {
		runner, margin := "-", "-"
		if r.RunnerUp[s] >= 0 {
			runner, margin = p.Actions[r.RunnerUp[s]], a.money(r.Margin[s])
		}
		rows[s] = []string{a.stateLabel(s), p.Actions[r.Policy[s]], a.money(r.Bias[s]), runner, margin}
	}
	if err := table(w, []string{"condition", "advice", "relative value (" + a.Currency + ")", "runner-up", "margin"},
		[]bool{false, false, true, false, true}, rows); err != nil {
		return err
	}
	lines := []string{
		"Thresholds: " + a.Thresholds(),
		fmt.Sprintf("Long-run average cost: %s %s per year (%s per period of %s), proven within [%s, %s] per year: %s.",
			a.money(a.perYear(r.Gain)), a.Currency, a.money(r.Gain), a.Period.String(),
			a.money(a.perYear(r.GainLower)), a.money(a.perYear(r.GainUpper)), r.Status),
		fmt.Sprintf("Relative value: the extra total cost of starting in that condition rather than in %s (0 there).", p.States[r.Ref]),
		fmt.Sprintf("Solver: %s, %s; gain bounds min/max (Th - h) (Odoni 1969).", methodTitles[r.Method], nouns(r.Iterations, "iteration", "iterations")),
	}
	for _, n := range a.notes(r.Policy, p.Actions, a.Warnings) {
		lines = append(lines, "Note: "+n)
	}
	lines = append(lines, "CAUTION: "+Caution)
	return writeLines(w, lines)
}

type averageState struct {
	State    string             `json:"state"`
	Unsafe   bool               `json:"unsafe"`
	Action   string             `json:"action"`
	Bias     float64            `json:"bias"`
	Q        map[string]float64 `json:"q"`
	RunnerUp *string            `json:"runner_up"`
	Margin   *float64           `json:"margin"`
}

type averageJSON struct {
	Criterion        string         `json:"criterion"`
	Model            string         `json:"model"`
	Currency         string         `json:"currency"`
	PeriodYears      float64        `json:"period_years"`
	Method           string         `json:"method"`
	Iterations       int            `json:"iterations"`
	GainPerPeriod    float64        `json:"gain_per_period"`
	GainPerYear      float64        `json:"gain_per_year"`
	GainLower        float64        `json:"gain_lower"`
	GainUpper        float64        `json:"gain_upper"`
	GainLowerPerYear float64        `json:"gain_lower_per_year"`
	GainUpperPerYear float64        `json:"gain_upper_per_year"`
	Status           string         `json:"status"`
	BiasReference    string         `json:"bias_reference"`
	States           []averageState `json:"states"`
	Thresholds       string         `json:"thresholds"`
	Notes            []string       `json:"notes,omitempty"`
	Caution          string         `json:"caution"`
}

// WriteJSON writes the average-criterion answer as one JSON object; gain
// bounds are per period (gain_lower, gain_upper) and per year.
func (a *AverageAdvice) WriteJSON(w io.Writer) error {
	r, p := a.Result, a.Problem
	out := averageJSON{Criterion: "average", Model: a.Model, Currency: a.Currency, PeriodYears: a.periodYears(),
		Notes:  a.notes(r.Policy, p.Actions, a.Warnings),
		Method: r.Method.String(), Iterations: r.Iterations,
		GainPerPeriod: r.Gain, GainPerYear: a.perYear(r.Gain), GainLower: r.GainLower, GainUpper: r.GainUpper,
		GainLowerPerYear: a.perYear(r.GainLower), GainUpperPerYear: a.perYear(r.GainUpper),
		Status: r.Status.String(), BiasReference: p.States[r.Ref], Thresholds: a.Thresholds(), Caution: Caution}
	for s := range r.Policy {
		st := averageState{State: p.States[s], Unsafe: a.Unsafe[s], Action: p.Actions[r.Policy[s]], Bias: r.Bias[s],
			Q: make(map[string]float64)}
		for k, c := range p.Choices[s] {
			st.Q[p.Actions[c.Action]] = r.Q[s][k]
		}
		if r.RunnerUp[s] >= 0 {
			name, m := p.Actions[r.RunnerUp[s]], r.Margin[s]
			st.RunnerUp, st.Margin = &name, &m
		}
		out.States = append(out.States, st)
	}
	return writeJSON(w, out)
}

// WriteCSV writes a caution comment line, then one row per condition:
// state, unsafe, action, bias, runner_up, margin, q_<action>...
func (a *AverageAdvice) WriteCSV(w io.Writer) error {
	r, p := a.Result, a.Problem
	if err := a.writeCSVPreamble(w, "average"); err != nil {
		return err
	}
	if err := writeCSVNotes(w, a.notes(r.Policy, p.Actions, a.Warnings)); err != nil {
		return err
	}
	cw := newCSV(w)
	header := []string{"state", "unsafe", "action", "bias", "runner_up", "margin"}
	for _, name := range p.Actions {
		header = append(header, "q_"+name)
	}
	cw.Write(header)
	for s := range r.Policy {
		runner, margin := "", ""
		if r.RunnerUp[s] >= 0 {
			runner, margin = p.Actions[r.RunnerUp[s]], Fixed(r.Margin[s], 6)
		}
		row := []string{p.States[s], strconv.FormatBool(a.Unsafe[s]), p.Actions[r.Policy[s]], Fixed(r.Bias[s], 6), runner, margin}
		q := make([]string, len(p.Actions))
		for k, c := range p.Choices[s] {
			q[c.Action] = Fixed(r.Q[s][k], 6)
		}
		cw.Write(append(row, q...))
	}
	cw.Flush()
	return cw.Error()
}
