package main

import (
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"fixpoint/reports"
)

// withCurrency copies a model file into a temporary directory with its
// currency line set to code; class files a system or fleet file names are
// copied beside it.
func withCurrency(t *testing.T, path, code string, siblings ...string) string {
	t.Helper()
	dir := t.TempDir()
	re := regexp.MustCompile(`(?m)^currency:.*$`)
	for _, p := range append([]string{path}, siblings...) {
		data, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		data = re.ReplaceAll(data, []byte("currency: "+code))
		if err := os.WriteFile(filepath.Join(dir, filepath.Base(p)), data, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return filepath.Join(dir, filepath.Base(path))
}

// moneyFaults lists the amounts in text that print more decimals than the
// currency's minor unit (ISO 4217: JPY 0, KWD 3): a grouped number
// ("45,591,155.23") or an amount before the code ("480.50 JPY") with the
// wrong decimals. The certificate's precision figures (gap, residual,
// tolerance, the exact gain bounds g*) are skipped: the certificate page
// gives them unrounded on purpose.
func moneyFaults(text, code string) []string {
	var grouped, before *regexp.Regexp
	switch code {
	case "JPY":
		grouped = regexp.MustCompile(`\d,\d{3}\.\d+`)
		before = regexp.MustCompile(`\d\.\d+ JPY`)
	case "KWD":
		grouped = regexp.MustCompile(`\d,\d{3}\.\d{1,2}(\D|$)`)
		before = regexp.MustCompile(`\d\.\d{1,2} KWD`)
	}
	var out []string
	for _, line := range strings.Split(text, "\n") {
		low := strings.ToLower(line)
		if strings.Contains(low, "gap") || strings.Contains(low, "residual") || strings.Contains(low, "tolerance") || strings.Contains(low, "g*") {
			continue
		}
		if grouped.MatchString(line) || before.MatchString(line) {
			out = append(out, strings.TrimSpace(line))
		}
	}
	return out
}

// Every text output and every brief page prints money in the currency's
// minor unit: no yen with decimals, dinars with three. Before this the
// rate page of the class brief said "45,591,155.23 JPY" and the tables
// of solve, compare, sensitivity, forecast and the system printed two
// decimals whatever the currency.
func TestMoneyMinorUnit(t *testing.T) {
	for _, code := range []string{"JPY", "KWD"} {
		class := withCurrency(t, demo, code)
		avg := withCurrency(t, "testdata/hostile/average.yaml", code)
		sys := withCurrency(t, "../../configs/crane.yaml", code)
		fleet := withCurrency(t, "../../configs/east-zone.yaml", code, "../../configs/east-zone-inventory.csv", "../../configs/pumps.yaml", "../../configs/valves.yaml")
		runs := [][]string{
			{"solve", class},
			{"solve", class, "--criterion", "average"},
			{"solve", avg},
			{"compare", class, "--rates", "0:8%:2%"},
			{"sensitivity", class},
			{"forecast", class, "--from", "sound"},
			{"solve", "testdata/hostile/inspection.yaml"},
			{"solve", sys},
			{"plan", fleet, "--rates", "3%,6%"},
		}
		for _, args := range runs {
			code0, out, stderr := runCLI(t, args...)
			if code0 != 0 {
				t.Fatalf("%s: exit %d: %s", strings.Join(args, " "), code0, stderr)
			}
			for _, f := range moneyFaults(out, code) {
				t.Errorf("%s %s: %q prints money without the minor unit of %s", code, args[0], f, code)
			}
		}
		for _, args := range [][]string{{class, "--rates", "0:8%:2%"}, {avg}, {sys}, {fleet, "--rates", "3%,6%"}, {withCurrency(t, "testdata/hostile/inspection.yaml", code)}} {
			text := pdfText(t, writeBrief(t, args[0], args[1:]...))
			for _, f := range moneyFaults(text, code) {
				t.Errorf("%s brief %s: %q prints money without the minor unit of %s", code, filepath.Base(args[0]), f, code)
			}
		}
	}
}

// The fleet brief's rate page gives, per rate, what plan --rates gives in
// the same words: the bounds and present value, and per calendar year the
// planned spend, the mandatory work, the units deferred and the budget
// price, with the years where the plan changes marked. Before, it showed
// only the bounds and the planned spend.
func TestFleetBriefRatePageMeasures(t *testing.T) {
	text := pdfText(t, writeBrief(t, demoFleet, "--rates", "3%,5%,7%"))
	flat := strings.Join(strings.Fields(text), " ")
	var doc struct {
		Rates []struct {
			Years []struct {
				Budget    float64
				Spend     float64 `json:"planned_spend"`
				Mandatory float64 `json:"planned_mandatory_spend"`
				Deferred  float64 `json:"deferred_units"`
				Price     float64 `json:"budget_price"`
				Changed   bool
			}
		}
	}
	runJSON(t, &doc, "plan", demoFleet, "--format", "json", "--rates", "3%,5%,7%")
	_, table, _ := runCLI(t, "plan", demoFleet, "--rates", "3%,5%,7%")
	titles := regexp.MustCompile(`(?m)^\n?([A-Z][^\n:]*\(.*\)):$`).FindAllStringSubmatch(table, -1)
	if len(titles) != 4 {
		t.Fatalf("plan --rates has %d per-year tables, want 4:\n%s", len(titles), table)
	}
	for _, m := range titles {
		if !strings.Contains(flat, m[1]) {
			t.Errorf("the rate page lacks the table %q of plan --rates", m[1])
		}
	}
	cells := []func(y int, r int) string{
		func(y, r int) string { return reports.Money(doc.Rates[r].Years[y].Spend, 0) },
		func(y, r int) string { return reports.Money(doc.Rates[r].Years[y].Mandatory, 0) },
		func(y, r int) string { return reports.Money(doc.Rates[r].Years[y].Deferred, 1) },
		func(y, r int) string { return reports.Money(doc.Rates[r].Years[y].Price, 3) },
	}
	for k, cell := range cells {
		for y := range doc.Rates[0].Years {
			row := strconv.Itoa(y+1) + " " + reports.Money(doc.Rates[0].Years[y].Budget, 0)
			for r := range doc.Rates {
				c := cell(y, r)
				if doc.Rates[r].Years[y].Changed {
					c = "*" + c
				}
				row += " " + c
			}
			if !strings.Contains(flat, row) {
				t.Errorf("table %d (%s): the rate page lacks the row %q", k+1, titles[k][1], row)
			}
		}
	}
}

// agreementFaults lists "1 <plural noun>" in text ("1 classes", "1 units",
// "1 grouping rules"): a count of one takes the singular.
func agreementFaults(text string) []string {
	re := regexp.MustCompile(`(^|[^\d.,])1 (grouping |further |linear )?(classes|units|rounds|programs|periods|years|iterations|sweeps|steps|rules|rows|components|replicates|transitions|degrees)\b`)
	var out []string
	for _, line := range strings.Split(strings.Join(strings.Fields(text), " "), ". ") {
		if m := re.FindString(line); m != "" {
			out = append(out, strings.TrimSpace(m)+" in "+line)
		}
	}
	return out
}

// A fleet of one class says "1 class", one unit "1 unit"; the same holds
// for every count in the texts of plan and the brief. Before, the relief
// fleet's key assumptions said "24 units in 1 classes".
func TestNumberNounAgreement(t *testing.T) {
	const relief = "../../configs/relief-fleet.yaml"
	texts := map[string]string{"brief relief-fleet": pdfText(t, writeBrief(t, relief))}
	_, texts["plan relief-fleet"], _ = runCLI(t, "plan", relief)
	_, texts["plan relief-fleet --years 1"], _ = runCLI(t, "plan", relief, "--years", "1")
	texts["brief relief-fleet --years 1"] = pdfText(t, writeBrief(t, relief, "--years", "1"))
	texts["brief pumps --units 1"] = pdfText(t, writeBrief(t, demo, "--units", "1"))
	for name, text := range texts {
		for _, f := range agreementFaults(text) {
			t.Errorf("%s: %s", name, f)
		}
	}
}

// The relief fleet's budget cannot cover its mandatory work. Two amounts
// over the budget differ and every sentence says which it gives, per
// calendar year: the least possible excess (the plan that spends least in
// that year) and the plan's expected excess (its expected work spend less
// the budget). Before, page 1 gave the first and the warnings the second,
// both as "exceeds its budget".
func TestOvershootLabelled(t *testing.T) {
	const relief = "../../configs/relief-fleet.yaml"
	var doc struct {
		Years []struct {
			Budget float64
			Least  float64 `json:"least_excess"`
			Spend  float64 `json:"planned_spend"`
			Rule   string
		}
		Warnings []string
	}
	runJSON(t, &doc, "plan", relief, "--format", "json", "--simulate", "0")
	span := func(f func(i int) float64) string {
		lo, hi := f(0), f(0)
		for i := range doc.Years {
			if doc.Years[i].Rule == "mandatory_only" {
				lo, hi = min(lo, f(i)), max(hi, f(i))
			}
		}
		return reports.Money(lo, 0) + " EUR to " + reports.Money(hi, 0) + " EUR a calendar year"
	}
	least := span(func(i int) float64 { return doc.Years[i].Least })
	over := span(func(i int) float64 { return doc.Years[i].Spend - doc.Years[i].Budget })
	if least == over {
		t.Fatalf("the two excesses agree (%s); the test needs a fleet where they differ", least)
	}
	// Each amount is said with its label: "by X (the least possible
	// excess)" or "the least possible excess is X"; "by Y (the plan's
	// expected excess)".
	wantLeast := regexp.MustCompile(regexp.QuoteMeta("by "+least+" (the least possible excess)") + "|" + regexp.QuoteMeta("the least possible excess is "+least))
	wantOver := "exceeds the budget by " + over + " (the plan's expected excess)"
	flat := func(s string) string { return strings.Join(strings.Fields(s), " ") }
	pages := strings.Split(pdfText(t, writeBrief(t, relief)), "\f")
	_, table, _ := runCLI(t, "plan", relief, "--simulate", "0")
	if strings.Contains(flat(pages[0]), "expected work spend stays within it.") {
		t.Error("page 1 says the expected work spend stays within the budget, in years where it does not")
	}
	for name, text := range map[string]string{"brief page 1": flat(pages[0]), "brief": flat(strings.Join(pages, " ")), "plan": flat(table),
		"plan JSON warnings": strings.Join(doc.Warnings, " ")} {
		if !wantLeast.MatchString(text) {
			t.Errorf("%s lacks %q", name, wantLeast)
		}
		if !strings.Contains(text, wantOver) {
			t.Errorf("%s lacks %q", name, wantOver)
		}
		for _, sentence := range strings.Split(text, ". ") {
			if strings.Contains(sentence, "exceed") && !strings.Contains(sentence, "(the least possible excess)") && !strings.Contains(sentence, "(the plan's expected excess)") {
				t.Errorf("%s: a sentence says an excess without saying which: %q", name, sentence)
			}
		}
	}
}

// Names are normalised to Unicode NFC when a model file is read: a state
// written with a decomposed accent (e + U+0301) in the state list and
// precomposed (U+00E9) in the transitions is one state, printed
// precomposed. Before, the config was refused (unknown state) and a
// decomposed name reached the PDF as a letter and a loose accent.
func TestNamesNFC(t *testing.T) {
	data, err := os.ReadFile("testdata/accents.yaml")
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(string(data), "\n")
	for i, l := range lines {
		if strings.HasPrefix(l, "  - {name:") || strings.HasPrefix(l, "name:") {
			lines[i] = strings.ReplaceAll(strings.ReplaceAll(l, "é", "e\u0301"), "è", "e\u0300")
		}
	}
	if !strings.Contains(strings.Join(lines, "\n"), "e\u0301tat neuf") {
		t.Fatal("the test config has no decomposed name")
	}
	path := filepath.Join(t.TempDir(), "nfd.yaml")
	if err := os.WriteFile(path, []byte(strings.Join(lines, "\n")), 0o644); err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Model  string
		States []struct{ State string }
	}
	runJSON(t, &doc, "solve", path, "--format", "json")
	if doc.States[0].State != "état neuf" || strings.Contains(doc.Model, "\u0301") {
		t.Errorf("names not precomposed: model %q, state %q", doc.Model, doc.States[0].State)
	}
	if text := pdfText(t, writeBrief(t, path)); strings.Contains(text, "\u0301") || !strings.Contains(text, "état neuf") {
		t.Error("the brief prints a decomposed accent or lacks the precomposed name")
	}
}

// dejaVu is a TrueType font with Hebrew and Arabic glyphs and no CJK
// (Debian fonts-dejavu-core).
const dejaVu = "/usr/share/fonts/truetype/dejavu/DejaVuSans.ttf"

// Right-to-left and complex-shaping scripts are refused for the PDF
// brief whatever font is given (gofpdf neither reorders nor shapes them):
// the error lists the characters, their script and the fields, and no
// PDF is written. Before, a font with the glyphs printed them unshaped,
// in the wrong order.
func TestBriefRefusesUnshapedScripts(t *testing.T) {
	data, err := os.ReadFile(demo)
	if err != nil {
		t.Fatal(err)
	}
	cfg := strings.Replace(string(data), "name: replace", "name: \"החלפה\"", 1)
	cfg = strings.Replace(cfg, "{name: sound,", "{name: \"سليم\",", 1)
	cfg = strings.ReplaceAll(cfg, "sound:", "\"سليم\":")
	cfg = regexp.MustCompile(`(?m)^name: .*$`).ReplaceAllString(cfg, `name: "पंप ग्रुप และ ปั๊ม"`)
	path := filepath.Join(t.TempDir(), "rtl.yaml")
	if err := os.WriteFile(path, []byte(cfg), 0o644); err != nil {
		t.Fatal(err)
	}
	if code, _, stderr := runCLI(t, "solve", path); code != 0 {
		t.Fatalf("solve: exit %d: %s", code, stderr)
	}
	fonts := [][]string{nil}
	if _, err := os.Stat(dejaVu); err == nil {
		fonts = append(fonts, []string{"--font", dejaVu})
	}
	for _, font := range fonts {
		out := filepath.Join(t.TempDir(), "b.pdf")
		code, _, stderr := runCLI(t, append([]string{"brief", path, "-o", out, "--date", "2026-12-01"}, font...)...)
		if code != exitInput {
			t.Fatalf("brief %v: exit %d, want %d: %s", font, code, exitInput, stderr)
		}
		for _, want := range []string{`actions[3].name "החלפה": "ה" (U+05D4, Hebrew)`, `states[0].name "سليم": "س" (U+0633, Arabic)`,
			`name "पंप ग्रुप และ ปั๊ม": "प" (U+092A, Devanagari)`, `"ป" (U+0E1B, Thai)`, "whatever the font", "no --font changes this"} {
			if !strings.Contains(stderr, want) {
				t.Errorf("brief %v: stderr lacks %q:\n%s", font, want, stderr)
			}
		}
		if _, err := os.Stat(out); err == nil {
			t.Errorf("brief %v: a PDF was written", font)
		}
	}
}

// The remedy of a refused brief is one that would work: with the CJK
// fallback font in use, it does not say to install it; with --font given
// and CJK names it says that font lacks them and that leaving out --font
// uses the fallback. Before, every refusal said to install
// fonts-droid-fallback, also for characters it does not have.
func TestGlyphHintTruthful(t *testing.T) {
	haveCJKFont(t)
	data, err := os.ReadFile(demo)
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	hiero := filepath.Join(dir, "hiero.yaml")
	if err := os.WriteFile(hiero, []byte(strings.Replace(string(data), "name: replace", "name: \"replace 𓀀\"", 1)), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, stderr := runCLI(t, "brief", hiero, "-o", filepath.Join(dir, "a.pdf"))
	if code != exitInput || strings.Contains(stderr, "install") || !strings.Contains(stderr, "DroidSansFallback") || !strings.Contains(stderr, "--font") {
		t.Errorf("hieroglyph with the fallback font in use: exit %d, want %d, a remedy without 'install' naming the font in use and --font:\n%s", code, exitInput, stderr)
	}
	if _, err := os.Stat(dejaVu); err != nil {
		t.Skipf("%s not found (Debian fonts-dejavu-core)", dejaVu)
	}
	code, _, stderr = runCLI(t, "brief", "testdata/hostile/cjk.yaml", "-o", filepath.Join(dir, "b.pdf"), "--font", dejaVu)
	if code != exitInput || !strings.Contains(stderr, "DejaVuSans.ttf given with --font lacks them") || !strings.Contains(stderr, "leave out --font") {
		t.Errorf("CJK names with --font DejaVuSans.ttf: exit %d, want %d and a remedy saying the given font lacks them:\n%s", code, exitInput, stderr)
	}
}
