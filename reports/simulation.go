package reports

import (
	"fixpoint/optimize/fleet"
	"fmt"
	"io"
	"strconv"
)

// SimulationReport presents a Monte-Carlo of a fleet.
type SimulationReport struct {
	Model    string
	Currency string
	Fleet    *fleet.Problem
	Sim      *fleet.Simulation
	// Follow is "plan" or "advice".
	Follow string
	Seed   uint64
}

func band(q fleet.Quantiles, decimals int) string {
	return fmt.Sprintf("%s [%s, %s]", Money(q.P50, decimals), Money(q.P10, decimals), Money(q.P90, decimals))
}

// WriteTable writes the spend per year (median, P10 and P90, mean against
// the expected-count forecast) and, for up to five classes, the units per
// condition, then the caution.
func (r *SimulationReport) WriteTable(w io.Writer) error {
	s := r.Sim
	what := "the budget plan"
	if r.Follow == "advice" {
		what = "the unconstrained advice"
	}
	fmt.Fprintf(w, "%s: %d simulated futures under %s (seed %d); median [P10, P90]\n", r.Model, s.Runs, what, r.Seed)
	var rows [][]string
	for t := range s.Spend {
		rows = append(rows, []string{strconv.Itoa(t + 1), band(s.Spend[t], 0), Money(s.Spend[t].Mean, 0), Money(s.ExpectedSpend[t], 0), band(s.Total[t], 0)})
	}
	if err := table(w, []string{"year", "work spend (" + r.Currency + ")", "mean", "expected", "with running costs"},
		[]bool{true, true, true, true, true}, rows); err != nil {
		return err
	}
	if len(r.Fleet.Classes) <= 5 {
		for c, fc := range r.Fleet.Classes {
			fmt.Fprintf(w, "\nUnits of %s per condition at the start of each year, median [P10, P90]:\n", fc.Name)
			if err := mixTable(w, fc.Model.States, len(s.Spend), func(t, i int) string { return band(s.Units[c][t][i], 0) }); err != nil {
				return err
			}
		}
	}
	return writeLines(w, []string{"", "Mean: the Monte-Carlo mean; expected: the expected-count forecast of the same rule.", "CAUTION: " + Caution})
}

type quantJSON struct {
	Mean float64 `json:"mean"`
	SE   float64 `json:"se"`
	P10  float64 `json:"p10"`
	P50  float64 `json:"p50"`
	P90  float64 `json:"p90"`
}

func qj(q fleet.Quantiles) quantJSON { return quantJSON{q.Mean, q.SE, q.P10, q.P50, q.P90} }

// WriteJSON writes {"runs", "seed", "follow", "years": [{"year", "spend",
// "total", "expected_spend", "units": {class: {state: {mean, se, p10, p50,
// p90}}}}], "caution"}.
func (r *SimulationReport) WriteJSON(w io.Writer) error {
	s := r.Sim
	type year struct {
		Year          int                             `json:"year"`
		Spend         quantJSON                       `json:"spend"`
		Total         quantJSON                       `json:"total"`
		ExpectedSpend float64                         `json:"expected_spend"`
		Units         map[string]map[string]quantJSON `json:"units"`
		Expected      map[string]map[string]float64   `json:"expected_units"`
	}
	out := struct {
		Model   string `json:"model"`
		Runs    int    `json:"runs"`
		Seed    uint64 `json:"seed"`
		Follow  string `json:"follow"`
		Years   []year `json:"years"`
		Caution string `json:"caution"`
	}{Model: r.Model, Runs: s.Runs, Seed: r.Seed, Follow: r.Follow, Caution: Caution}
	for t := range s.Spend {
		y := year{Year: t + 1, Spend: qj(s.Spend[t]), Total: qj(s.Total[t]), ExpectedSpend: s.ExpectedSpend[t],
			Units: map[string]map[string]quantJSON{}, Expected: map[string]map[string]float64{}}
		for c, fc := range r.Fleet.Classes {
			y.Units[fc.Name] = map[string]quantJSON{}
			y.Expected[fc.Name] = map[string]float64{}
			for st, q := range s.Units[c][t] {
				y.Units[fc.Name][fc.Model.States[st].Name] = qj(q)
				y.Expected[fc.Name][fc.Model.States[st].Name] = s.ExpectedUnits[c][t][st]
			}
		}
		out.Years = append(out.Years, y)
	}
	return writeJSON(w, out)
}

// WriteCSV writes a caution comment line, then one row per year and
// quantity: year, quantity (spend, total, or class/state units), mean, se,
// p10, p50, p90.
func (r *SimulationReport) WriteCSV(w io.Writer) error {
	s := r.Sim
	if _, err := fmt.Fprintf(w, "# %s\n", Caution); err != nil {
		return err
	}
	cw := newCSV(w)
	cw.Write([]string{"year", "quantity", "mean", "se", "p10", "p50", "p90"})
	row := func(t int, name string, q fleet.Quantiles) {
		cw.Write([]string{strconv.Itoa(t + 1), name, Fixed(q.Mean, 4), Fixed(q.SE, 4), Fixed(q.P10, 4), Fixed(q.P50, 4), Fixed(q.P90, 4)})
	}
	for t := range s.Spend {
		row(t, "spend", s.Spend[t])
		row(t, "total", s.Total[t])
		for c, fc := range r.Fleet.Classes {
			for st, q := range s.Units[c][t] {
				row(t, "units:"+fc.Name+":"+fc.Model.States[st].Name, q)
			}
		}
	}
	cw.Flush()
	return cw.Error()
}
