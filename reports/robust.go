package reports

import (
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"fixpoint/optimize"
	"fixpoint/optimize/robust"
)

// RobustAdvice presents robust advice for one class: the advice whose
// worst-case cost over every transition matrix in the ambiguity sets is
// least, beside the nominal advice, the price of robustness, the
// confidence statement of the sets, and which rows more data would settle.
type RobustAdvice struct {
	Header
	Problem  *optimize.Problem
	Analysis *robust.Analysis
	// Notes qualify the sets (rows that are not counting estimates);
	// Warnings are safety warnings about the advice. Both are printed with
	// it.
	Notes, Warnings []string
}

// settleShown is the number of rows of the settle ranking a table lists;
// JSON and CSV list every row.
const settleShown = 10

func (r *RobustAdvice) sets() *robust.Sets { return r.Analysis.Sets }

// notes are the out-of-service notes of the robust advice, the notes on
// the sets and the safety warnings.
func (r *RobustAdvice) notes() []string {
	out := r.serviceNotes(r.Analysis.Robust.Policy, r.Problem.Actions)
	return append(append(out, r.Notes...), r.Warnings...)
}

// radiusText formats a set's radius: "0.1", or "whole simplex".
func (r *RobustAdvice) radiusText(x float64) string {
	if math.IsInf(x, 1) || r.sets().Kind == robust.L1 && x >= 2 {
		return "whole simplex"
	}
	return strconv.FormatFloat(x, 'g', 3, 64)
}

// rowText names a row: "leave in sound".
func (r *RobustAdvice) rowText(action, state int) string {
	return r.Problem.Actions[action] + " in " + r.Problem.States[state]
}

// differsSentence says where and how the robust advice differs from the
// nominal advice.
func (r *RobustAdvice) differsSentence() string {
	a, p := r.Analysis, r.Problem
	if len(a.Differs) == 0 {
		return "The robust advice is the nominal advice in every condition."
	}
	parts := make([]string, len(a.Differs))
	for i, s := range a.Differs {
		parts[i] = fmt.Sprintf("in %s it is %s where the nominal advice is %s (whose worst case, %s %s, is %s more)", p.States[s],
			p.Actions[a.Robust.Policy[s]], p.Actions[a.Nominal.Policy[s]], r.money(a.NominalWorstCase[s]), r.Currency,
			r.money(a.NominalWorstCase[s]-a.Robust.WorstCase[s]))
	}
	return "The robust advice differs from the nominal advice: " + strings.Join(parts, "; ") + "."
}

// priceSentence states the price of robustness.
func (r *RobustAdvice) priceSentence() string {
	a := r.Analysis
	if len(a.Differs) == 0 {
		return fmt.Sprintf("Price of robustness: 0 %s: following the robust advice costs nothing more under the nominal matrices.", r.Currency)
	}
	return fmt.Sprintf("Price of robustness: %s %s (in %s): what following the robust advice costs under the nominal matrices above the nominal advice, the most over conditions.",
		r.money(a.PriceOfRobustness), r.Currency, r.Problem.States[a.PriceState])
}

// solverLines describe the robust and the nominal certificates.
func (r *RobustAdvice) solverLines() []string {
	rob, nom := r.Analysis.Robust, r.Analysis.Nominal
	evals := "evaluations"
	if rob.Evaluations == 1 {
		evals = "evaluation"
	}
	rl := fmt.Sprintf("Robust solver: %s, %s, %d exact %s of the adversary's chain; proven gap %s %s (tolerance %s), robust Bellman residual %s: %s.",
		methodTitles[rob.Method], iterationText(rob.Method, rob.Iterations), rob.Evaluations, evals, sci(rob.Gap), r.Currency, sci(rob.Tol), sci(rob.Residual), rob.Status)
	if rob.InnerTol > 0 {
		rl += fmt.Sprintf(" Each KL inner problem was solved to %s %s; the bounds account for it.", sci(rob.InnerTol), r.Currency)
	}
	nl := fmt.Sprintf("Nominal solver: %s; proven gap %s %s: %s.", methodTitles[nom.Method], sci(nom.Gap), r.Currency, nom.Status)
	return []string{rl, nl}
}

// settleRule says what "four times the observations" does to a radius.
func (r *RobustAdvice) settleRule() string {
	s := r.sets()
	switch {
	case s.Source == robust.Derived && s.Kind == robust.KL:
		return "the method-of-types radius at four times the observations, at the same miss probability"
	case s.Source == robust.Derived:
		return "the Weissman et al. radius at four times the observations and the same miss probability, about half"
	case s.Kind == robust.KL:
		return "the radius divided by four, as the bound shrinks like 1/n"
	}
	return "the radius halved, as the bound shrinks like 1/√n"
}

// advice changes as "worn: replace, failed: replace".
func (r *RobustAdvice) adviceChanges(g robust.Gain) string {
	parts := make([]string, len(g.AdviceChanges))
	for i, s := range g.AdviceChanges {
		parts[i] = r.Problem.States[s] + ": " + r.Problem.Actions[g.Policy[s]]
	}
	return strings.Join(parts, ", ")
}

func (r *RobustAdvice) observationsText(g robust.Gain) string {
	switch {
	case g.Exact:
		return "none"
	case g.Observations < 0:
		return "-"
	}
	return strconv.Itoa(g.Observations)
}

// gainCells are one row of the settle ranking for tables and the brief.
func (r *RobustAdvice) gainCells(rank int, g robust.Gain) []string {
	newR := r.radiusText(g.NewRadius)
	if g.Exact {
		newR = "0 (known exactly)"
	}
	change, where, advice := r.money(g.MaxChange), r.Problem.States[g.MaxState], r.adviceChanges(g)
	if g.Screened {
		change, where = r.money(0), "-"
		advice = "cannot change the answer"
	} else if advice == "" {
		advice = "none"
	}
	return []string{strconv.Itoa(rank), r.rowText(g.Action, g.State), r.observationsText(g), r.radiusText(g.Radius), newR, change, where, advice}
}

// adviceTable is the per-condition table: header, numeric columns, rows.
func (r *RobustAdvice) adviceTable() ([]string, []bool, [][]string) {
	a, p := r.Analysis, r.Problem
	rob := a.Robust
	header := []string{"condition", "advice", "worst case (" + r.Currency + ")", "lower bound", "upper bound", "under nominal matrices", "nominal advice", "price"}
	numeric := []bool{false, false, true, true, true, true, false, true}
	rows := make([][]string, len(rob.Policy))
	for s := range rob.Policy {
		nominal := "same"
		if a.Nominal.Policy[s] != rob.Policy[s] {
			nominal = p.Actions[a.Nominal.Policy[s]]
		}
		rows[s] = []string{r.stateLabel(s), p.Actions[rob.Policy[s]], r.money(rob.WorstCase[s]), r.money(rob.Lower[s]), r.money(rob.Upper[s]),
			r.money(a.NominalCost[s]), nominal, r.money(a.Price[s])}
	}
	return header, numeric, rows
}

var (
	settleHeader  = []string{"rank", "row", "observations", "radius", "with 4× data", "worst case falls by", "most in", "advice would change in"}
	settleNumeric = []bool{true, false, true, true, true, true, false, false}
)

// settleRows are the first settleShown rows of the settle ranking.
func (r *RobustAdvice) settleRows() [][]string {
	gains := r.Analysis.Settle
	rows := make([][]string, 0, min(len(gains), settleShown))
	for i, g := range gains[:min(len(gains), settleShown)] {
		rows = append(rows, r.gainCells(i+1, g))
	}
	return rows
}

// WriteTable writes the robust advice per condition, the sentences on
// where it differs, its price and the sets' statement, the certificates,
// the settle ranking (the first rows) and the caution.
func (r *RobustAdvice) WriteTable(w io.Writer) error {
	a := r.Analysis
	if _, err := fmt.Fprintf(w, "%s: robust advice per condition (worst-case present value of expected costs over the ambiguity sets, %s)\n", r.Model, r.Currency); err != nil {
		return err
	}
	header, numeric, rows := r.adviceTable()
	if err := table(w, header, numeric, rows); err != nil {
		return err
	}
	lines := []string{
		"Thresholds: " + thresholds(r.Problem.States, r.Problem.Actions, a.Robust.Policy),
		r.differsSentence(),
		r.priceSentence(),
		"How sure: " + r.sets().Statement,
		"Worst case: a proven upper bound on the advice's expected cost over every matrix in the sets; lower and upper bound the least worst case of any policy. " +
			"Under nominal matrices: the robust advice's expected cost with the config's rows.",
		r.discountLine(),
	}
	lines = append(lines, r.solverLines()...)
	lines = append(lines, tieLines(r.Problem, a.Robust.Ties, a.Robust.TieTol, r.Currency)...)
	for _, n := range r.notes() {
		lines = append(lines, "Note: "+n)
	}
	if err := writeLines(w, lines); err != nil {
		return err
	}
	if err := r.writeSettleTable(w); err != nil {
		return err
	}
	return writeLines(w, []string{"", "CAUTION: " + Caution})
}

func (r *RobustAdvice) writeSettleTable(w io.Writer) error {
	gains := r.Analysis.Settle
	if len(gains) == 0 {
		return writeLines(w, []string{"", "Which data would settle it: no row has a set larger than one point, so more data would change nothing."})
	}
	intro := []string{"", fmt.Sprintf("Which data would settle it: how much the worst-case cost falls if one row had four times the observations (%s), largest first.", r.settleRule())}
	if err := writeLines(w, intro); err != nil {
		return err
	}
	if err := table(w, settleHeader, settleNumeric, r.settleRows()); err != nil {
		return err
	}
	var after []string
	if len(gains) > settleShown {
		after = append(after, capitalize(nouns(len(gains)-settleShown, "further row is", "further rows are"))+" ranked in the JSON and CSV outputs.")
	}
	return writeLines(w, after)
}

type robustStateJSON struct {
	State            string             `json:"state"`
	Unsafe           bool               `json:"unsafe"`
	Action           string             `json:"action"`
	WorstCase        float64            `json:"worst_case"`
	Lower            float64            `json:"lower"`
	Upper            float64            `json:"upper"`
	Nominal          float64            `json:"nominal"`
	NominalAction    string             `json:"nominal_action"`
	NominalValue     float64            `json:"nominal_value"`
	NominalWorstCase float64            `json:"nominal_worst_case"`
	Price            float64            `json:"price"`
	RunnerUp         *string            `json:"runner_up"`
	Margin           *float64           `json:"margin"`
	Q                map[string]float64 `json:"q"`
	Tied             []string           `json:"tied,omitempty"`
}

type robustSummaryJSON struct {
	Set               string   `json:"set"`
	Radius            *float64 `json:"radius"`
	Confidence        *float64 `json:"confidence"`
	PriceOfRobustness float64  `json:"price_of_robustness"`
	Differs           []string `json:"differs"`
}

type robustSetJSON struct {
	State        string   `json:"state"`
	Action       string   `json:"action"`
	Radius       *float64 `json:"radius"`
	WholeSimplex bool     `json:"whole_simplex"`
	Observations *int     `json:"observations"`
	Support      []string `json:"support"`
	Widened      []string `json:"widened"`
}

type robustGainJSON struct {
	State         string             `json:"state"`
	Action        string             `json:"action"`
	Observations  *int               `json:"observations"`
	Radius        *float64           `json:"radius"`
	NewRadius     float64            `json:"new_radius"`
	MaxChange     float64            `json:"max_change"`
	MaxState      *string            `json:"max_state"`
	Change        map[string]float64 `json:"change"`
	AdviceChanges map[string]string  `json:"advice_changes"`
	Accuracy      float64            `json:"accuracy"`
	Screened      bool               `json:"screened"`
	Exact         bool               `json:"exact"`
	Status        string             `json:"status"`
}

type robustCertificateJSON struct {
	MaxGap          float64 `json:"max_gap"`
	EvalGap         float64 `json:"evaluation_gap"`
	BellmanResidual float64 `json:"bellman_residual"`
	Status          string  `json:"status"`
	Tolerance       float64 `json:"tolerance"`
	TieTolerance    float64 `json:"tie_tolerance"`
	InnerTolerance  float64 `json:"inner_tolerance"`
	Evaluations     int     `json:"evaluations"`
}

type robustJSON struct {
	Model              string                `json:"model"`
	Currency           string                `json:"currency"`
	PeriodYears        float64               `json:"period_years"`
	DiscountRate       *float64              `json:"discount_rate"`
	DiscountFactor     float64               `json:"discount_factor"`
	Method             string                `json:"method"`
	Iterations         int                   `json:"iterations"`
	States             []robustStateJSON     `json:"states"`
	Certificate        robustCertificateJSON `json:"certificate"`
	NominalCertificate adviceCertificate     `json:"nominal_certificate"`
	Thresholds         string                `json:"thresholds"`
	Robust             robustSummaryJSON     `json:"robust"`
	PriceState         string                `json:"price_state"`
	Statement          string                `json:"statement"`
	Sets               []robustSetJSON       `json:"sets"`
	Settle             []robustGainJSON      `json:"settle"`
	Notes              []string              `json:"notes,omitempty"`
	Caution            string                `json:"caution"`
}

// finite returns a pointer to x, or nil when x is not finite.
func finite(x float64) *float64 {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return nil
	}
	return &x
}

func (r *RobustAdvice) names(states []int) []string {
	out := make([]string, len(states))
	for i, s := range states {
		out[i] = r.Problem.States[s]
	}
	return out
}

func (r *RobustAdvice) json() robustJSON {
	a, p := r.Analysis, r.Problem
	rob, nom, sets := a.Robust, a.Nominal, a.Sets
	out := robustJSON{
		Model: r.Model, Currency: r.Currency, PeriodYears: r.periodYears(), DiscountFactor: p.Discount,
		Method: rob.Method.String(), Iterations: rob.Iterations,
		Certificate: robustCertificateJSON{MaxGap: rob.Gap, EvalGap: rob.EvalGap, BellmanResidual: rob.Residual, Status: rob.Status.String(),
			Tolerance: rob.Tol, TieTolerance: rob.TieTol, InnerTolerance: rob.InnerTol, Evaluations: rob.Evaluations},
		NominalCertificate: adviceCertificate{MaxGap: nom.Gap, BellmanResidual: nom.Residual, Status: nom.Status.String(),
			Tolerance: nom.Tol, TieTolerance: nom.TieTol},
		Thresholds: thresholds(p.States, p.Actions, rob.Policy),
		Robust: robustSummaryJSON{Set: sets.Kind.String(), Radius: finite(sets.Radius), Confidence: finite(sets.Confidence),
			PriceOfRobustness: a.PriceOfRobustness, Differs: r.names(a.Differs)},
		PriceState: p.States[a.PriceState], Statement: sets.Statement,
		Sets: []robustSetJSON{}, Settle: []robustGainJSON{}, Notes: r.notes(), Caution: Caution,
	}
	out.DiscountRate = r.jsonRate()
	tied := tiedActions(p, rob.Ties)
	for s := range rob.Policy {
		st := robustStateJSON{State: p.States[s], Unsafe: r.unsafe(s), Action: p.Actions[rob.Policy[s]],
			WorstCase: rob.WorstCase[s], Lower: rob.Lower[s], Upper: rob.Upper[s],
			Nominal: a.NominalCost[s], NominalAction: p.Actions[nom.Policy[s]], NominalValue: nom.Value[s],
			NominalWorstCase: a.NominalWorstCase[s], Price: a.Price[s], Tied: tied[s]}
		st.Q, st.RunnerUp, st.Margin = choiceJSON(p, s, rob.Q, rob.RunnerUp, rob.Margin)
		out.States = append(out.States, st)
	}
	for _, rows := range sets.Rows {
		for _, row := range rows {
			js := robustSetJSON{State: p.States[row.State], Action: p.Actions[row.Action], Radius: finite(row.Radius),
				WholeSimplex: row.NoData || math.IsInf(row.Radius, 1) || sets.Kind == robust.L1 && row.Radius >= 2,
				Support:      r.names(row.Support), Widened: r.names(row.Widened)}
			if row.Observations >= 0 {
				n := row.Observations
				js.Observations = &n
			}
			out.Sets = append(out.Sets, js)
		}
	}
	for _, g := range a.Settle {
		jg := robustGainJSON{State: p.States[g.State], Action: p.Actions[g.Action], Radius: finite(g.Radius), NewRadius: g.NewRadius,
			MaxChange: g.MaxChange, Change: map[string]float64{}, AdviceChanges: map[string]string{},
			Accuracy: g.Accuracy, Screened: g.Screened, Exact: g.Exact, Status: g.Status.String()}
		if !g.Screened {
			name := p.States[g.MaxState]
			jg.MaxState = &name
		}
		if g.Observations >= 0 {
			n := g.Observations
			jg.Observations = &n
		}
		for s, x := range g.Change {
			jg.Change[p.States[s]] = x
		}
		for _, s := range g.AdviceChanges {
			jg.AdviceChanges[p.States[s]] = p.Actions[g.Policy[s]]
		}
		out.Settle = append(out.Settle, jg)
	}
	return out
}

// WriteJSON writes the robust advice as one JSON object (keys in the
// README): per state worst_case, lower, upper, nominal (the robust
// advice's cost under the nominal matrices) and action (the robust
// advice); at the top level robust {set, radius, confidence,
// price_of_robustness, differs}, the statement, every row's set and the
// settle ranking.
func (r *RobustAdvice) WriteJSON(w io.Writer) error { return writeJSON(w, r.json()) }

// WriteCSV writes the comment lines (caution, model, the sets' statement,
// notes), then one table whose kind column says what a row is: "state"
// rows (state, unsafe, action, worst_case, lower, upper, nominal,
// nominal_action, nominal_value, price) and "settle" rows, ranked (state,
// unsafe, action of the row, observations, radius, new_radius,
// max_change, max_state, advice_changes as state:action;...). Numbers
// have six decimals; an empty radius is the whole simplex.
func (r *RobustAdvice) WriteCSV(w io.Writer) error {
	a, p := r.Analysis, r.Problem
	rob := a.Robust
	if err := r.writeCSVPreamble(w, "worst-case expected discounted cost (present value) over the ambiguity sets"); err != nil {
		return err
	}
	if _, err := fmt.Fprintf(w, "# sets: %s\n", r.sets().Statement); err != nil {
		return err
	}
	if err := writeCSVNotes(w, r.notes()); err != nil {
		return err
	}
	cw := newCSV(w)
	cw.Write([]string{"kind", "state", "unsafe", "action", "worst_case", "lower", "upper", "nominal", "nominal_action", "nominal_value", "price",
		"observations", "radius", "new_radius", "max_change", "max_state", "advice_changes"})
	for s := range rob.Policy {
		cw.Write([]string{"state", p.States[s], strconv.FormatBool(r.unsafe(s)), p.Actions[rob.Policy[s]],
			Fixed(rob.WorstCase[s], 6), Fixed(rob.Lower[s], 6), Fixed(rob.Upper[s], 6), Fixed(a.NominalCost[s], 6),
			p.Actions[a.Nominal.Policy[s]], Fixed(a.Nominal.Value[s], 6), Fixed(a.Price[s], 6), "", "", "", "", "", ""})
	}
	for _, g := range a.Settle {
		obs := ""
		if g.Observations >= 0 {
			obs = strconv.Itoa(g.Observations)
		}
		radius := ""
		if !math.IsInf(g.Radius, 1) {
			radius = Fixed(g.Radius, 6)
		}
		most := p.States[g.MaxState]
		if g.Screened {
			most = ""
		}
		changes := make([]string, len(g.AdviceChanges))
		for i, s := range g.AdviceChanges {
			changes[i] = p.States[s] + ":" + p.Actions[g.Policy[s]]
		}
		cw.Write([]string{"settle", p.States[g.State], strconv.FormatBool(r.unsafe(g.State)), p.Actions[g.Action],
			"", "", "", "", "", "", "", obs, radius, Fixed(g.NewRadius, 6), Fixed(g.MaxChange, 6), most, strings.Join(changes, ";")})
	}
	cw.Flush()
	return cw.Error()
}

// RobustPage is the content of a brief's "how sure are we" page, as text
// ready to lay out: a title, the paragraphs before the advice table, the
// advice table, the paragraph before the settle ranking, the ranking (its
// first rows), and the closing paragraphs. The brief adds the caution box
// as on every page.
type RobustPage struct {
	Title       string
	Intro       []string
	Advice      PageTable
	SettleIntro string
	Settle      PageTable
	Closing     []string
}

// Page returns the "how sure are we" page of a brief.
func (r *RobustAdvice) Page() RobustPage {
	a := r.Analysis
	pg := RobustPage{Title: "How sure are we?"}
	pg.Intro = []string{
		"The advice on the first page is certified for the transition matrices in the config. Those matrices are estimates; " +
			"this page gives the advice that holds for every matrix the data allow, and what it would cost.",
		// The brief's embedded Go fonts have no "‖" (U+2016).
		strings.ReplaceAll(r.sets().Statement, "‖", "||"),
		r.differsSentence() + " " + r.priceSentence(),
	}
	header, numeric, rows := r.adviceTable()
	header[0] = "Condition"
	pg.Advice = PageTable{Header: header, Numeric: numeric, Rows: rows,
		Note: "Advice: the robust advice. Worst case: a proven upper bound on its expected cost (present value) over every matrix in the sets; " +
			"lower and upper bound: proven bounds on the least worst case of any policy. Under nominal matrices: the robust advice's expected cost with the config's rows. " +
			"Nominal advice: the advice for the config's rows (same: as the robust advice). Price: what following the robust advice costs under the nominal matrices " +
			"above the nominal advice, from that condition."}
	if len(a.Settle) == 0 {
		pg.SettleIntro = "No row has a set larger than one point: more data would change nothing."
	} else {
		pg.SettleIntro = fmt.Sprintf("Which data would settle it: how much the worst-case cost falls if one row had four times the observations (%s), largest first. "+
			"Inspect the conditions at the top of this list more closely before the next review.", r.settleRule())
		pg.Settle = PageTable{Header: settleHeader, Numeric: settleNumeric, Rows: r.settleRows(),
			Note: "Row: an action and the condition it is taken in (one row of its transition matrix). Observations: the transitions counted in that row " +
				"(none: known exactly; -: not counted). Radius: the size of the row's set now; with 4× data: its size with four times the observations. " +
				"Worst case falls by: the largest fall of the worst-case cost over conditions, in the condition under most in. " +
				"Advice would change in: the conditions whose robust advice would change, and to what."}
		if n := len(a.Settle) - settleShown; n > 0 {
			pg.Settle.Note += " " + capitalize(nouns(n, "further row is", "further rows are")) + " ranked in the JSON and CSV outputs of solve."
		}
	}
	pg.Closing = append(r.solverLines(), r.notes()...)
	return pg
}
