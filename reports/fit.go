package reports

import (
	"fmt"
	"io"
	"math"
	"regexp"
	"slices"
	"strconv"
	"strings"

	"fixpoint/condition"
)

// FitReport presents transition rows estimated from inspection records.
type FitReport struct {
	Source    string
	States    []string
	Unsafe    []bool
	Passive   int
	Fit       *condition.Fit
	Bootstrap int
	Seed      uint64
	Level     float64
	// Rough is the number of transitions below which a row is flagged as
	// resting on too little data.
	Rough int
	// Model is the class config's model, nil without one: rows it does not
	// admit are not listed among the rows without data.
	Model *condition.Model
}

// Rounded returns the row rounded to six decimals with the largest entry
// adjusted so that the printed numbers sum to exactly 1.
func Rounded(p []float64) []float64 {
	out := make([]float64, len(p))
	sum, big := 0.0, 0
	for j, x := range p {
		out[j] = math.Round(x*1e6) / 1e6
		sum += out[j]
		if out[j] > out[big] {
			big = j
		}
	}
	out[big] = math.Round((out[big]+1-sum)*1e6) / 1e6
	return out
}

// Writable reports whether row s of action a may go into a class config:
// the passive action never has a row in an unsafe state.
func (f *FitReport) Writable(a, s int) bool {
	return !(a == f.Passive && f.Unsafe != nil && f.Unsafe[s])
}

func (f *FitReport) level() string { return strconv.FormatFloat(100*f.Level, 'f', -1, 64) + "%" }

// noData lists the states whose row of action a has no data although it
// could be estimated: admissible in the config (when there is one) and
// not a passive row of an unsafe state.
func (f *FitReport) noData(a int) []string {
	var out []string
	ai := a
	if f.Model != nil {
		ai = f.Model.ActionIndex(f.Fit.Actions[a])
	}
	for s, r := range f.Fit.Rows[a] {
		if r != nil || !f.Writable(a, s) || (f.Model != nil && (ai < 0 || !f.Model.Actions[ai].Admissible(s))) {
			continue
		}
		out = append(out, f.States[s])
	}
	return out
}

// generatorNoData lists the states whose generator row has no data.
func (f *FitReport) generatorNoData() []string {
	out := []string{}
	for s, row := range f.Fit.Generator {
		if row == nil {
			out = append(out, f.States[s])
		}
	}
	return out
}

// zeroWidth is the width below which an interval reads as zero in the
// tables, which show three decimals.
const zeroWidth = 0.0005

// warnings returns the fit's warnings and notes on intervals of zero
// width: a bootstrap interval that does not show any uncertainty is never
// shown without saying so.
func (f *FitReport) warnings() []condition.Warning {
	out := slices.Clone(f.Fit.Warnings)
	if f.Bootstrap == 0 {
		return out
	}
	var edge, inner []string
	for a, rows := range f.Fit.Rows {
		for s, r := range rows {
			if r == nil {
				continue
			}
			for j, p := range r.P {
				if math.IsNaN(r.Lower[j]) || r.Upper[j]-r.Lower[j] >= zeroWidth {
					continue
				}
				entry := f.Fit.Actions[a] + " " + f.States[s] + "→" + f.States[j]
				if p < zeroWidth || p > 1-zeroWidth {
					edge = append(edge, entry)
				} else {
					inner = append(inner, entry)
				}
			}
		}
	}
	if len(edge) > 0 {
		out = append(out, condition.Warning{Message: fmt.Sprintf("%s at 0 or 1 %s %s intervals of zero width (%s): "+
			"every replicate left them at 0 or 1, as it does an entry seen in none or all of its row's transitions, so these intervals show no uncertainty; "+
			"for an entry seen in none of n transitions the exact binomial upper bound at this level is 1 − (%s)^(1/n), about %s/n (Clopper & Pearson, Biometrika 26, 1934, from memory)",
			entries(len(edge)), have(len(edge)), f.level(), firstOf(edge), strconv.FormatFloat((1-f.Level)/2, 'g', 3, 64), Fixed(-math.Log((1-f.Level)/2), 1))})
	}
	if len(inner) > 0 {
		out = append(out, condition.Warning{Message: fmt.Sprintf("%s between 0 and 1 %s %s intervals of zero width (%s): "+
			"every replicate gave the same value, as happens when a row's transitions come from one unit or a few alike, so these intervals show no uncertainty",
			entries(len(inner)), have(len(inner)), f.level(), firstOf(inner))})
	}
	return out
}

func entries(n int) string {
	if n == 1 {
		return "1 entry"
	}
	return strconv.Itoa(n) + " entries"
}

func have(n int) string {
	if n == 1 {
		return "has"
	}
	return "have"
}

// firstOf lists the first five names, with "and M more".
func firstOf(names []string) string {
	const shown = 5
	if len(names) <= shown {
		return strings.Join(names, ", ")
	}
	return strings.Join(names[:shown], ", ") + fmt.Sprintf(" and %d more", len(names)-shown)
}

func (f *FitReport) header() []string {
	fit := f.Fit
	lines := []string{fmt.Sprintf("Estimated from %s by the %s method; one period = %s.", f.Source, fit.Method, Years(fit.PeriodYears))}
	if f.Bootstrap > 0 {
		lines = append(lines, fmt.Sprintf("%s intervals: percentile bootstrap over units, %s, seed %d.", f.level(), nouns(f.Bootstrap, "replicate", "replicates"), f.Seed))
	}
	g := fit.Fit
	if g.Skipped != "" {
		return append(lines, "Goodness of fit: "+g.Skipped+".")
	}
	pv := "n/a"
	if !math.IsNaN(g.PValue) {
		pv = strconv.FormatFloat(g.PValue, 'g', 3, 64)
	}
	lines = append(lines, fmt.Sprintf("Goodness of fit: G = %s on %s, p = %s (observed against predicted counts by action, condition, interval length and half of the record).",
		Fixed(g.Statistic, 2), nouns(g.DF, "degree of freedom", "degrees of freedom"), pv))
	return lines
}

// roughNote flags a row resting on few transitions.
func (f *FitReport) roughNote(r *condition.RowEstimate) string {
	if r.N < f.Rough {
		return "ROUGH: only " + nouns(r.N, "transition", "transitions")
	}
	return ""
}

// WriteTable writes one table per action: from-state, n, ESS, and each
// probability with its interval; then the warnings and the caution.
func (f *FitReport) WriteTable(w io.Writer) error {
	fit := f.Fit
	if err := writeLines(w, f.header()); err != nil {
		return err
	}
	for a, rows := range fit.Rows {
		header := []string{"from", "n", "ESS"}
		numeric := []bool{false, true, true}
		for _, s := range f.States {
			header = append(header, s)
			numeric = append(numeric, true)
		}
		header = append(header, "note")
		numeric = append(numeric, false)
		var body [][]string
		for s, r := range rows {
			if r == nil {
				continue
			}
			row := []string{f.States[s], strconv.Itoa(r.N), Fixed(r.ESS, 0)}
			for j, p := range r.P {
				cell := Fixed(p, 3)
				if !math.IsNaN(r.Lower[j]) {
					cell += fmt.Sprintf(" [%s, %s]", Fixed(r.Lower[j], 3), Fixed(r.Upper[j], 3))
				}
				row = append(row, cell)
			}
			body = append(body, append(row, f.roughNote(r)))
		}
		missing := f.noData(a)
		if len(body) == 0 {
			if len(missing) > 0 {
				fmt.Fprintf(w, "\nAction %s: no data (no transitions recorded with it); no row estimated.\n", fit.Actions[a])
			}
			continue
		}
		fmt.Fprintf(w, "\nAction %s: one-period transition probabilities", fit.Actions[a])
		if f.Bootstrap > 0 {
			fmt.Fprintf(w, " [%s interval]", f.level())
		}
		fmt.Fprintln(w)
		if err := table(w, header, numeric, body); err != nil {
			return err
		}
		if len(missing) > 0 {
			if err := writeLines(w, []string{"No data from " + strings.Join(missing, ", ") + ": no row estimated."}); err != nil {
				return err
			}
		}
	}
	if fit.Generator != nil {
		fmt.Fprintln(w, "\nGenerator of the passive action (rates per year):")
		header := append([]string{"from"}, f.States...)
		numeric := append([]bool{false}, make([]bool, len(f.States))...)
		for i := range numeric[1:] {
			numeric[i+1] = true
		}
		var body [][]string
		for i, row := range fit.Generator {
			if row == nil {
				continue
			}
			cells := []string{f.States[i]}
			for _, x := range row {
				cells = append(cells, Fixed(x, 4))
			}
			body = append(body, cells)
		}
		if err := table(w, header, numeric, body); err != nil {
			return err
		}
		if missing := f.generatorNoData(); len(missing) > 0 {
			if err := writeLines(w, []string{"No data from " + strings.Join(missing, ", ") + ": no interval without recorded work starts there, so no rate out of it is estimated."}); err != nil {
				return err
			}
		}
	}
	lines := []string{}
	if warn := f.warnings(); len(warn) > 0 {
		lines = append(lines, "", fmt.Sprintf("Data problems (%d):", len(warn)))
		for _, wn := range warn {
			lines = append(lines, warningText(wn))
		}
	}
	lines = append(lines, "", "CAUTION: "+Caution)
	return writeLines(w, lines)
}

func warningText(w condition.Warning) string {
	if w.Line > 0 {
		return fmt.Sprintf("line %d: %s", w.Line, w.Message)
	}
	return w.Message
}

type fitRowJSON struct {
	N             int                `json:"n"`
	ESS           float64            `json:"ess"`
	ExposureYears float64            `json:"exposure_years"`
	P             map[string]float64 `json:"p"`
	Lower         map[string]float64 `json:"lower"`
	Upper         map[string]float64 `json:"upper"`
	Rough         bool               `json:"rough"`
}

type fitActionJSON struct {
	Rows   map[string]*fitRowJSON `json:"rows"`
	NoData []string               `json:"no_data"`
}

type fitJSON struct {
	Method          string                        `json:"method"`
	PeriodYears     float64                       `json:"period_years"`
	Actions         map[string]*fitActionJSON     `json:"actions"`
	Generator       map[string]map[string]float64 `json:"generator"`
	GeneratorNoData *[]string                     `json:"generator_no_data,omitempty"`
	Fit             struct {
		Statistic *float64 `json:"statistic"`
		DF        int      `json:"df"`
		PValue    *float64 `json:"p_value"`
		Skipped   string   `json:"skipped,omitempty"`
	} `json:"fit"`
	Counts    map[string]map[string]map[string]int `json:"counts"`
	Bootstrap int                                  `json:"bootstrap"`
	Seed      uint64                               `json:"seed"`
	Level     float64                              `json:"level"`
	Warnings  []fitWarning                         `json:"warnings"`
	Caution   string                               `json:"caution"`
}

type fitWarning struct {
	Line    int    `json:"line"`
	Message string `json:"message"`
}

// WriteJSON writes the estimate (keys in the README): per action the
// rows with data and, in no_data, the states whose row has none (scale
// order); generator rows without data are left out of generator and
// listed in generator_no_data; without bootstrap the interval maps are
// empty; a skipped goodness-of-fit test has a null statistic and its
// reason in skipped.
func (f *FitReport) WriteJSON(w io.Writer) error {
	fit := f.Fit
	out := fitJSON{Method: fit.Method.String(), PeriodYears: fit.PeriodYears,
		Actions: map[string]*fitActionJSON{}, Counts: map[string]map[string]map[string]int{},
		Bootstrap: f.Bootstrap, Seed: f.Seed, Level: f.Level, Warnings: []fitWarning{}, Caution: Caution}
	for a, rows := range fit.Rows {
		name := fit.Actions[a]
		if missing := f.noData(a); len(missing) > 0 {
			out.Actions[name] = &fitActionJSON{Rows: map[string]*fitRowJSON{}, NoData: missing}
		}
		for s, r := range rows {
			if r == nil {
				continue
			}
			if out.Actions[name] == nil {
				out.Actions[name] = &fitActionJSON{Rows: map[string]*fitRowJSON{}, NoData: []string{}}
			}
			if out.Counts[name] == nil {
				out.Counts[name] = map[string]map[string]int{}
			}
			jr := &fitRowJSON{N: r.N, ESS: r.ESS, ExposureYears: r.ExposureYears, P: map[string]float64{},
				Lower: map[string]float64{}, Upper: map[string]float64{}, Rough: r.N < f.Rough}
			counts := map[string]int{}
			for j, p := range r.P {
				jr.P[f.States[j]] = p
				if !math.IsNaN(r.Lower[j]) {
					jr.Lower[f.States[j]], jr.Upper[f.States[j]] = r.Lower[j], r.Upper[j]
				}
				if c := fit.Counts[a][s][j]; c > 0 {
					counts[f.States[j]] = c
				}
			}
			out.Actions[name].Rows[f.States[s]] = jr
			out.Counts[name][f.States[s]] = counts
		}
	}
	if fit.Generator != nil {
		out.Generator = map[string]map[string]float64{}
		missing := f.generatorNoData()
		out.GeneratorNoData = &missing
		for i, row := range fit.Generator {
			if row == nil {
				continue
			}
			out.Generator[f.States[i]] = map[string]float64{}
			for j, x := range row {
				out.Generator[f.States[i]][f.States[j]] = x
			}
		}
	}
	out.Fit.Statistic, out.Fit.DF, out.Fit.PValue, out.Fit.Skipped = num(fit.Fit.Statistic), fit.Fit.DF, num(fit.Fit.PValue), fit.Fit.Skipped
	for _, wn := range f.warnings() {
		out.Warnings = append(out.Warnings, fitWarning{wn.Line, wn.Message})
	}
	return writeJSON(w, out)
}

var plainKey = regexp.MustCompile(`^[A-Za-z_][A-Za-z0-9_-]*$`)

// YAMLKey quotes a name for YAML unless it is a plain identifier.
func YAMLKey(s string) string {
	if plainKey.MatchString(s) && s != "true" && s != "false" && s != "null" && s != "yes" && s != "no" {
		return s
	}
	return strconv.Quote(s)
}

// FlowRow writes a row as a YAML flow mapping of its non-zero entries,
// rounded so that they sum to exactly 1.
func (f *FitReport) FlowRow(p []float64) string {
	parts := []string{}
	for j, x := range Rounded(p) {
		if x != 0 {
			parts = append(parts, YAMLKey(f.States[j])+": "+strconv.FormatFloat(x, 'f', -1, 64))
		}
	}
	return "{" + strings.Join(parts, ", ") + "}"
}

// RowComment is the comment written after a row: counts, effective sample
// size and interval widths.
func (f *FitReport) RowComment(a, s int) string {
	r := f.Fit.Rows[a][s]
	var b strings.Builder
	fmt.Fprintf(&b, "n=%d ESS=%s", r.N, Fixed(r.ESS, 0))
	if f.Bootstrap > 0 {
		var widths []string
		for j, p := range r.P {
			if p > 0 || r.Upper[j] > 0 {
				widths = append(widths, fmt.Sprintf("%s %s", f.States[j], Fixed(r.Upper[j]-r.Lower[j], 3)))
			}
		}
		fmt.Fprintf(&b, "; %s interval widths: %s", f.level(), strings.Join(widths, ", "))
	}
	if note := f.roughNote(r); note != "" {
		b.WriteString("; " + note + ", treat as a rough guide")
	}
	return b.String()
}

// WriteYAML writes, for each action with records, a transitions: block in
// map form ready to paste into a class config, with counts and interval
// widths as comments; then, for the counting estimator, an uncertainty:
// block with the number of transitions behind each row written
// (observations, for solve --robust).
func (f *FitReport) WriteYAML(w io.Writer) error {
	var b strings.Builder
	for _, line := range f.header() {
		b.WriteString("# " + line + "\n")
	}
	b.WriteString("# CAUTION: " + Caution + "\n")
	for a, rows := range f.Fit.Rows {
		any := false
		missing := f.noData(a)
		for s, r := range rows {
			if r == nil {
				continue
			}
			if !any {
				fmt.Fprintf(&b, "\n# action %s: paste under its entry in actions:\n", f.Fit.Actions[a])
				b.WriteString("transitions:\n")
				any = true
			}
			if !f.Writable(a, s) {
				fmt.Fprintf(&b, "  # %s: left out: units were left alone in this unsafe state (%s); the passive action is never admissible there\n",
					YAMLKey(f.States[s]), f.RowComment(a, s))
				continue
			}
			fmt.Fprintf(&b, "  %s: %s  # %s\n", YAMLKey(f.States[s]), f.FlowRow(r.P), f.RowComment(a, s))
		}
		switch {
		case len(missing) == 0:
		case any:
			fmt.Fprintf(&b, "  # no data from %s: no row estimated\n", strings.Join(missing, ", "))
		default:
			fmt.Fprintf(&b, "\n# action %s: no data (no transitions recorded with it); no row estimated\n", f.Fit.Actions[a])
		}
	}
	f.writeObservations(&b)
	if warn := f.warnings(); len(warn) > 0 {
		fmt.Fprintf(&b, "\n# Data problems (%d):\n", len(warn))
		for _, wn := range warn {
			b.WriteString("#   " + warningText(wn) + "\n")
		}
	}
	_, err := io.WriteString(w, b.String())
	return err
}

// writeObservations writes the uncertainty: block of the rows written by
// WriteYAML: the transitions behind each, which size robust advice's
// ambiguity sets. Only counting estimates are counts of one-period
// transitions; for a generator fit it says why there is no block.
func (f *FitReport) writeObservations(b *strings.Builder) {
	if f.Fit.Method != condition.Counting {
		b.WriteString("\n# no uncertainty.observations: a generator estimate is not a count of one-period transitions,\n" +
			"# so the confidence bounds of solve --robust do not apply to it\n")
		return
	}
	var lines []string
	for a, rows := range f.Fit.Rows {
		var parts []string
		for s, r := range rows {
			if r != nil && f.Writable(a, s) {
				parts = append(parts, fmt.Sprintf("%s: %d", YAMLKey(f.States[s]), r.N))
			}
		}
		if len(parts) > 0 {
			lines = append(lines, fmt.Sprintf("    %s: {%s}\n", YAMLKey(f.Fit.Actions[a]), strings.Join(parts, ", ")))
		}
	}
	if len(lines) == 0 {
		return
	}
	b.WriteString("\n# transitions behind each row above (n), for solve --robust: paste at the top level of the config\n" +
		"# and add confidence: 0.9 (or run solve --robust-confidence 0.9) to size each row's ambiguity set from them\n")
	b.WriteString("uncertainty:\n  observations:\n")
	for _, l := range lines {
		b.WriteString(l)
	}
}
