package reports

import (
	"fmt"
	"io"
	"math"
	"strings"
)

// num returns a pointer to x, or nil when x is not finite (JSON null).
func num(x float64) *float64 {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return nil
	}
	return &x
}

// periodsText formats a passage time in periods, with years when a period
// is not one year: "12.5", "25.0 (12.5 y)", "never", "n/a".
func periodsText(x, periodYears float64) string {
	switch {
	case math.IsNaN(x):
		return "n/a"
	case math.IsInf(x, 1):
		return "never"
	case periodYears == 1:
		return Fixed(x, 1)
	}
	return fmt.Sprintf("%s (%s y)", Fixed(x, 1), Fixed(x*periodYears, 1))
}

func (a *Advice) targetName() string {
	var names []string
	for s, t := range a.Life.Target {
		if t {
			names = append(names, a.Problem.States[s])
		}
	}
	return joinOr(names)
}

// writeLife writes the life-cycle section of the advice table.
func (a *Advice) writeLife(w io.Writer) error {
	l := a.Life
	target := a.targetName()
	unit := "periods"
	if a.periodYears() == 1 {
		unit = "years"
	}
	fmt.Fprintf(w, "\nLife of a unit (first reaching %s; expected %s):\n", target, unit)
	header := []string{"condition", "left alone", "under the advice", "long-run share"}
	rows := make([][]string, len(a.Problem.States))
	for s := range rows {
		left := "n/a"
		if l.Passive != nil {
			left = periodsText(l.Passive.Periods[s], a.periodYears())
		}
		share := "n/a"
		if l.Stationary != nil {
			share = Percent(l.Stationary[s], 1)
		}
		rows[s] = []string{a.stateLabel(s), left, periodsText(l.Policy.Periods[s], a.periodYears()), share}
	}
	if err := table(w, header, []bool{false, true, true, true}, rows); err != nil {
		return err
	}
	if err := writeLines(w, a.lifeLines()); err != nil {
		return err
	}
	return a.writeSurvival(w)
}

// survivalYears are the years at which the survival table samples the
// curves, as far as the horizon reaches.
var survivalYears = []float64{1, 2, 5, 10, 15, 20, 30, 50, 75, 100}

// writeSurvival tabulates the survival curves from the best state.
func (a *Advice) writeSurvival(w io.Writer) error {
	l := a.Life
	best := a.Problem.States[0]
	fmt.Fprintf(w, "\nSurvival of a unit starting %s: probability that it has not yet reached %s\n", best, a.targetName())
	passive := l.Passive != nil && !math.IsNaN(l.Passive.Periods[0])
	header := []string{"after", "left alone", "under the advice"}
	var rows [][]string
	for _, y := range survivalYears {
		k := int(math.Round(y / a.periodYears()))
		if k > l.Horizon || k < 1 {
			continue
		}
		left := "n/a"
		if passive {
			left = Percent(l.PassiveSurvival[0][k], 1)
		}
		rows = append(rows, []string{Years(float64(k) * a.periodYears()), left, Percent(l.PolicySurvival[0][k], 1)})
	}
	return table(w, header, []bool{true, true, true}, rows)
}

func (a *Advice) lifeLines() []string {
	l := a.Life
	cur := a.Currency
	var lines []string
	if l.Stationary == nil {
		return append(lines, "Long run: "+l.StationaryErr.Error()+"; long-run figures are left out.")
	}
	line := fmt.Sprintf("Long run under the advice: %s %s per year on average (undiscounted", a.money(l.CostPerYear), cur)
	if a.periodYears() != 1 {
		line += fmt.Sprintf("; %s per period", a.money(l.CostPerPeriod))
	}
	line += ")"
	if eac := l.EquivalentAnnual[0]; !math.IsNaN(eac) {
		line += fmt.Sprintf("; equivalent annual cost of a unit starting %s: %s %s per year", a.Problem.States[0], a.money(eac), cur)
	}
	lines = append(lines, line+".")
	lines = append(lines, fmt.Sprintf("Expected share of units in unsafe states: %s.", Percent(l.UnsafeShare, 2)))
	var uses []string
	for act, share := range l.ActionShare {
		if share > 0 && !a.isPassive(act) {
			uses = append(uses, fmt.Sprintf("%s every %s", a.Problem.Actions[act], periodsWord(l.PeriodsBetween[act], a.periodYears())))
		}
	}
	if len(uses) > 0 {
		lines = append(lines, "Mean time between uses: "+strings.Join(uses, ", ")+".")
	}
	return lines
}

func periodsWord(x, periodYears float64) string {
	if periodYears == 1 {
		return Fixed(x, 1) + " years"
	}
	return fmt.Sprintf("%s periods (%s years)", Fixed(x, 1), Fixed(x*periodYears, 1))
}

func (a *Advice) isPassive(act int) bool { return act == a.Passive }

type lifeJSON struct {
	Target                string               `json:"target"`
	PeriodsToWorstPassive map[string]*float64  `json:"periods_to_worst_passive"`
	PeriodsToWorstPolicy  map[string]*float64  `json:"periods_to_worst_policy"`
	YearsToWorstPassive   map[string]*float64  `json:"years_to_worst_passive"`
	YearsToWorstPolicy    map[string]*float64  `json:"years_to_worst_policy"`
	Stationary            map[string]float64   `json:"stationary"`
	StationaryNote        string               `json:"stationary_note,omitempty"`
	LongRunCostPerPeriod  *float64             `json:"long_run_cost_per_period"`
	LongRunCostPerYear    *float64             `json:"long_run_cost_per_year"`
	EquivalentAnnualCost  map[string]*float64  `json:"equivalent_annual_cost"`
	UnsafeShare           *float64             `json:"unsafe_share"`
	PeriodsBetween        map[string]*float64  `json:"periods_between"`
	SurvivalPassive       map[string][]float64 `json:"survival_passive,omitempty"`
	SurvivalPolicy        map[string][]float64 `json:"survival_policy"`
}

func (a *Advice) lifeJSON() *lifeJSON {
	l := a.Life
	if l == nil {
		return nil
	}
	p := a.Problem
	out := &lifeJSON{
		Target:                a.targetName(),
		PeriodsToWorstPassive: map[string]*float64{}, PeriodsToWorstPolicy: map[string]*float64{},
		YearsToWorstPassive: map[string]*float64{}, YearsToWorstPolicy: map[string]*float64{},
		Stationary: map[string]float64{}, EquivalentAnnualCost: map[string]*float64{},
		LongRunCostPerPeriod: num(l.CostPerPeriod), LongRunCostPerYear: num(l.CostPerYear),
		UnsafeShare: num(l.UnsafeShare), PeriodsBetween: map[string]*float64{},
		SurvivalPolicy: map[string][]float64{},
	}
	for s, name := range p.States {
		if l.Passive != nil && !math.IsNaN(l.Passive.Periods[s]) {
			out.PeriodsToWorstPassive[name] = num(l.Passive.Periods[s])
			out.YearsToWorstPassive[name] = num(l.Passive.Periods[s] * a.periodYears())
		}
		if !math.IsNaN(l.Policy.Periods[s]) {
			out.PeriodsToWorstPolicy[name] = num(l.Policy.Periods[s])
			out.YearsToWorstPolicy[name] = num(l.Policy.Periods[s] * a.periodYears())
		}
		if l.Stationary != nil {
			out.Stationary[name] = l.Stationary[s]
		}
		out.EquivalentAnnualCost[name] = num(l.EquivalentAnnual[s])
		out.SurvivalPolicy[name] = l.PolicySurvival[s]
		if l.PassiveSurvival != nil && l.Passive != nil && !math.IsNaN(l.Passive.Periods[s]) {
			if out.SurvivalPassive == nil {
				out.SurvivalPassive = map[string][]float64{}
			}
			out.SurvivalPassive[name] = l.PassiveSurvival[s]
		}
	}
	if l.StationaryErr != nil {
		out.StationaryNote = l.StationaryErr.Error()
	}
	for act, name := range p.Actions {
		out.PeriodsBetween[name] = num(l.PeriodsBetween[act])
	}
	return out
}
