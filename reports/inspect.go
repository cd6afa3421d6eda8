package reports

import (
	"fmt"
	"io"
	"math"
	"strconv"

	"fixpoint/optimize/inspect"
)

// InspectionRule is said by every output of inspection advice, beside the
// caution: the advised interval never overrides a statutory one.
const InspectionRule = "The statutory interval and a competent person's scheme of examination take precedence over the advised interval: " +
	"inspect at least as often, and whenever, they require, whatever this advice says."

// InspectionTiming states the timing convention of the inspection model.
const InspectionTiming = "Timing: at an inspection the unit is seen and the decision (action, next interval) is taken; the inspection, " +
	"the action and that period's running cost are charged then, each unseen period after it its running cost and, in a hidden " +
	"failure, its risk cost, discounted by the factor per period for the time elapsed; a self-announcing failure is seen in the " +
	"period it happens and is dealt with then (a call-out, charged like an inspection)."

// Duration says a length of time given in years in the unit a reader
// plans in: whole years ("1 year", "2 years"), else whole months ("6
// months"), else whole weeks, else days.
func Duration(years float64) string {
	whole := func(x float64) (int, bool) {
		r := math.Round(x)
		return int(r), r >= 1 && math.Abs(x-r) <= 1e-6*max(1, x)
	}
	plural := func(n int, unit string) string {
		if n == 1 {
			return "1 " + unit
		}
		return strconv.Itoa(n) + " " + unit + "s"
	}
	if y, ok := whole(years); ok {
		return plural(y, "year")
	}
	if m, ok := whole(12 * years); ok {
		return plural(m, "month")
	}
	if wk, ok := whole(52 * years); ok {
		return plural(wk, "week")
	}
	return Fixed(365.25*years, 1) + " days"
}

// periodCount says "1 period" or "4 periods".
func periodCount(k int) string {
	if k == 1 {
		return "1 period"
	}
	return strconv.Itoa(k) + " periods"
}

// Page is the content of one page of a brief as data, for a PDF renderer
// to lay out: a title, paragraphs, tables and footnotes.
type Page struct {
	Title      string
	Paragraphs []string
	Tables     []PageTable
	Notes      []string
}

// PageTable is one table of a Page: a caption, the header, which columns
// are numbers (right-aligned), the rows, every cell formatted, and a note
// saying what each column means.
type PageTable struct {
	Caption string
	Header  []string
	Numeric []bool
	Rows    [][]string
	Note    string
}

// InspectionAdvice is the certified joint advice of a class with an
// inspection block: per condition the action and the next inspection
// interval, the cost of each fixed interval against it, and the long-run
// figures of hidden failures and inspections.
type InspectionAdvice struct {
	Header
	Plan    *inspect.Plan
	Problem *inspect.Problem
	Result  *inspect.Result
	// Fixed holds one certified solve per admissible interval;
	// FixedLongRun[i] the long-run figures of Fixed[i] (nil where its
	// embedded chain has several closed classes).
	Fixed        []inspect.Fixed
	FixedLongRun []*inspect.LongRun
	// LongRun are the long-run figures of the advice, nil when the chain
	// of the states found at the epochs has several closed classes.
	LongRun *inspect.LongRun
	// Warnings are printed with the advice.
	Warnings []string
}

// intervalText says an interval of k periods: "6 months (2 periods)".
func intervalText(p *inspect.Problem, k int) string {
	return Duration(p.Years(k)) + " (" + periodCount(k) + ")"
}

// Decision says the decision c in words: "overhaul, then inspect again
// in 6 months".
func Decision(p *inspect.Problem, c inspect.Choice) string {
	return p.Actions[c.Action] + ", then inspect again in " + Duration(p.Years(c.Interval))
}

// LimitSentence says the plan's limit and the allowed intervals it
// excludes.
func LimitSentence(p *inspect.Problem) string {
	s := fmt.Sprintf("No interval above the limit of %s (max_interval_years, from the statutory or written scheme of examination) is advised", Years(p.MaxIntervalYears))
	if len(p.Excluded) == 0 {
		return s + "; every allowed interval is within it."
	}
	parts := make([]string, len(p.Excluded))
	for i, k := range p.Excluded {
		parts[i] = intervalText(p, k)
	}
	return s + "; not admissible here: " + joinAnd(parts) + "."
}

// states names the states marked in mark, in scale order.
func markedStates(p *inspect.Problem, mark func(s int) bool) []string {
	var out []string
	for s := range p.States {
		if mark(s) {
			out = append(out, p.States[s])
		}
	}
	return out
}

func (v *InspectionAdvice) hidden() []string {
	return markedStates(v.Problem, func(s int) bool { return v.Problem.Hidden[s] })
}

func (v *InspectionAdvice) announced() []string {
	return markedStates(v.Problem, func(s int) bool { return v.Problem.Unsafe[s] && !v.Problem.Hidden[s] })
}

// label is a state's name with its kind: "stuck (unsafe, hidden)".
func (v *InspectionAdvice) label(s int) string {
	p := v.Problem
	switch {
	case p.Hidden[s]:
		return p.States[s] + " (unsafe, hidden)"
	case p.Unsafe[s]:
		return p.States[s] + " (unsafe)"
	}
	return p.States[s]
}

// adviceTable is the advice per condition with its bounds and runner-up.
func (v *InspectionAdvice) adviceTable() PageTable {
	r, p := v.Result, v.Problem
	t := PageTable{
		Caption: fmt.Sprintf("Action and next inspection per condition found (present value of expected costs, %s)", v.Currency),
		Header:  []string{"condition", "advice", "expected cost (" + v.Currency + ")", "lower bound", "upper bound", "runner-up", "margin"},
		Numeric: []bool{false, false, true, true, true, false, true},
		Note: "Condition: the condition an inspection finds (hidden: an unsafe condition that only an inspection finds). Advice: the action, then when to inspect again. " +
			"Expected cost: the present value of the expected costs from that inspection on under the advice; lower and upper bound: proven bounds on the least such cost. " +
			"Runner-up: the next best decision; margin: how much its cost in that condition must fall before it becomes the advice.",
	}
	for s := range p.States {
		runner, margin := "-", "-"
		if i := r.RunnerUp[s]; i >= 0 {
			c := p.Choices[s][i]
			runner, margin = p.Actions[c.Action]+", "+Duration(p.Years(c.Interval)), v.money(r.Margin[s])
		}
		t.Rows = append(t.Rows, []string{v.label(s), Decision(p, p.Choices[s][r.Policy[s]]), v.money(r.Value[s]),
			v.money(r.Lower[s]), v.money(r.Upper[s]), runner, margin})
	}
	return t
}

// worstExcess returns the largest extra cost of a fixed interval and its
// state.
func worstExcess(f inspect.Fixed) (float64, int) {
	worst, at := math.Inf(-1), 0
	for s, x := range f.Excess {
		if x > worst {
			worst, at = x, s
		}
	}
	return worst, at
}

// longRunCells are the long-run columns of the fixed-interval table.
func (v *InspectionAdvice) longRunCells(l *inspect.LongRun) []string {
	if l == nil {
		return []string{"n/a", "n/a", "n/a"}
	}
	return []string{Fixed(l.EpochsPerYear, 2), Fixed(365.25*l.HiddenShare, 2), v.money(l.CostPerYear)}
}

// fixedTable compares each fixed interval with the advice.
func (v *InspectionAdvice) fixedTable() PageTable {
	p := v.Problem
	best := p.States[0]
	t := PageTable{
		Caption: fmt.Sprintf("What a fixed inspection interval costs against the advice (actions re-optimised for each interval; extra costs in present value, %s; "+
			"per unit-year: inspections and call-outs, days in a hidden failure unseen, and the long-run cost, undiscounted)", v.Currency),
		Header:  []string{"inspect every", "extra cost from " + best, "largest extra cost", "inspections", "hidden days", "cost per unit-year"},
		Numeric: []bool{false, true, true, true, true, true},
		Note: fmt.Sprintf("Inspect every: one interval whatever the condition found (as advised: the advice above). Extra cost from %s: what that habit costs "+
			"in present value above the advice, for a unit found %s; largest extra cost: the most over conditions, in the condition named. "+
			"Inspections: scheduled inspections and call-outs per unit-year; hidden days: days per unit-year in a hidden failure, unseen; "+
			"cost per unit-year: the long-run cost, undiscounted.", best, best),
	}
	t.Rows = append(t.Rows, append([]string{"as advised", v.money(0), v.money(0)}, v.longRunCells(v.LongRun)...))
	for i, f := range v.Fixed {
		worst, at := worstExcess(f)
		t.Rows = append(t.Rows, append([]string{intervalText(p, f.Interval), v.money(f.Excess[0]),
			v.money(worst) + " (" + p.States[at] + ")"}, v.longRunCells(v.FixedLongRun[i])...))
	}
	return t
}

// figureLines say the long-run figures of the advice in words.
func (v *InspectionAdvice) figureLines() []string {
	l := v.LongRun
	if l == nil {
		return []string{"Long-run figures: not defined, because under the advice the conditions found at inspections form several closed classes (where a unit ends up depends on where it starts)."}
	}
	hidden := "There are no hidden failures in this class (every unsafe state announces itself)."
	if h := v.hidden(); len(h) > 0 {
		hidden = fmt.Sprintf("Hidden failures (%s) stay in service unseen for %s days per unit per year on average (%s unit-years per unit-year) under the advice.",
			joinOr(h), Fixed(365.25*l.HiddenShare, 2), Fixed(l.HiddenShare, 5))
	}
	unsafe := fmt.Sprintf("Probability that a scheduled inspection finds the unit in an unsafe state: %s", pct(l.UnsafeAtInspection))
	if len(v.hidden()) > 0 {
		unsafe += fmt.Sprintf(" (in a hidden failure: %s)", pct(l.HiddenAtInspection))
	}
	unsafe += fmt.Sprintf("; at any epoch, call-outs included: %s.", Percent(l.UnsafeAtEpoch, 2))
	calls := ""
	if a := v.announced(); len(a) > 0 {
		calls = fmt.Sprintf(" and %s call-outs after self-announcing failures (%s)", Fixed(l.EpochsPerYear-l.InspectionsPerYear, 3), joinOr(a))
	}
	return []string{hidden, unsafe,
		fmt.Sprintf("Per unit and year under the advice: %s scheduled inspections%s; long-run cost %s %s per unit-year (undiscounted).",
			Fixed(l.InspectionsPerYear, 3), calls, v.money(l.CostPerYear), v.Currency)}
}

func pct(x float64) string {
	if math.IsNaN(x) {
		return "n/a (no inspection is ever scheduled to happen)"
	}
	return Percent(x, 2)
}

// habitLine says what the cheapest fixed interval costs against the
// advice, from the best condition.
func (v *InspectionAdvice) habitLine() string {
	if len(v.Fixed) == 0 {
		return ""
	}
	best := 0
	for i, f := range v.Fixed {
		if f.Excess[0] < v.Fixed[best].Excess[0] {
			best = i
		}
	}
	f := v.Fixed[best]
	return fmt.Sprintf("The best fixed habit is to inspect every %s: from %s it costs %s %s more in present value than the advice.",
		Duration(v.Problem.Years(f.Interval)), v.Problem.States[0], v.money(f.Excess[0]), v.Currency)
}

func (v *InspectionAdvice) solverLine() string {
	r := v.Result
	return solverText(r.Method, r.Iterations, r.Gap, r.Tol, r.Residual, r.Status, v.Currency)
}

func (v *InspectionAdvice) tieLines() []string {
	var lines []string
	p := v.Problem
	for _, t := range v.Result.Ties {
		names := make([]string, len(t.Choices))
		for i, c := range t.Choices {
			names[i] = Decision(p, p.Choices[t.State][c])
		}
		lines = append(lines, fmt.Sprintf("Tie in %s: %s are equally good within %s %s; the advice is the first (lowest action in the config, then shortest interval).",
			p.States[t.State], joinAnd(names), sci(v.Result.TieTol), v.Currency))
	}
	return lines
}

func (v *InspectionAdvice) notes() []string {
	return v.Header.notes(v.Result.Action, v.Problem.Actions, v.Warnings)
}

// LookAgain returns the content of the brief's "when to look again" page:
// the statutory rule and the limit first, the advice per condition, the
// cost of fixed intervals, the hidden-failure and inspection figures, and
// the timing and model notes.
func (v *InspectionAdvice) LookAgain() Page {
	pg := Page{Title: "When to look again", Paragraphs: []string{InspectionRule, LimitSentence(v.Problem)}}
	pg.Paragraphs = append(pg.Paragraphs, v.figureLines()...)
	if h := v.habitLine(); h != "" {
		pg.Paragraphs = append(pg.Paragraphs, h)
	}
	pg.Tables = []PageTable{v.adviceTable(), v.fixedTable()}
	pg.Notes = append([]string{InspectionTiming, v.discountLine(), v.solverLine()}, v.notes()...)
	pg.Notes = append(pg.Notes, ModelLimits)
	return pg
}

// WriteTable writes the advice per condition, the statutory rule and the
// limit, the fixed-interval comparison, the long-run figures, the timing,
// the certificate and the caution.
func (v *InspectionAdvice) WriteTable(w io.Writer) error {
	if _, err := fmt.Fprintf(w, "%s: when to look again, action and next inspection per condition\n", v.Model); err != nil {
		return err
	}
	at := v.adviceTable()
	if err := table(w, at.Header, at.Numeric, at.Rows); err != nil {
		return err
	}
	lines := []string{"STATUTORY: " + InspectionRule, LimitSentence(v.Problem), v.discountLine(), InspectionTiming, v.solverLine()}
	lines = append(lines, v.tieLines()...)
	lines = append(lines, "Margin: how much the runner-up decision's cost in that condition must fall before it becomes the advice.")
	if err := writeLines(w, lines); err != nil {
		return err
	}
	ft := v.fixedTable()
	if err := writeLines(w, []string{"", ft.Caption + ":"}); err != nil {
		return err
	}
	if err := table(w, ft.Header, ft.Numeric, ft.Rows); err != nil {
		return err
	}
	lines = append(v.figureLines(), v.habitLine())
	for _, n := range v.notes() {
		lines = append(lines, "Note: "+n)
	}
	lines = append(lines, "", "CAUTION: "+Caution)
	return writeLines(w, lines)
}

type inspectDecisionJSON struct {
	Action            string  `json:"action"`
	InspectAfter      int     `json:"inspect_after"`
	InspectAfterYears float64 `json:"inspect_after_years"`
}

type inspectChoiceJSON struct {
	inspectDecisionJSON
	Q float64 `json:"q"`
}

// inspectAdviceJSON is the advice of one state with its value and bounds.
type inspectAdviceJSON struct {
	State             string  `json:"state"`
	Unsafe            bool    `json:"unsafe"`
	Hidden            bool    `json:"hidden"`
	Action            string  `json:"action"`
	InspectAfter      int     `json:"inspect_after"`
	InspectAfterYears float64 `json:"inspect_after_years"`
	Advice            string  `json:"advice"`
	Value             float64 `json:"value"`
	Lower             float64 `json:"lower"`
	Upper             float64 `json:"upper"`
}

type inspectStateJSON struct {
	inspectAdviceJSON
	RunnerUp  *inspectDecisionJSON `json:"runner_up"`
	Margin    *float64             `json:"margin"`
	Decisions []inspectChoiceJSON  `json:"decisions"`
	Tied      []inspectChoiceJSON  `json:"tied,omitempty"`
}

type inspectLongRunJSON struct {
	Found                  map[string]float64 `json:"found"`
	PeriodsBetweenEpochs   float64            `json:"periods_between_epochs"`
	EpochsPerYear          float64            `json:"epochs_per_year"`
	InspectionsPerYear     float64            `json:"inspections_per_year"`
	CallOutsPerYear        float64            `json:"call_outs_per_year"`
	UnsafeAtEpoch          float64            `json:"unsafe_at_epoch"`
	UnsafeAtInspection     *float64           `json:"unsafe_at_inspection"`
	HiddenAtInspection     *float64           `json:"hidden_at_inspection"`
	HiddenYearsPerUnitYear float64            `json:"hidden_years_per_unit_year"`
	HiddenDaysPerUnitYear  float64            `json:"hidden_days_per_unit_year"`
	CostPerPeriod          float64            `json:"cost_per_period"`
	CostPerYear            float64            `json:"cost_per_year"`
}

type inspectFixedJSON struct {
	InspectAfter      int                 `json:"inspect_after"`
	InspectAfterYears float64             `json:"inspect_after_years"`
	Actions           map[string]string   `json:"actions"`
	Value             map[string]float64  `json:"value"`
	ExtraCost         map[string]float64  `json:"extra_cost"`
	MaxExtraCost      float64             `json:"max_extra_cost"`
	Status            string              `json:"status"`
	MaxGap            float64             `json:"max_gap"`
	LongRun           *inspectLongRunJSON `json:"long_run"`
}

type inspectPlanJSON struct {
	Cost                float64            `json:"cost"`
	DowntimeCost        float64            `json:"downtime_cost"`
	Intervals           []int              `json:"intervals"`
	AdmissibleIntervals []int              `json:"admissible_intervals"`
	ExcludedIntervals   []int              `json:"excluded_intervals"`
	MaxIntervalYears    float64            `json:"max_interval_years"`
	Hidden              []string           `json:"hidden"`
	SelfAnnouncing      []string           `json:"self_announcing"`
	RiskCost            map[string]float64 `json:"risk_cost"`
}

func (v *InspectionAdvice) longRunJSON(l *inspect.LongRun) *inspectLongRunJSON {
	if l == nil {
		return nil
	}
	found := make(map[string]float64, len(l.Found))
	for s, x := range l.Found {
		found[v.Problem.States[s]] = x
	}
	return &inspectLongRunJSON{Found: found, PeriodsBetweenEpochs: l.PeriodsBetween, EpochsPerYear: l.EpochsPerYear,
		InspectionsPerYear: l.InspectionsPerYear, CallOutsPerYear: l.CallOutsPerYear,
		UnsafeAtEpoch: l.UnsafeAtEpoch, UnsafeAtInspection: num(l.UnsafeAtInspection), HiddenAtInspection: num(l.HiddenAtInspection),
		HiddenYearsPerUnitYear: l.HiddenShare, HiddenDaysPerUnitYear: 365.25 * l.HiddenShare,
		CostPerPeriod: l.CostPerPeriod, CostPerYear: l.CostPerYear}
}

func (v *InspectionAdvice) decisionJSON(c inspect.Choice) inspectDecisionJSON {
	return inspectDecisionJSON{Action: v.Problem.Actions[c.Action], InspectAfter: c.Interval, InspectAfterYears: v.Problem.Years(c.Interval)}
}

func (v *InspectionAdvice) planJSON() inspectPlanJSON {
	p, pl := v.Problem, v.Plan
	out := inspectPlanJSON{Cost: pl.Cost, DowntimeCost: pl.Downtime, Intervals: append([]int{}, pl.Intervals...),
		AdmissibleIntervals: append([]int{}, p.Intervals...), ExcludedIntervals: append([]int{}, p.Excluded...),
		MaxIntervalYears: p.MaxIntervalYears, Hidden: append([]string{}, v.hidden()...), SelfAnnouncing: append([]string{}, v.announced()...),
		RiskCost: map[string]float64{}}
	for s, c := range pl.RiskCost {
		if c != 0 {
			out.RiskCost[p.States[s]] = c
		}
	}
	return out
}

// WriteJSON writes the advice as one JSON object (keys in the README):
// for every state the action, inspect_after (periods) and
// inspect_after_years with value, lower and upper; the fixed intervals,
// the long-run figures, the certificate, the statutory rule and the
// caution.
func (v *InspectionAdvice) WriteJSON(w io.Writer) error {
	r, p := v.Result, v.Problem
	out := struct {
		Model          string              `json:"model"`
		Currency       string              `json:"currency"`
		PeriodYears    float64             `json:"period_years"`
		DiscountRate   *float64            `json:"discount_rate"`
		DiscountFactor float64             `json:"discount_factor"`
		Method         string              `json:"method"`
		Iterations     int                 `json:"iterations"`
		Inspection     inspectPlanJSON     `json:"inspection"`
		States         []inspectStateJSON  `json:"states"`
		Fixed          []inspectFixedJSON  `json:"fixed_intervals"`
		LongRun        *inspectLongRunJSON `json:"long_run"`
		Certificate    adviceCertificate   `json:"certificate"`
		Statutory      string              `json:"statutory"`
		Limit          string              `json:"limit"`
		Timing         string              `json:"timing"`
		Notes          []string            `json:"notes,omitempty"`
		Caution        string              `json:"caution"`
	}{Model: v.Model, Currency: v.Currency, PeriodYears: v.periodYears(), DiscountFactor: p.Discount,
		Method: r.Method.String(), Iterations: r.Iterations, Inspection: v.planJSON(), LongRun: v.longRunJSON(v.LongRun),
		Certificate: adviceCertificate{MaxGap: r.Gap, BellmanResidual: r.Residual, Status: r.Status.String(), Tolerance: r.Tol, TieTolerance: r.TieTol},
		Statutory:   InspectionRule, Limit: LimitSentence(p), Timing: InspectionTiming, Notes: v.notes(), Caution: Caution,
		Fixed: []inspectFixedJSON{}}
	out.DiscountRate = v.jsonRate()
	tied := make(map[int][]int)
	for _, t := range r.Ties {
		tied[t.State] = t.Choices
	}
	for s := range p.States {
		st := inspectStateJSON{inspectAdviceJSON: stateAdviceJSON(p, r, s), Margin: num(r.Margin[s])}
		if i := r.RunnerUp[s]; i >= 0 {
			d := v.decisionJSON(p.Choices[s][i])
			st.RunnerUp = &d
		}
		for i, ch := range p.Choices[s] {
			st.Decisions = append(st.Decisions, inspectChoiceJSON{v.decisionJSON(ch), r.Q[s][i]})
		}
		for _, i := range tied[s] {
			st.Tied = append(st.Tied, inspectChoiceJSON{v.decisionJSON(p.Choices[s][i]), r.Q[s][i]})
		}
		out.States = append(out.States, st)
	}
	for i, f := range v.Fixed {
		worst, _ := worstExcess(f)
		fj := inspectFixedJSON{InspectAfter: f.Interval, InspectAfterYears: p.Years(f.Interval), Actions: map[string]string{},
			Value: map[string]float64{}, ExtraCost: map[string]float64{}, MaxExtraCost: worst,
			Status: f.Result.Status.String(), MaxGap: f.Result.Gap, LongRun: v.longRunJSON(v.FixedLongRun[i])}
		for s, name := range p.States {
			fj.Actions[name] = p.Actions[f.Result.Action[s]]
			fj.Value[name] = f.Result.Value[s]
			fj.ExtraCost[name] = f.Excess[s]
		}
		out.Fixed = append(out.Fixed, fj)
	}
	return writeJSON(w, out)
}

// WriteCSV writes the comment lines (caution, what the numbers are, the
// statutory rule, the limit, the long-run figures, notes), then one row
// per condition: state, unsafe, hidden, action, inspect_after,
// inspect_after_years, value, lower, upper, runner_up,
// runner_up_inspect_after, margin and extra_cost_every_<k>_periods for
// every admissible interval k (what inspecting every k periods costs
// against the advice from that condition). Numbers have six decimals.
func (v *InspectionAdvice) WriteCSV(w io.Writer) error {
	r, p := v.Result, v.Problem
	if err := v.writeCSVPreamble(w, "expected discounted cost (present value) from an inspection"); err != nil {
		return err
	}
	comments := []string{"statutory: " + InspectionRule, "limit: " + LimitSentence(p)}
	for _, l := range v.figureLines() {
		comments = append(comments, "long run: "+l)
	}
	for _, c := range comments {
		if _, err := fmt.Fprintf(w, "# %s\n", c); err != nil {
			return err
		}
	}
	if err := writeCSVNotes(w, v.notes()); err != nil {
		return err
	}
	cw := newCSV(w)
	header := []string{"state", "unsafe", "hidden", "action", "inspect_after", "inspect_after_years", "value", "lower", "upper",
		"runner_up", "runner_up_inspect_after", "margin"}
	for _, f := range v.Fixed {
		header = append(header, fmt.Sprintf("extra_cost_every_%d_periods", f.Interval))
	}
	cw.Write(header)
	for s := range p.States {
		c := p.Choices[s][r.Policy[s]]
		runner, runnerK, margin := "", "", ""
		if i := r.RunnerUp[s]; i >= 0 {
			rc := p.Choices[s][i]
			runner, runnerK, margin = p.Actions[rc.Action], strconv.Itoa(rc.Interval), Fixed(r.Margin[s], 6)
		}
		row := []string{p.States[s], strconv.FormatBool(p.Unsafe[s]), strconv.FormatBool(p.Hidden[s]), p.Actions[c.Action],
			strconv.Itoa(c.Interval), Fixed(p.Years(c.Interval), 6), Fixed(r.Value[s], 6), Fixed(r.Lower[s], 6), Fixed(r.Upper[s], 6),
			runner, runnerK, margin}
		for _, f := range v.Fixed {
			row = append(row, Fixed(f.Excess[s], 6))
		}
		cw.Write(row)
	}
	cw.Flush()
	return cw.Error()
}
