package reports

import (
	"encoding/json"
	"fmt"
	"io"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"

	"fixpoint/optimize"
)

// Advice is the certified policy of one class of equipment with what is
// needed to present it.
type Advice struct {
	Header
	// Passive is the index of the passive action, or -1.
	Passive int
	Problem *optimize.Problem
	Result  *optimize.Result
	// Life, if not nil, adds the life-cycle figures of the advice.
	Life *optimize.Life
	// Warnings are safety warnings about the advice, printed with it.
	Warnings []string
}

var methodTitles = map[optimize.Method]string{
	optimize.ValueIteration:  "value iteration",
	optimize.PolicyIteration: "policy iteration",
	optimize.LinearProgram:   "linear programming (simplex)",
}

// Thresholds returns the advice as one threshold sentence when the advised
// action index does not decrease along the scale ("Leave while good or
// fair; overhaul from worn; replace when failed."), and says that it is
// not monotone otherwise. Actions are ranked by their order in the model,
// which should list them from least to most intervention.
func (a *Advice) Thresholds() string {
	return thresholds(a.Problem.States, a.Problem.Actions, a.Result.Policy)
}

func thresholds(states, actions []string, pol []int) string {
	type block struct{ action, first, last int }
	var blocks []block
	for s, act := range pol {
		if len(blocks) > 0 && blocks[len(blocks)-1].action == act {
			blocks[len(blocks)-1].last = s
			continue
		}
		blocks = append(blocks, block{act, s, s})
	}
	for i := 1; i < len(blocks); i++ {
		if blocks[i].action < blocks[i-1].action {
			parts := make([]string, len(pol))
			for s, act := range pol {
				parts[s] = states[s] + ": " + actions[act]
			}
			return "The advice is not monotone along the scale (" + strings.Join(parts, ", ") +
				"), so no single threshold rule describes it."
		}
	}
	if len(blocks) == 1 {
		return capitalize(actions[blocks[0].action]) + " in every condition."
	}
	parts := make([]string, len(blocks))
	for i, b := range blocks {
		switch {
		case i == 0:
			parts[i] = actions[b.action] + " while " + joinOr(states[b.first:b.last+1])
		case b.first == b.last && b.last == len(pol)-1:
			parts[i] = actions[b.action] + " when " + states[b.first]
		default:
			parts[i] = actions[b.action] + " from " + states[b.first]
		}
	}
	return capitalize(strings.Join(parts, "; ")) + "."
}

// capitalize upper-cases the first letter of s (a whole character, so
// that names in any script survive).
func capitalize(s string) string {
	r, n := utf8.DecodeRuneInString(s)
	if n == 0 {
		return s
	}
	return string(unicode.ToUpper(r)) + s[n:]
}

func (a *Advice) solverLine() string {
	r := a.Result
	return solverText(r.Method, r.Iterations, r.Gap, r.Tol, r.Residual, r.Status, a.Currency)
}

// solverText is the certificate in one sentence: method, iterations,
// proven gap against the tolerance, Bellman residual and status.
func solverText(m optimize.Method, iterations int, gap, tol, residual float64, status optimize.Status, currency string) string {
	return fmt.Sprintf("Solver: %s, %s; proven gap %s %s (tolerance %s), Bellman residual %s: %s.",
		methodTitles[m], iterationText(m, iterations), sci(gap), currency, sci(tol), sci(residual), status)
}

// iterationText counts the iterations in the method's own unit: "2 steps".
func (a *Advice) iterationText() string { return iterationText(a.Result.Method, a.Result.Iterations) }

func iterationText(m optimize.Method, n int) string {
	unit := "step"
	if m == optimize.ValueIteration {
		unit = "sweep"
	} else if m == optimize.LinearProgram {
		unit = "simplex solve"
	}
	if n != 1 {
		unit += "s"
	}
	return fmt.Sprintf("%d %s", n, unit)
}

func (a *Advice) tieLines() []string {
	return tieLines(a.Problem, a.Result.Ties, a.Result.TieTol, a.Currency)
}

// tieLines says, for each tie, which actions are equally good and which
// one the tie rule advises.
func tieLines(p *optimize.Problem, ties []optimize.Tie, tol float64, currency string) []string {
	var lines []string
	for _, t := range ties {
		names := make([]string, len(t.Actions))
		for i, act := range t.Actions {
			names[i] = p.Actions[act]
		}
		lines = append(lines, fmt.Sprintf("Tie in %s: %s are equally good within %s %s; the advice is the first listed in the config.",
			p.States[t.State], joinAnd(names), sci(tol), currency))
	}
	return lines
}

// tiedActions lists the tied actions' names by state.
func tiedActions(p *optimize.Problem, ties []optimize.Tie) map[int][]string {
	tied := make(map[int][]string)
	for _, t := range ties {
		for _, act := range t.Actions {
			tied[t.State] = append(tied[t.State], p.Actions[act])
		}
	}
	return tied
}

// choiceJSON returns the JSON fields of state s's choices: the Q-value of
// each admissible action by name, and the runner-up and its margin (nil
// without one).
func choiceJSON(p *optimize.Problem, s int, q [][]float64, runnerUp []int, margin []float64) (map[string]float64, *string, *float64) {
	qs := make(map[string]float64, len(p.Choices[s]))
	for k, c := range p.Choices[s] {
		qs[p.Actions[c.Action]] = q[s][k]
	}
	if runnerUp[s] < 0 {
		return qs, nil, nil
	}
	name, m := p.Actions[runnerUp[s]], margin[s]
	return qs, &name, &m
}

func joinAnd(names []string) string {
	if len(names) < 2 {
		return strings.Join(names, "")
	}
	return strings.Join(names[:len(names)-1], ", ") + " and " + names[len(names)-1]
}

func sci(x float64) string { return strconv.FormatFloat(x, 'g', 3, 64) }

// Years formats a duration in years: "1 year", "0.5 years".
func Years(x float64) string {
	if x == 1 {
		return "1 year"
	}
	return strconv.FormatFloat(x, 'f', -1, 64) + " years"
}

// WriteTable writes the per-condition advice as a terminal table followed
// by the threshold sentence, the discounting, the certificate and the
// caution.
func (a *Advice) WriteTable(w io.Writer) error {
	r := a.Result
	cur := a.Currency
	header := []string{"condition", "advice", "expected cost (" + cur + ")", "lower bound", "upper bound", "runner-up", "margin"}
	rows := make([][]string, len(r.Policy))
	for s := range r.Policy {
		runner, margin := "-", "-"
		if r.RunnerUp[s] >= 0 {
			runner, margin = a.Problem.Actions[r.RunnerUp[s]], a.money(r.Margin[s])
		}
		rows[s] = []string{a.stateLabel(s), a.Problem.Actions[r.Policy[s]], a.money(r.Value[s]),
			a.money(r.Lower[s]), a.money(r.Upper[s]), runner, margin}
	}
	var b strings.Builder
	fmt.Fprintf(&b, "%s: advice per condition (present value of expected costs, %s)\n", a.Model, cur)
	if _, err := io.WriteString(w, b.String()); err != nil {
		return err
	}
	if err := table(w, header, []bool{false, false, true, true, true, false, true}, rows); err != nil {
		return err
	}
	lines := []string{"Thresholds: " + a.Thresholds(), a.discountLine(), a.solverLine()}
	lines = append(lines, a.tieLines()...)
	lines = append(lines, "Margin: how much the runner-up's cost in that condition must fall before it becomes the advice.")
	for _, n := range a.notes(r.Policy, a.Problem.Actions, a.Warnings) {
		lines = append(lines, "Note: "+n)
	}
	if err := writeLines(w, lines); err != nil {
		return err
	}
	if a.Life != nil {
		if err := a.writeLife(w); err != nil {
			return err
		}
	}
	return writeLines(w, []string{"", "CAUTION: " + Caution})
}

type adviceState struct {
	State    string             `json:"state"`
	Unsafe   bool               `json:"unsafe"`
	Action   string             `json:"action"`
	Value    float64            `json:"value"`
	Lower    float64            `json:"lower"`
	Upper    float64            `json:"upper"`
	RunnerUp *string            `json:"runner_up"`
	Margin   *float64           `json:"margin"`
	Q        map[string]float64 `json:"q"`
	Tied     []string           `json:"tied,omitempty"`
}

type adviceCertificate struct {
	MaxGap          float64 `json:"max_gap"`
	BellmanResidual float64 `json:"bellman_residual"`
	Status          string  `json:"status"`
	Tolerance       float64 `json:"tolerance"`
	TieTolerance    float64 `json:"tie_tolerance"`
}

type adviceJSON struct {
	Model          string            `json:"model"`
	Currency       string            `json:"currency"`
	PeriodYears    float64           `json:"period_years"`
	DiscountRate   *float64          `json:"discount_rate"`
	DiscountFactor float64           `json:"discount_factor"`
	Method         string            `json:"method"`
	Iterations     int               `json:"iterations"`
	States         []adviceState     `json:"states"`
	Certificate    adviceCertificate `json:"certificate"`
	Thresholds     string            `json:"thresholds"`
	Life           *lifeJSON         `json:"life,omitempty"`
	Notes          []string          `json:"notes,omitempty"`
	Caution        string            `json:"caution"`
}

func (a *Advice) json() adviceJSON {
	r, p := a.Result, a.Problem
	out := adviceJSON{
		Model: a.Model, Currency: a.Currency, PeriodYears: a.periodYears(),
		DiscountFactor: p.Discount, Method: r.Method.String(), Iterations: r.Iterations,
		Certificate: adviceCertificate{MaxGap: r.Gap, BellmanResidual: r.Residual, Status: r.Status.String(),
			Tolerance: r.Tol, TieTolerance: r.TieTol},
		Thresholds: a.Thresholds(), Life: a.lifeJSON(), Caution: Caution,
		Notes: a.notes(r.Policy, p.Actions, a.Warnings),
	}
	out.DiscountRate = a.jsonRate()
	tied := tiedActions(p, r.Ties)
	for s := range r.Policy {
		st := adviceState{State: p.States[s], Unsafe: a.Unsafe[s], Action: p.Actions[r.Policy[s]],
			Value: r.Value[s], Lower: r.Lower[s], Upper: r.Upper[s], Tied: tied[s]}
		st.Q, st.RunnerUp, st.Margin = choiceJSON(p, s, r.Q, r.RunnerUp, r.Margin)
		out.States = append(out.States, st)
	}
	return out
}

// WriteJSON writes the advice as one JSON object (see the README for the
// keys), indented, with a final newline.
func (a *Advice) WriteJSON(w io.Writer) error {
	return writeJSON(w, a.json())
}

func writeJSON(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(v)
}

// WriteCSV writes one row per condition after a comment line carrying the
// caution: state, unsafe, action, value, lower, upper, runner_up, margin
// and the Q-value of every action (empty where not admissible). Numbers
// have six decimals.
func (a *Advice) WriteCSV(w io.Writer) error {
	r, p := a.Result, a.Problem
	if err := a.writeCSVPreamble(w, "expected discounted cost (present value)"); err != nil {
		return err
	}
	if err := writeCSVNotes(w, a.notes(r.Policy, p.Actions, a.Warnings)); err != nil {
		return err
	}
	cw := newCSV(w)
	header := []string{"state", "unsafe", "action", "value", "lower", "upper", "runner_up", "margin"}
	for _, name := range p.Actions {
		header = append(header, "q_"+name)
	}
	cw.Write(header)
	for s := range r.Policy {
		runner, margin := "", ""
		if r.RunnerUp[s] >= 0 {
			runner, margin = p.Actions[r.RunnerUp[s]], Fixed(r.Margin[s], 6)
		}
		row := []string{p.States[s], strconv.FormatBool(a.Unsafe[s]), p.Actions[r.Policy[s]],
			Fixed(r.Value[s], 6), Fixed(r.Lower[s], 6), Fixed(r.Upper[s], 6), runner, margin}
		q := make([]string, len(p.Actions))
		for k, c := range p.Choices[s] {
			q[c.Action] = Fixed(r.Q[s][k], 6)
		}
		cw.Write(append(row, q...))
	}
	cw.Flush()
	return cw.Error()
}
