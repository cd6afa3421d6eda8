package main

import (
	"archive/zip"
	"bytes"
	"encoding/json"
	"fmt"
	"html"
	"io"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"runtime"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"

	"fixpoint/reports"
)

// workbookTol is the relative tolerance of a workbook number against the
// JSON output of the same run: the workbook keeps 15 significant digits
// (excelize's rounding, and what a spreadsheet keeps), JSON all 17.
const workbookTol = 1e-9

// jsonRun runs a command with --format json and decodes its output.
func jsonRun(t *testing.T, args ...string) map[string]any {
	t.Helper()
	code, stdout, stderr := runCLI(t, append(slices.Clone(args), "--format", "json")...)
	if code != 0 {
		t.Fatalf("%v --format json: exit %d: %s", args, code, stderr)
	}
	var out map[string]any
	if err := json.Unmarshal([]byte(stdout), &out); err != nil {
		t.Fatalf("%v: %v", args, err)
	}
	return out
}

// workbookRun runs a command with -o FILE.xlsx and returns the file.
func workbookRun(t *testing.T, args ...string) string {
	t.Helper()
	path := filepath.Join(t.TempDir(), "out.xlsx")
	code, stdout, stderr := runCLI(t, append(slices.Clone(args), "-o", path)...)
	if code != 0 {
		t.Fatalf("%v -o %s: exit %d: %s", args, path, code, stderr)
	}
	if stdout != "" {
		t.Errorf("%v -o %s wrote to stdout: %q", args, path, stdout)
	}
	return path
}

func openWorkbook(t *testing.T, path string) *excelize.File {
	t.Helper()
	f, err := excelize.OpenFile(path)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { f.Close() })
	return f
}

// sheetTable reads the table of a sheet: the headings (row 3) and the
// rows below them up to the first empty row, numbers as float64 and
// text as string, empty cells nil.
func sheetTable(t *testing.T, f *excelize.File, sheet string) ([]string, [][]any) {
	t.Helper()
	rows, err := f.GetRows(sheet, excelize.Options{RawCellValue: true})
	if err != nil {
		t.Fatalf("sheet %q: %v", sheet, err)
	}
	if len(rows) < 3 {
		t.Fatalf("sheet %q has %d rows, want the caution, a title and headings", sheet, len(rows))
	}
	head := rows[2]
	var out [][]any
	for r := 3; r < len(rows) && len(rows[r]) > 0; r++ {
		row := make([]any, len(head))
		for c, v := range rows[r] {
			if c >= len(row) {
				t.Fatalf("%s row %d: %d cells, more than the %d headings", sheet, r+1, len(rows[r]), len(head))
			}
			if v == "" {
				continue
			}
			ref, _ := excelize.CoordinatesToCellName(c+1, r+1)
			typ, err := f.GetCellType(sheet, ref)
			if err != nil {
				t.Fatal(err)
			}
			row[c] = v
			if typ == excelize.CellTypeNumber || typ == excelize.CellTypeUnset {
				x, err := strconv.ParseFloat(v, 64)
				if err != nil {
					t.Fatalf("%s!%s = %q is not a number: %v", sheet, ref, v, err)
				}
				row[c] = x
			}
		}
		out = append(out, row)
	}
	return head, out
}

// sameCell reports whether a workbook cell holds want: the same text, or
// a number within workbookTol relative; nil is an empty cell.
func sameCell(got, want any) bool {
	switch w := want.(type) {
	case float64:
		g, ok := got.(float64)
		return ok && math.Abs(g-w) <= workbookTol*math.Abs(w)
	case int:
		g, ok := got.(float64)
		return ok && g == float64(w)
	case bool:
		return got == map[bool]string{true: "yes", false: "no"}[w]
	}
	return got == want
}

// checkTable compares every cell of a sheet's table with want, built from
// the JSON output.
func checkTable(t *testing.T, f *excelize.File, sheet string, want [][]any) []string {
	t.Helper()
	head, got := sheetTable(t, f, sheet)
	if len(got) != len(want) {
		t.Errorf("%s: %d rows, want %d", sheet, len(got), len(want))
	}
	for r := range min(len(got), len(want)) {
		if len(want[r]) != len(head) {
			t.Fatalf("%s row %d: the test wants %d cells for %d headings %q", sheet, r+firstRow, len(want[r]), len(head), head)
		}
		for c := range want[r] {
			if !sameCell(got[r][c], want[r][c]) {
				ref, _ := excelize.CoordinatesToCellName(c+1, r+firstRow)
				t.Errorf("%s!%s (%s) = %v, want %v (rel tol %g)", sheet, ref, head[c], got[r][c], want[r][c], workbookTol)
			}
		}
	}
	return head
}

// firstRow is the row of a table's first data row.
const firstRow = 4

// checkFacts compares the figures of a Summary or Assumptions sheet
// (item, value) with want; items not in want are not checked.
func checkFacts(t *testing.T, f *excelize.File, sheet string, want map[string]any) {
	t.Helper()
	_, rows := sheetTable(t, f, sheet)
	got := map[string]any{}
	for _, r := range rows {
		got[r[0].(string)] = r[1]
	}
	for _, item := range slices.Sorted(mapKeys(want)) {
		g, ok := got[item]
		if !ok {
			t.Errorf("%s: no figure %q", sheet, item)
			continue
		}
		if !sameCell(g, want[item]) {
			t.Errorf("%s %q = %v, want %v (rel tol %g)", sheet, item, g, want[item], workbookTol)
		}
	}
}

func mapKeys[V any](m map[string]V) func(func(string) bool) {
	return func(yield func(string) bool) {
		for k := range m {
			if !yield(k) {
				return
			}
		}
	}
}

// Small accessors of decoded JSON.
func obj(v any) map[string]any { m, _ := v.(map[string]any); return m }
func arr(v any) []any          { a, _ := v.([]any); return a }
func str(v any) string         { s, _ := v.(string); return s }
func numOrNil(v any) any {
	if v == nil {
		return nil
	}
	return v
}

// passageCell is how the workbook shows a passage time of the JSON: a
// number, "never" (JSON null: infinite) or "n/a" (no key: not defined).
func passageCell(m map[string]any, key string) any {
	v, ok := m[key]
	switch {
	case !ok:
		return "n/a"
	case v == nil:
		return "never"
	}
	return v
}

// headsAfter returns the names in the headings from index i on, with
// the suffix cut.
func headsAfter(head []string, i int, suffix string) []string {
	var out []string
	for _, h := range head[i:] {
		out = append(out, strings.TrimSuffix(h, suffix))
	}
	return out
}

// checkAdviceSheet checks the Advice sheet of a class: per state the
// cells lead gives, then the Q-value of every action named in the
// headings after them. It returns the actions.
func checkAdviceSheet(t *testing.T, f *excelize.File, js map[string]any, lead func(st map[string]any) []any) []string {
	t.Helper()
	head, _ := sheetTable(t, f, "Advice")
	states := arr(js["states"])
	actions := headsAfter(head, len(lead(obj(states[0]))), " now, then the advice ("+str(js["currency"])+")")
	var want [][]any
	for _, s := range states {
		st := obj(s)
		row := lead(st)
		for _, a := range actions {
			row = append(row, numOrNil(obj(st["q"])[a]))
		}
		want = append(want, row)
	}
	checkTable(t, f, "Advice", want)
	return actions
}

func checkAdvice(t *testing.T, f *excelize.File, js map[string]any) {
	cur := str(js["currency"])
	actions := checkAdviceSheet(t, f, js, func(st map[string]any) []any {
		return []any{st["state"], st["unsafe"], st["action"], st["value"], st["lower"], st["upper"], st["runner_up"], numOrNil(st["margin"])}
	})

	life := obj(js["life"])
	states := arr(js["states"])
	best := str(obj(states[0])["state"])
	facts := map[string]any{
		"long-run cost per year under the advice (" + cur + ", undiscounted)":           life["long_run_cost_per_year"],
		"long-run cost per period under the advice (" + cur + ", undiscounted)":         life["long_run_cost_per_period"],
		"share of units in unsafe states":                                               life["unsafe_share"],
		"equivalent annual cost of a unit starting " + best + " (" + cur + " per year)": obj(life["equivalent_annual_cost"])[best],
	}
	for _, a := range actions[1:] { // every action used but the passive one
		if x, ok := obj(life["periods_between"])[a].(float64); ok && !math.IsNaN(x) {
			facts["mean time between uses of "+a+" (periods)"] = x
		}
	}
	checkFacts(t, f, "Summary", facts)

	py := js["period_years"].(float64)
	var want [][]any
	for _, s := range states {
		name := str(obj(s)["state"])
		row := []any{name, passageCell(obj(life["periods_to_worst_passive"]), name), passageCell(obj(life["periods_to_worst_policy"]), name)}
		if py != 1 {
			row = append(row, passageCell(obj(life["years_to_worst_passive"]), name), passageCell(obj(life["years_to_worst_policy"]), name))
		}
		want = append(want, append(row, obj(life["stationary"])[name]))
	}
	checkTable(t, f, "Life", want)

	want = nil
	passive := arr(obj(life["survival_passive"])[best])
	for k, x := range arr(obj(life["survival_policy"])[best]) {
		left := any("n/a")
		if passive != nil {
			left = passive[k]
		}
		want = append(want, []any{k, float64(k) * py, left, x})
	}
	checkTable(t, f, "Survival", want)

	cert := obj(js["certificate"])
	checkFacts(t, f, "Assumptions", map[string]any{
		"period (years)": py, "discount rate per year": js["discount_rate"], "discount factor per period": js["discount_factor"],
		"proven gap (" + cur + ")": cert["max_gap"], "tolerance (" + cur + ")": cert["tolerance"],
		"Bellman residual (" + cur + ")": cert["bellman_residual"], "model": js["model"],
		"thresholds": js["thresholds"], "caution": reports.Caution, "model limits": reports.ModelLimits,
	})
}

func checkAverage(t *testing.T, f *excelize.File, js map[string]any) {
	cur := str(js["currency"])
	checkAdviceSheet(t, f, js, func(st map[string]any) []any {
		return []any{st["state"], st["unsafe"], st["action"], st["bias"], st["runner_up"], numOrNil(st["margin"])}
	})
	checkFacts(t, f, "Summary", map[string]any{
		"long-run average cost per year (" + cur + ")":   js["gain_per_year"],
		"proven lower bound per year (" + cur + ")":      js["gain_lower_per_year"],
		"proven upper bound per year (" + cur + ")":      js["gain_upper_per_year"],
		"long-run average cost per period (" + cur + ")": js["gain_per_period"],
		"proven lower bound per period (" + cur + ")":    js["gain_lower"],
		"proven upper bound per period (" + cur + ")":    js["gain_upper"],
	})
	checkFacts(t, f, "Assumptions", map[string]any{
		"period (years)": js["period_years"],
		"proven gap of the gain per period (" + cur + ")": js["gain_upper"].(float64) - js["gain_lower"].(float64),
	})
}

// coords splits a joint state or action name "a=x,b=y" into x, y.
func coords(name string) []any {
	var out []any
	for _, part := range strings.Split(name, ",") {
		_, v, _ := strings.Cut(part, "=")
		out = append(out, v)
	}
	return out
}

func checkSystem(t *testing.T, f *excelize.File, js map[string]any) {
	cur := str(js["currency"])
	var want [][]any
	for _, s := range arr(js["states"]) {
		st := obj(s)
		row := append([]any{st["state"]}, coords(str(st["state"]))...)
		row = append(append(row, st["action"]), coords(str(st["action"]))...)
		want = append(want, append(row, st["value"], st["lower"], st["upper"], st["runner_up"], numOrNil(st["margin"])))
	}
	checkTable(t, f, "Joint advice", want)
	first := obj(arr(js["states"])[0])
	checkFacts(t, f, "Summary", map[string]any{
		"expected cost of a machine starting as new (" + cur + ", present value)": first["value"],
		"proven lower bound (" + cur + ")":                                        first["lower"],
		"proven upper bound (" + cur + ")":                                        first["upper"],
		"planning the components separately (" + cur + ", present value)":         js["separate_value"],
		"saving of joint planning (" + cur + ", present value)":                   js["joint_saving_present_value"],
		"saving of joint planning (" + cur + " per year)":                         js["joint_saving_per_year"],
	})
	cert := obj(js["certificate"])
	checkFacts(t, f, "Assumptions", map[string]any{
		"discount rate per year": js["discount_rate"], "discount factor per period": js["discount_factor"],
		"proven gap (" + cur + ")": cert["max_gap"], "tolerance (" + cur + ")": cert["tolerance"],
		"Bellman residual at the estimate (" + cur + ")": cert["bellman_residual"], "rules": js["thresholds"],
	})
	_, rules := sheetTable(t, f, "Components")
	if len(rules) != len(arr(js["components"])) {
		t.Errorf("Components: %d rows, want %d", len(rules), len(arr(js["components"])))
	}
	for _, r := range rules {
		if rule := str(r[0]) + " alone: " + str(r[1]); !strings.Contains(str(js["thresholds"]), rule) {
			t.Errorf("Components: %q is not in the JSON rules %q", rule, js["thresholds"])
		}
	}
}

func checkCompare(t *testing.T, f *excelize.File, js map[string]any) {
	inflation := js["inflation"] != nil
	lead := func(r map[string]any) []any {
		if inflation {
			return []any{r["nominal_rate"], r["rate"], r["discount_factor"]}
		}
		return []any{r["rate"], r["discount_factor"]}
	}
	var advice, values [][]any
	rates := arr(js["rates"])
	for _, x := range rates {
		r := obj(x)
		a, v := lead(r), lead(r)
		for _, s := range arr(r["states"]) {
			st := obj(s)
			a = append(a, st["action"])
			if st["value"] == nil {
				v = append(v, "unbounded")
			} else {
				v = append(v, st["value"])
			}
		}
		var changed []string
		for _, c := range arr(r["changed"]) {
			changed = append(changed, str(c))
		}
		ch := any(nil)
		if len(changed) > 0 {
			ch = strings.Join(changed, ", ")
		}
		advice = append(advice, append(a, r["equivalent_annual_cost"], ch))
		values = append(values, append(v, r["equivalent_annual_cost"]))
	}
	checkTable(t, f, "Advice by rate", advice)
	checkTable(t, f, "Present value by rate", values)
	var switches [][]any
	for _, x := range arr(js["switch_points"]) {
		s := obj(x)
		row := []any{s["rate"]}
		if inflation {
			row = append(row, s["nominal_rate"])
		}
		switches = append(switches, append(row, s["state"], s["from"], s["to"], s["text"]))
	}
	checkTable(t, f, "Switch points", switches)
	cur := str(js["currency"])
	if avg := obj(js["average"]); avg != nil {
		checkFacts(t, f, "Summary", map[string]any{
			"long-run average cost per year (" + cur + ")":   avg["gain_per_year"],
			"proven lower bound per year (" + cur + ")":      avg["lower"],
			"proven upper bound per year (" + cur + ")":      avg["upper"],
			"long-run average cost per period (" + cur + ")": avg["gain_per_period"],
			"certificate": avg["status"],
		})
	}
	// The sampled curve runs from the smallest to the largest rate compared
	// and meets the EAC there.
	_, curve := sheetTable(t, f, "EAC chart")
	if len(curve) < 2 {
		t.Fatalf("EAC chart: %d points", len(curve))
	}
	for _, end := range []struct{ got, want []any }{{curve[0], []any{obj(rates[0])["rate"], obj(rates[0])["equivalent_annual_cost"]}},
		{curve[len(curve)-1], []any{obj(rates[len(rates)-1])["rate"], obj(rates[len(rates)-1])["equivalent_annual_cost"]}}} {
		for i := range end.want {
			if !sameCell(end.got[i], end.want[i]) && math.Abs(end.got[i].(float64)-end.want[i].(float64)) > 1e-9 {
				t.Errorf("EAC chart: end point %v, want %v", end.got, end.want)
			}
		}
	}
	checkFacts(t, f, "Assumptions", map[string]any{"period (years)": js["period_years"]})
}

func checkSensitivity(t *testing.T, f *excelize.File, js map[string]any) {
	var margins [][]any
	for _, x := range arr(js["margins"]) {
		m := obj(x)
		margins = append(margins, []any{m["state"], m["advice"], m["action"], m["margin"]})
	}
	checkTable(t, f, "Margins", margins)
	limit := func(v any) any {
		if v == nil {
			return "no limit"
		}
		return v
	}
	change := func(v any) any {
		c := obj(v)
		if c == nil {
			return "none"
		}
		return fmt.Sprintf("%s: %s -> %s", c["state"], c["from"], c["to"])
	}
	var ranges [][]any
	for _, x := range arr(js["figures"]) {
		g := obj(x)
		ranges = append(ranges, []any{g["figure"], g["path"], g["value"], limit(g["lower"]), limit(g["upper"]), change(g["below"]), change(g["above"])})
	}
	checkTable(t, f, "Cost ranges", ranges)
}

func checkForecast(t *testing.T, f *excelize.File, js map[string]any) {
	cur := str(js["currency"])
	periods := arr(js["periods"])
	py := js["period_years"].(float64)
	head, _ := sheetTable(t, f, "Units per period")
	states := head[2:]
	var units [][]any
	for _, x := range periods {
		p := obj(x)
		row := []any{p["period"], p["year"]}
		for _, s := range states {
			row = append(row, obj(p["counts"])[s])
		}
		units = append(units, row)
	}
	final := []any{len(periods), float64(len(periods)) * py}
	for _, s := range states {
		final = append(final, obj(js["final_counts"])[s])
	}
	checkTable(t, f, "Units per period", append(units, final))

	head, _ = sheetTable(t, f, "Spend per period")
	actions := headsAfter(head[:len(head)-2], 2, " ("+cur+")")
	var spend [][]any
	for _, x := range periods {
		p := obj(x)
		row := []any{p["period"], p["year"]}
		for _, a := range actions {
			row = append(row, obj(p["action_spend"])[a])
		}
		spend = append(spend, append(row, p["running_cost"], p["total_spend"]))
	}
	checkTable(t, f, "Spend per period", spend)

	// By year, summed here from the periods of the JSON: period k belongs
	// to the calendar year in which it starts, floor(k·period); a year in
	// which no period starts keeps the counts of the one it lies in.
	years := int(math.Floor(float64(len(periods))*py + 1e-9))
	var byYear [][]any
	for y := range years {
		row := []any{y, 0}
		counts := make([]float64, len(states))
		sums := make([]float64, len(actions)+2)
		n := 0
		for k, x := range periods {
			p := obj(x)
			if int(math.Floor(float64(k)*py+1e-9)) != y {
				continue
			}
			if n == 0 {
				for i, s := range states {
					counts[i] = obj(p["counts"])[s].(float64)
				}
			}
			n++
			for i, a := range actions {
				sums[i] += obj(p["action_spend"])[a].(float64)
			}
			sums[len(actions)] += p["running_cost"].(float64)
			sums[len(actions)+1] += p["total_spend"].(float64)
		}
		if n == 0 {
			prev := byYear[y-1]
			for i := range counts {
				counts[i] = prev[2+i].(float64)
			}
		}
		row[1] = n
		for _, c := range counts {
			row = append(row, c)
		}
		for _, s := range sums {
			row = append(row, s)
		}
		byYear = append(byYear, row)
	}
	checkTable(t, f, "By year", byYear)
	checkFacts(t, f, "Summary", map[string]any{
		fmt.Sprintf("present value of the spend over %d periods (%s)", len(periods), cur): js["present_value"],
		"discount factor per period (1: undiscounted)":                                    js["discount_factor"],
		"periods": len(periods),
	})
	checkFacts(t, f, "Assumptions", map[string]any{"period (years)": py})
}

// chartRefs returns the cell references of every chart of a workbook,
// chart by chart.
func chartRefs(t *testing.T, path string) [][]string {
	t.Helper()
	zr, err := zip.OpenReader(path)
	if err != nil {
		t.Fatal(err)
	}
	defer zr.Close()
	re := regexp.MustCompile(`<(?:c:)?f>([^<]+)</(?:c:)?f>`)
	var out [][]string
	for _, zf := range zr.File {
		if !strings.HasPrefix(zf.Name, "xl/charts/chart") {
			continue
		}
		rc, err := zf.Open()
		if err != nil {
			t.Fatal(err)
		}
		data, _ := io.ReadAll(rc)
		rc.Close()
		var refs []string
		for _, m := range re.FindAllStringSubmatch(string(data), -1) {
			refs = append(refs, html.UnescapeString(m[1]))
		}
		out = append(out, refs)
	}
	return out
}

// checkCharts checks that the workbook has charts native charts and that
// every reference in them names a sheet of the workbook and cells that
// hold data (text for a series name, numbers for its values).
func checkCharts(t *testing.T, path string, f *excelize.File, charts int) {
	t.Helper()
	all := chartRefs(t, path)
	if len(all) != charts {
		t.Errorf("%d charts, want %d", len(all), charts)
	}
	re := regexp.MustCompile(`^'([^']+)'!\$([A-Z]+)\$(\d+)(?::\$([A-Z]+)\$(\d+))?$`)
	for i, refs := range all {
		if len(refs) == 0 {
			t.Errorf("chart %d has no cell references", i+1)
		}
		for _, ref := range refs {
			m := re.FindStringSubmatch(ref)
			if m == nil {
				t.Errorf("chart %d: reference %q is not a sheet range", i+1, ref)
				continue
			}
			from, _ := strconv.Atoi(m[3])
			to := from
			if m[5] != "" {
				to, _ = strconv.Atoi(m[5])
			}
			for r := from; r <= to; r++ {
				v, err := f.GetCellValue(m[1], fmt.Sprintf("%s%d", m[2], r))
				if err != nil || v == "" {
					t.Errorf("chart %d: %s: %s%d is empty (%v)", i+1, ref, m[2], r, err)
					break
				}
				if from != to {
					if typ, _ := f.GetCellType(m[1], fmt.Sprintf("%s%d", m[2], r)); typ != excelize.CellTypeNumber && typ != excelize.CellTypeUnset {
						t.Errorf("chart %d: %s: %s%d = %q is not a number", i+1, ref, m[2], r, v)
						break
					}
				}
			}
		}
	}
}

// variant writes a copy of a demo config with replacements applied.
func variant(t *testing.T, from string, replace ...string) string {
	t.Helper()
	data, err := os.ReadFile(from)
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(t.TempDir(), filepath.Base(from))
	if err := os.WriteFile(path, []byte(strings.NewReplacer(replace...).Replace(string(data))), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// workbookCases are the commands whose workbooks are checked against
// their JSON output, with the sheets each must have and its charts.
func workbookCases(t *testing.T) []struct {
	name   string
	args   []string
	sheets []string
	charts int
	check  func(*testing.T, *excelize.File, map[string]any)
} {
	twoYears := variant(t, demo, "period_years: 1", "period_years: 2")
	yen := variant(t, demo, "currency: EUR", "currency: JPY")
	average := variant(t, demo, "currency: EUR", "currency: EUR\ncriterion: average")
	// Names a spreadsheet would take for formulas (OWASP, "CSV
	// Injection", lists = + - @ as the characters that start one).
	formulaNames := variant(t, demo, `"Kestrel Valley booster pumps (invented demo)"`, `'=HYPERLINK("http://example.invalid","open me")'`,
		"sound", `"+sound"`, "heavy_wear", `"@heavy_wear"`, "critical", `"-critical"`)
	advice := []string{"Advice", "Summary", "Life", "Survival", "Assumptions"}
	compare := []string{"Advice by rate", "Present value by rate", "Switch points", "Summary", "EAC chart", "Assumptions"}
	forecast := []string{"Units per period", "Spend per period", "By year", "Charts", "Summary", "Assumptions"}
	plan := []string{"By year", "Work list", "By period", "Shares", "Expected units", "Condition mix", "Charts", "Summary", "Assumptions"}
	planInspections := append(slices.Clone(plan[:6]), "Inspections", "Charts", "Summary", "Assumptions")
	inspection := []string{"Advice", "Decisions", "Fixed intervals", "Summary", "Assumptions"}
	calendar := []string{"By year", "Advice", "Charts", "Summary", "Assumptions"}
	robust := []string{"Robust advice", "Settle", "Sets", "Summary", "Assumptions"}
	yenValves := variant(t, reliefValves, "currency: EUR", "currency: JPY")
	formulaValves := variant(t, reliefValves, `"Kestrel Valley pressure relief valves (invented demo)"`, `'=HYPERLINK("http://example.invalid","open me")'`,
		"stuck", `"@stuck"`, "good", `"+good"`, "passing", `"-passing"`)
	planRates := []string{"Bounds by rate", "Planned spend", "Mandatory spend", "Deferred units", "Budget price", "Assumptions"}
	simulation := []string{"By year", "Units per period", "Charts", "Summary", "Assumptions"}
	return []struct {
		name   string
		args   []string
		sheets []string
		charts int
		check  func(*testing.T, *excelize.File, map[string]any)
	}{
		{"solve", []string{"solve", demo}, advice, 1, checkAdvice},
		{"solve/half-year", []string{"solve", "testdata/accents.yaml"}, advice, 1, checkAdvice},
		{"solve/yen", []string{"solve", yen}, advice, 1, checkAdvice},
		{"solve/formula-names", []string{"solve", formulaNames}, advice, 1, checkAdvice},
		{"solve/average", []string{"solve", demo, "--criterion", "average"}, []string{"Advice", "Summary", "Assumptions"}, 0, checkAverage},
		{"solve/system", []string{"solve", demoSystem}, []string{"Components", "Grouping", "Joint advice", "Summary", "Assumptions"}, 0, checkSystem},
		{"solve/inspection", []string{"solve", reliefValves}, inspection, 0, checkInspectionAdvice},
		{"solve/inspection-yen", []string{"solve", yenValves}, inspection, 0, checkInspectionAdvice},
		{"solve/inspection-formula-names", []string{"solve", formulaValves}, inspection, 0, checkInspectionAdvice},
		{"solve/robust", []string{"solve", demo, "--robust-radius", "0.5"}, robust, 0, checkRobust},
		{"solve/robust-yen", []string{"solve", yen, "--robust-radius", "0.1"}, robust, 0, checkRobust},
		{"solve/robust-confidence", []string{"solve", fittedDemo, "--robust-confidence", "0.9"}, robust, 0, checkRobust},
		{"solve/robust-kl", []string{"solve", fittedDemo, "--robust-confidence", "0.9", "--robust-set", "kl"}, robust, 0, checkRobust},
		{"solve/robust-formula-names", []string{"solve", formulaNames, "--robust-radius", "0.5"}, robust, 0, checkRobust},
		{"compare", []string{"compare", demo, "--rates", "0%:30%:5%"}, compare, 1, checkCompare},
		{"compare/inflation", []string{"compare", demo, "--rates", "4%,6%,9%,12%", "--inflation", "2.5%"}, compare, 1, checkCompare},
		{"sensitivity", []string{"sensitivity", demo}, []string{"Margins", "Cost ranges", "Assumptions"}, 0, checkSensitivity},
		{"forecast", []string{"forecast", demo, "--from", "sound", "--units", "40", "--years", "12"}, forecast, 2, checkForecast},
		{"forecast/half-year", []string{"forecast", "testdata/accents.yaml", "--from", "état neuf", "--years", "6"}, forecast, 2, checkForecast},
		{"forecast/two-year", []string{"forecast", twoYears, "--mix", "sound=60,light_wear=30,heavy_wear=10", "--years", "20"}, forecast, 2, checkForecast},
		{"forecast/average", []string{"forecast", average, "--from", "sound"}, forecast, 2, checkForecast},
		{"forecast/inspection", []string{"forecast", reliefValves, "--from", "good", "--units", "50", "--years", "8"}, calendar, 2, checkInspectionCalendar},
		{"forecast/inspection-formula-names", []string{"forecast", formulaValves, "--from", "+good", "--units", "20"}, calendar, 2, checkInspectionCalendar},
		{"forecast/inspection-mix", []string{"forecast", reliefValves, "--mix", "good=30,sluggish=15,stuck=5", "--years", "12"}, calendar, 2, checkInspectionCalendar},
		{"plan", []string{"plan", demoFleet, "--simulate", "200"}, plan, 5, checkPlan},
		{"plan/mandatory-first", []string{"plan", demoFleet, "--budget", "0", "--simulate", "0"}, plan, 4, checkPlan},
		{"plan/inspections", []string{"plan", "../../configs/relief-fleet.yaml", "--simulate", "200"}, planInspections, 4, checkPlan},
		{"plan/formula-names", []string{"plan", formulaFleet(t), "--simulate", "50"}, plan, 5, checkPlan},
		{"plan/rates", []string{"plan", demoFleet, "--rates", "3%,5%,7%"}, planRates, 0, checkPlanRates},
		{"plan/rates-changed", []string{"plan", demoFleet, "--rates", "3%,7%,12%"}, planRates, 0, checkPlanRatesChanged},
		{"forecast/simulate", []string{"forecast", demoFleet, "--simulate", "200"}, simulation, 1, checkSimulation},
		{"forecast/simulate-practice", []string{"forecast", demoFleet, "--simulate", "100", "--follow", "practice"}, simulation, 1, checkSimulation},
	}
}

// Every workbook holds the numbers of the JSON output of the same run,
// cell by cell (every number within 1e-9 relative), its sheets in order,
// the caution on each, and charts whose references hold the data.
func TestWorkbooksMatchJSON(t *testing.T) {
	for _, tc := range workbookCases(t) {
		t.Run(tc.name, func(t *testing.T) {
			js := jsonRun(t, tc.args...)
			path := workbookRun(t, tc.args...)
			f := openWorkbook(t, path)
			if got := f.GetSheetList(); !slices.Equal(got, tc.sheets) {
				t.Fatalf("sheets %q, want %q", got, tc.sheets)
			}
			for _, s := range tc.sheets {
				if got, _ := f.GetCellValue(s, "A1"); got != "CAUTION: "+reports.Caution {
					t.Errorf("%s!A1 = %q, want the caution", s, got)
				}
			}
			tc.check(t, f, js)
			checkCharts(t, path, f, tc.charts)
		})
	}
}

// readByOpenpyxl is run by Debian's python3 with openpyxl: for every
// workbook named after the mark's tint, every sheet's name, frozen cell,
// number of charts, the cells of its first rows (type, value, number
// format), those of them bold on the tint, and how many cells anywhere
// hold a formula.
const readByOpenpyxl = `
import json, sys, openpyxl
out = []
for path in sys.argv[2:]:
    wb = openpyxl.load_workbook(path)
    sheets = []
    for ws in wb.worksheets:
        cells, formulas, marked = {}, 0, []
        for row in ws.iter_rows():
            for c in row:
                if c.data_type == "f":
                    formulas += 1
                if c.row <= 12 and c.value is not None:
                    v = float(c.value) if c.data_type == "n" else str(c.value)
                    cells[c.coordinate] = [c.data_type, v, c.number_format]
                    if c.font.b and c.fill.fill_type == "solid" and str(c.fill.fgColor.rgb).upper().endswith(sys.argv[1]):
                        marked.append(c.coordinate)
        sheets.append({"name": ws.title, "freeze": ws.freeze_panes, "charts": len(ws._charts), "cells": cells, "formulas": formulas, "marked": marked})
    out.append(sheets)
json.dump(out, sys.stdout)
`

// openpyxl returns Debian's python3 when it has openpyxl (package
// python3-openpyxl), skipping without it unless CI=true. It is called by
// path: another python on PATH (pyenv) does not see Debian's packages.
func openpyxl(t *testing.T) string {
	t.Helper()
	const python = "/usr/bin/python3"
	if err := exec.Command(python, "-c", "import openpyxl").Run(); err != nil {
		missing(t, "openpyxl for "+python, "python3-openpyxl")
	}
	return python
}

type openpyxlSheet struct {
	Name     string
	Freeze   *string
	Charts   int
	Cells    map[string][3]any
	Formulas int
	Marked   []string
}

// A second reader outside the project (openpyxl) opens every workbook:
// the same sheets in the same order, the caution as text on each, frozen
// headings, the charts, no formula anywhere, and the same cells as
// excelize reads (text as text, numbers as numbers with their format).
func TestWorkbooksSecondReader(t *testing.T) {
	python := openpyxl(t)
	cases := workbookCases(t)
	paths := make([]string, len(cases))
	for i, tc := range cases {
		paths[i] = workbookRun(t, tc.args...)
	}
	out, err := exec.Command(python, append([]string{"-c", readByOpenpyxl, markTint}, paths...)...).Output()
	if err != nil {
		var stderr string
		if ee, ok := err.(*exec.ExitError); ok {
			stderr = string(ee.Stderr)
		}
		t.Fatalf("openpyxl: %v\n%s", err, stderr)
	}
	var books [][]openpyxlSheet
	if err := json.Unmarshal(out, &books); err != nil {
		t.Fatal(err)
	}
	for i, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			f := openWorkbook(t, paths[i])
			var names []string
			charts := 0
			for _, sh := range books[i] {
				names = append(names, sh.Name)
				charts += sh.Charts
				if sh.Formulas != 0 {
					t.Errorf("openpyxl: sheet %s has %d formula cells, want none", sh.Name, sh.Formulas)
				}
				wantFreeze := "A4"
				if sh.Name == "Charts" {
					wantFreeze = "A3"
				}
				if sh.Freeze == nil || *sh.Freeze != wantFreeze {
					t.Errorf("openpyxl: sheet %s frozen at %v, want %s", sh.Name, sh.Freeze, wantFreeze)
				}
				if a1 := sh.Cells["A1"]; a1[0] != "s" || a1[1] != "CAUTION: "+reports.Caution {
					t.Errorf("openpyxl: %s!A1 = %v, want the caution as text", sh.Name, a1)
				}
				for _, ref := range slices.Sorted(mapKeys(sh.Cells)) {
					c := sh.Cells[ref]
					if want := markedCell(t, f, sh.Name, ref); slices.Contains(sh.Marked, ref) != want {
						t.Errorf("%s!%s: openpyxl sees it marked %v, excelize %v", sh.Name, ref, !want, want)
					}
					raw, err := f.GetCellValue(sh.Name, ref, excelize.Options{RawCellValue: true})
					if err != nil {
						t.Fatal(err)
					}
					switch c[0] {
					case "n":
						x, _ := c[1].(float64)
						if !sameCell(x, mustFloat(t, raw)) {
							t.Errorf("%s!%s: openpyxl reads %v, excelize %s", sh.Name, ref, c[1], raw)
						}
					case "s":
						if c[1] != raw {
							t.Errorf("%s!%s: openpyxl reads %q, excelize %q", sh.Name, ref, c[1], raw)
						}
					default:
						t.Errorf("%s!%s: openpyxl cell type %q, want n or s", sh.Name, ref, c[0])
					}
				}
			}
			if !slices.Equal(names, tc.sheets) {
				t.Errorf("openpyxl: sheets %q, want %q", names, tc.sheets)
			}
			if charts != tc.charts {
				t.Errorf("openpyxl: %d charts, want %d", charts, tc.charts)
			}
		})
	}
	// Spot checks of what the workbooks say, read by openpyxl alone.
	byName := map[string][]openpyxlSheet{}
	for i, tc := range cases {
		byName[tc.name] = books[i]
	}
	value := func(book, sheet, ref string) [3]any {
		for _, sh := range byName[book] {
			if sh.Name == sheet {
				return sh.Cells[ref]
			}
		}
		t.Fatalf("%s: no sheet %s", book, sheet)
		return [3]any{}
	}
	js := jsonRun(t, "solve", demo)
	first := obj(arr(js["states"])[0])
	for _, tc := range []struct {
		book, sheet, ref string
		want             [3]any
	}{
		{"solve", "Advice", "A4", [3]any{"s", first["state"], "General"}},
		{"solve", "Advice", "D4", [3]any{"n", first["value"], "#,##0.00"}},
		{"solve/yen", "Advice", "D4", [3]any{"n", nil, "#,##0"}},
		{"solve/formula-names", "Advice", "A2", [3]any{"s", `=HYPERLINK("http://example.invalid","open me"): advice per condition (present value of expected costs, EUR)`, "General"}},
		{"solve/formula-names", "Advice", "A4", [3]any{"s", "+sound", "General"}},
		{"solve/formula-names", "Advice", "A6", [3]any{"s", "@heavy_wear", "General"}},
		{"solve/formula-names", "Advice", "A7", [3]any{"s", "-critical", "General"}},
		{"compare", "Advice by rate", "A5", [3]any{"n", 0.05, "0.00%"}},
		{"forecast", "Units per period", "C4", [3]any{"n", 40.0, "#,##0.00"}},
		{"plan", "By year", "B4", [3]any{"n", 60000.0, "#,##0.00"}},
		{"plan", "By year", "F4", [3]any{"n", nil, "#,##0.000"}},
		{"plan/mandatory-first", "By year", "C4", [3]any{"s", "mandatory only", "General"}},
		{"plan/formula-names", "Work list", "A4", [3]any{"s", "+pumps", "General"}},
		{"plan/formula-names", "Expected units", "B4", [3]any{"s", "+pumps", "General"}},
		{"plan/formula-names", "Expected units", "C4", [3]any{"s", "-sound", "General"}},
		{"plan/formula-names", "Expected units", "C6", [3]any{"s", "@heavy_wear", "General"}},
		{"plan/rates-changed", "Bounds by rate", "A6", [3]any{"n", 0.12, "0.00%"}},
		{"forecast/simulate", "By year", "I4", [3]any{"n", nil, "0.00%"}},
		{"solve/inspection", "Advice", "F4", [3]any{"n", nil, "0"}},
		{"solve/inspection", "Advice", "H4", [3]any{"n", nil, "#,##0.00"}},
		{"solve/inspection-yen", "Advice", "H4", [3]any{"n", nil, "#,##0"}},
		{"solve/inspection-yen", "Fixed intervals", "D5", [3]any{"n", nil, "#,##0"}},
		{"forecast/inspection", "By year", "I4", [3]any{"n", nil, "#,##0.00"}},
		{"solve/robust", "Robust advice", "D4", [3]any{"n", nil, "#,##0.00"}},
		{"solve/robust-yen", "Robust advice", "D4", [3]any{"n", nil, "#,##0"}},
		{"solve/robust-confidence", "Summary", "B6", [3]any{"n", 0.9, "0.00%"}},
		{"solve/robust-formula-names", "Robust advice", "A4", [3]any{"s", "+sound", "General"}},
		{"solve/robust-formula-names", "Robust advice", "A6", [3]any{"s", "@heavy_wear", "General"}},
		{"plan", "Condition mix", "B4", [3]any{"n", nil, "0.00%"}},
		{"solve/inspection-formula-names", "Advice", "A4", [3]any{"s", "+good", "General"}},
		{"solve/inspection-formula-names", "Advice", "A6", [3]any{"s", "@stuck", "General"}},
		{"solve/inspection-formula-names", "Advice", "A7", [3]any{"s", "-passing", "General"}},
		{"solve/inspection-formula-names", "Fixed intervals", "D3", [3]any{"s", "extra cost from +good (EUR)", "General"}},
		{"forecast/inspection-formula-names", "Advice", "A4", [3]any{"s", "+good", "General"}},
		{"forecast/inspection-formula-names", "By year", "A2", [3]any{"s", `=HYPERLINK("http://example.invalid","open me"): expected inspections and spend per calendar year ` +
			"under the inspection advice (20.00 units, every one inspected at the start of year 1; EUR, undiscounted)", "General"}},
	} {
		got := value(tc.book, tc.sheet, tc.ref)
		if got[0] != tc.want[0] || got[2] != tc.want[2] || tc.want[1] != nil && !sameCell(got[1], tc.want[1]) {
			t.Errorf("openpyxl: %s %s!%s = %v, want %v", tc.book, tc.sheet, tc.ref, got, tc.want)
		}
	}
}

func mustFloat(t *testing.T, s string) float64 {
	t.Helper()
	x, err := strconv.ParseFloat(s, 64)
	if err != nil {
		t.Fatalf("%q is not a number: %v", s, err)
	}
	return x
}

// The same command gives the same workbook, byte for byte: twice, and
// with one or four threads (the system solve runs workers).
func TestWorkbooksDeterministic(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	for _, tc := range workbookCases(t) {
		t.Run(tc.name, func(t *testing.T) {
			var first []byte
			for _, procs := range []int{1, 4, 4} {
				runtime.GOMAXPROCS(procs)
				data, err := os.ReadFile(workbookRun(t, tc.args...))
				if err != nil {
					t.Fatal(err)
				}
				if first == nil {
					first = data
				} else if !bytes.Equal(first, data) {
					t.Errorf("GOMAXPROCS %d: the workbook differs from the first (%d and %d bytes)", procs, len(first), len(data))
				}
			}
		})
	}
}

// A workbook goes to a file; commands or kinds without one say so.
func TestWorkbookUsage(t *testing.T) {
	dir := t.TempDir()
	tests := []struct {
		args []string
		code int
		want string
	}{
		{[]string{"solve", demo, "--format", "xlsx"}, exitUsage, "give -o FILE.xlsx"},
		{[]string{"compare", demo, "--rates", "2%,4%", "--format", "xlsx", "-o", "-"}, exitUsage, "give -o FILE.xlsx"},
		{[]string{"solve", demo, "--format", "xlsx", "-o", filepath.Join(dir, "advice.csv")}, exitUsage, "contradicts the output file"},
		{[]string{"plan", demoFleet, "--format", "xlsx"}, exitUsage, "give -o FILE.xlsx"},
		{[]string{"forecast", demoFleet, "--simulate", "10", "--format", "xlsx", "-o", filepath.Join(dir, "sim.csv")}, exitUsage, "contradicts the output file"},
		{[]string{"plan", demoFleet, "--rates", "3%,5%", "--format", "csv", "-o", filepath.Join(dir, "plan.xlsx")}, exitUsage, "contradicts the output file"},
		{[]string{"forecast", demoFleet, "--simulate", "10", "-o", filepath.Join(dir, "sim.xlsx")}, exitOK, ""},
		{[]string{"sensitivity", demo, "--format", "xlsx", "-o", filepath.Join(dir, "ranges.xlsx")}, exitOK, ""},
	}
	for _, tc := range tests {
		t.Run(strings.Join(tc.args[:1], " ")+" "+tc.args[len(tc.args)-1], func(t *testing.T) {
			code, stdout, stderr := runCLI(t, tc.args...)
			if code != tc.code || !strings.Contains(stderr, tc.want) {
				t.Errorf("%v: exit %d, stderr %q; want exit %d and %q", tc.args, code, stderr, tc.code, tc.want)
			}
			if stdout != "" {
				t.Errorf("%v wrote to stdout: %q", tc.args, stdout)
			}
		})
	}
	for _, name := range []string{"sim.csv", "plan.xlsx"} {
		if _, err := os.Stat(filepath.Join(dir, name)); err == nil {
			t.Errorf("%s was written by a refused command", name)
		}
	}
}
