package main

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"fixpoint/reports"
)

// poppler returns the path of a poppler-utils tool (pdftotext, pdfinfo),
// skipping without it unless CI=true.
func poppler(t *testing.T, tool string) string {
	t.Helper()
	path, err := exec.LookPath(tool)
	if err != nil {
		missing(t, tool, "poppler-utils")
	}
	return path
}

// missing skips a test whose external reference tool is absent, except
// under CI=true, where .ci/run installs the tool's Debian package and its
// absence fails.
func missing(t *testing.T, tool, pkg string) {
	t.Helper()
	if os.Getenv("CI") == "true" {
		t.Fatalf("%s not found; CI must install %s", tool, pkg)
	}
	t.Skipf("%s not found (Debian package %s); skipping", tool, pkg)
}

func writeBrief(t *testing.T, config string, extra ...string) string {
	t.Helper()
	out := filepath.Join(t.TempDir(), "brief.pdf")
	args := append([]string{"brief", config, "-o", out, "--date", "2026-12-01"}, extra...)
	if code, _, stderr := runCLI(t, args...); code != 0 {
		t.Fatalf("brief: exit %d: %s", code, stderr)
	}
	return out
}

func pdfText(t *testing.T, path string) string {
	t.Helper()
	out, err := exec.Command(poppler(t, "pdftotext"), "-layout", path, "-").Output()
	if err != nil {
		t.Fatal(err)
	}
	return string(out)
}

func pdfPages(t *testing.T, path string) int {
	t.Helper()
	out, err := exec.Command(poppler(t, "pdfinfo"), path).Output()
	if err != nil {
		t.Fatal(err)
	}
	m := regexp.MustCompile(`(?m)^Pages:\s+(\d+)`).FindStringSubmatch(string(out))
	if m == nil {
		t.Fatalf("no page count in pdfinfo output:\n%s", out)
	}
	n, _ := strconv.Atoi(m[1])
	return n
}

// The brief carries the caution on every page, every state and action
// name, and the numbers of the JSON output; it has four pages (the demo
// config asks for the discount-rate comparison page).
func TestBriefContent(t *testing.T) {
	path := writeBrief(t, demo)
	text := pdfText(t, path)
	if n := pdfPages(t, path); n != 4 {
		t.Errorf("%d pages, want 4", n)
	}
	pages := strings.Split(text, "\f")
	for i, page := range pages[:len(pages)-1] {
		for _, w := range []string{"CAUTION: advisory only", "competent", "local", "unsafe require action"} {
			if !strings.Contains(page, w) {
				t.Errorf("page %d lacks %q", i+1, w)
			}
		}
	}
	code, out, stderr := runCLI(t, "solve", demo, "--format", "json")
	if code != 0 {
		t.Fatal(stderr)
	}
	var doc struct {
		States []struct {
			State, Action string
			Value         float64
			RunnerUp      *string  `json:"runner_up"`
			Margin        *float64 `json:"margin"`
			Q             map[string]float64
		}
		DiscountFactor float64 `json:"discount_factor"`
		Thresholds     string
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	flat := strings.Join(strings.Fields(text), " ")
	want := []string{strings.Join(strings.Fields(doc.Thresholds), " "), reports.Fixed(doc.DiscountFactor, 6),
		"Does the advice depend on the discount rate?", "the advice for heavy_wear changes from overhaul to service"}
	for _, s := range doc.States {
		want = append(want, s.State, reports.Money(s.Value, 2))
		for a := range s.Q {
			want = append(want, a)
		}
		if s.Margin != nil {
			want = append(want, reports.Money(*s.Margin, 2))
		}
	}
	for _, w := range want {
		if !strings.Contains(flat, w) {
			t.Errorf("brief text lacks %q", w)
		}
	}
}

// Non-ASCII names, a "€" currency and a long state name print correctly.
func TestBriefUTF8(t *testing.T) {
	text := pdfText(t, writeBrief(t, filepath.Join("testdata", "accents.yaml")))
	flat := strings.Join(strings.Fields(text), " ")
	for _, w := range []string{"€", "vallée de l'Aube", "révision", "état neuf", "accouplement", "hors service (unsafe)"} {
		if !strings.Contains(flat, w) {
			t.Errorf("brief text lacks %q", w)
		}
	}
}

// The same input and date give byte-identical PDFs; the hash is a golden
// file (rewritten with -update after looking at the rendered pages).
func TestBriefDeterministic(t *testing.T) {
	a, err := os.ReadFile(writeBrief(t, demo))
	if err != nil {
		t.Fatal(err)
	}
	t.Setenv("SOURCE_DATE_EPOCH", "1796083200") // 2026-12-01T00:00:00Z
	out := filepath.Join(t.TempDir(), "b.pdf")
	if code, _, stderr := runCLI(t, "brief", demo, "-o", out); code != 0 {
		t.Fatal(stderr)
	}
	b, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(a, b) {
		t.Fatal("two briefs of the same input and date differ")
	}
	sum := sha256.Sum256(a)
	golden(t, "brief-pumps.pdf.sha256", hex.EncodeToString(sum[:])+"\n")
}

func TestBriefRefusals(t *testing.T) {
	dir := t.TempDir()
	cfg := filepath.Join(dir, "pumps.yaml")
	data, _ := os.ReadFile(demo)
	os.WriteFile(cfg, data, 0o644)
	for _, tc := range []struct {
		name string
		args []string
		code int
		want string
	}{
		{"no output", []string{"brief", cfg}, exitUsage, "give the PDF file to write with -o FILE"},
		{"output is input", []string{"brief", cfg, "-o", cfg, "--force"}, exitUsage, "is the input file"},
		{"bad date", []string{"brief", cfg, "-o", filepath.Join(dir, "x.pdf"), "--date", "1/12/2026"}, exitUsage, "is not a date YYYY-MM-DD"},
		{"bad config", []string{"brief", filepath.Join(dir, "none.yaml"), "-o", filepath.Join(dir, "y.pdf")}, exitInput, "file not found"},
		{"prepared-by on two lines", []string{"brief", cfg, "-o", filepath.Join(dir, "z.pdf"), "--prepared-by", "A. Example\nB. Example"}, exitUsage, "want one line"},
		{"missing font", []string{"brief", cfg, "-o", filepath.Join(dir, "f.pdf"), "--font", filepath.Join(dir, "none.ttf")}, exitInput, "none.ttf: font: file not found"},
		{"not a font", []string{"brief", cfg, "-o", filepath.Join(dir, "g.pdf"), "--font", cfg}, exitInput, "reports: font pumps.yaml"},
		{"system flags on a class", []string{"brief", cfg, "-o", filepath.Join(dir, "h.pdf"), "--workers", "2"}, exitUsage, "--workers does not apply to a class config"},
		{"solver flags on a fleet", []string{"brief", demoFleet, "-o", filepath.Join(dir, "i.pdf"), "--method", "policy"}, exitUsage, "--method does not apply to a fleet file"},
		{"robust on a fleet", []string{"brief", demoFleet, "-o", filepath.Join(dir, "j.pdf"), "--robust"}, exitUsage, "--robust does not apply to a fleet file"},
		{"robust on a system", []string{"brief", demoSystem, "-o", filepath.Join(dir, "k.pdf"), "--robust-radius", "0.1"}, exitUsage, "--robust-radius does not apply to a system file"},
		{"robust average", []string{"brief", cfg, "-o", filepath.Join(dir, "l.pdf"), "--robust", "--criterion", "average"}, exitUsage, "--robust does not apply to the average criterion"},
		{"robust lp", []string{"brief", cfg, "-o", filepath.Join(dir, "m.pdf"), "--robust-radius", "0.1", "--method", "lp"}, exitUsage, "method lp does not apply to robust advice"},
		{"rates on an inspection class", []string{"brief", "../../configs/relief-valves.yaml", "-o", filepath.Join(dir, "n.pdf"), "--rates", "3%,5%"}, exitUsage,
			"--rates does not apply to a class with an inspection block"},
		{"robust on an inspection class", []string{"brief", "../../configs/relief-valves.yaml", "-o", filepath.Join(dir, "o.pdf"), "--robust"}, exitUsage,
			"--robust does not apply to a class with an inspection block"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			code, _, stderr := runCLI(t, tc.args...)
			if code != tc.code || !strings.Contains(stderr, tc.want) {
				t.Errorf("exit %d, stderr %q; want %d and %q", code, stderr, tc.code, tc.want)
			}
		})
	}
	if after, _ := os.ReadFile(cfg); !bytes.Equal(after, data) {
		t.Error("the input was changed")
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 1 {
		t.Errorf("files left behind: %v", entries)
	}
}

// A fleet file gives the fleet brief: page 1 with the recommendation, the
// work list of year 1 with its cost by class (the work list of plan), the
// key assumptions, the traceability with who it is prepared for and by,
// the certificate in words and the sign-off; then the spend against the
// budget, the plans at the rates asked (the bounds of plan --rates) and
// the files with their SHA-256; the caution on every page.
func TestFleetBrief(t *testing.T) {
	path := writeBrief(t, demoFleet, "--prepared-for", "Kestrel Valley asset board (invented)", "--prepared-by", "R. Example", "--rates", "3%,5%,7%")
	text := pdfText(t, path)
	pages := strings.Split(text, "\f")
	for i, page := range pages[:len(pages)-1] {
		if !strings.Contains(page, "CAUTION: advisory only") {
			t.Errorf("page %d lacks the caution", i+1)
		}
	}
	flat := func(s string) string { return strings.Join(strings.Fields(s), " ") }
	var plan struct {
		Lower    float64 `json:"lower_bound"`
		Fluid    float64 `json:"fluid_cost"`
		Cost     float64 `json:"cost_of_budget"`
		WorkList struct {
			Spend float64
			Work  []struct {
				Class, Action string
				Units         int
			}
		} `json:"work_list"`
	}
	runJSON(t, &plan, "plan", demoFleet, "--format", "json", "--simulate", "0")
	page1 := flat(pages[0])
	want := []string{"Fleet plan brief", "Recommendation", "Work list for year 1", "Key assumptions", "Sign-off", "Signature",
		"Prepared for Kestrel Valley asset board (invented)", "Prepared by R. Example", "Config file east-zone.yaml",
		"Discount rate: 4.00% per year (real)", "Period and horizon: 10 years in 10 periods of 1 year", "Budget: 60,000 EUR a calendar year",
		"Mandatory work on unsafe units is always done first", "Problem solved:",
		"Certified: the plan found, " + reports.Money(plan.Fluid, 0) + " EUR in present value",
		"proven lower bound " + reports.Money(plan.Lower, 0) + " EUR", "the budget costs " + reports.Money(plan.Cost, 0) + " EUR in present value"}
	for _, w := range want {
		if !strings.Contains(page1, w) {
			t.Errorf("page 1 lacks %q", w)
		}
	}
	list := flat(pages[0] + " " + pages[1])
	units := 0
	for _, wk := range plan.WorkList.Work {
		units += wk.Units
		if !regexp.MustCompile(regexp.QuoteMeta(wk.Class) + ` \S+( \(unsafe\))? ` + regexp.QuoteMeta(wk.Action) + " " + strconv.Itoa(wk.Units) + " ").MatchString(list) {
			t.Errorf("the work list lacks %d units of %s to %s", wk.Units, wk.Class, wk.Action)
		}
	}
	if w := "All classes " + strconv.Itoa(units) + " " + reports.Money(plan.WorkList.Spend, 0); !strings.Contains(list, w) {
		t.Errorf("the work list lacks the total %q", w)
	}
	var rates struct {
		Rates []struct {
			Rate         float64
			Lower        float64 `json:"lower_bound"`
			CostOfBudget float64 `json:"cost_of_budget"`
		}
	}
	runJSON(t, &rates, "plan", demoFleet, "--format", "json", "--rates", "3%,5%,7%")
	rest := flat(strings.Join(pages[1:], " "))
	for _, w := range []string{"Planned work spend per calendar year against the budget (EUR; expected, by class)", "Spend and budget per calendar year",
		"Budget plan by discount rate", "Planned work spend per calendar year (expected, EUR) at each rate", "Files", "fleet file: east-zone.yaml",
		"class config: pumps.yaml", "inventory: east-zone-inventory.csv"} {
		if !strings.Contains(rest, w) {
			t.Errorf("later pages lack %q", w)
		}
	}
	for _, r := range rates.Rates {
		if w := reports.Percent(r.Rate, 2) + " " + reports.Money(r.Lower, 0); !strings.Contains(rest, w) {
			t.Errorf("the rate page lacks %q", w)
		}
		if !strings.Contains(rest, reports.Money(r.CostOfBudget, 0)) {
			t.Errorf("the rate page lacks the cost of the budget %s at %g", reports.Money(r.CostOfBudget, 0), r.Rate)
		}
	}
}

// The rate page marks the years where the plan changes from one rate to
// the next, as plan --rates does.
func TestFleetBriefRateMarks(t *testing.T) {
	text := strings.Join(strings.Fields(pdfText(t, writeBrief(t, hostileFleet, "--rates", "1%,2%"))), " ")
	var doc struct {
		Rates []struct {
			Years []struct {
				Spend   float64 `json:"planned_spend"`
				Changed bool
			}
		}
	}
	runJSON(t, &doc, "plan", hostileFleet, "--format", "json", "--rates", "1%,2%")
	marked := 0
	for y, yr := range doc.Rates[1].Years {
		cell := reports.Money(doc.Rates[0].Years[y].Spend, 0) + " " + reports.Money(yr.Spend, 0)
		if yr.Changed {
			cell = reports.Money(doc.Rates[0].Years[y].Spend, 0) + " *" + reports.Money(yr.Spend, 0)
			marked++
		}
		if !strings.Contains(text, strconv.Itoa(y+1)+" 960,000,000 "+cell) {
			t.Errorf("year %d: the rate table lacks %q", y+1, cell)
		}
	}
	if marked == 0 {
		t.Error("plan --rates marks no year; the test needs one")
	}
}

// A class config with an inspection block gives the joint brief: page 1
// says which advice it shows (the action and next inspection of solve),
// with the statutory rule and the certificate; the page "When to look
// again" follows, with the limit and the fixed intervals.
func TestInspectionBrief(t *testing.T) {
	relief := filepath.Join("..", "..", "configs", "relief-valves.yaml")
	out := filepath.Join(t.TempDir(), "b.pdf")
	code, _, stderr := runCLI(t, "brief", relief, "-o", out, "--date", "2026-12-01")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	if strings.Contains(stderr, "does not use the inspection block") {
		t.Errorf("brief says it ignores the inspection block: %s", stderr)
	}
	pages := strings.Split(pdfText(t, out), "\f")
	flat := func(s string) string { return strings.Join(strings.Fields(s), " ") }
	var doc struct {
		States []struct {
			State, Advice string
			Value         float64
		}
		Statutory, Limit string
	}
	runJSON(t, &doc, "solve", relief, "--format", "json")
	page1 := flat(pages[0])
	want := []string{"Maintenance and inspection brief", "Which advice: the joint advice of the inspection block", "Statutory: " + reports.InspectionRule,
		"Action and next inspection per condition found", "Certified optimal", "Sign-off", "Hidden failures: stuck, found only by an inspection"}
	for _, s := range doc.States {
		want = append(want, s.Advice, reports.Money(s.Value, 2))
	}
	for _, w := range want {
		if !strings.Contains(page1, w) {
			t.Errorf("page 1 lacks %q", w)
		}
	}
	rest := flat(strings.Join(pages[1:], " "))
	for _, w := range []string{"When to look again", doc.Limit, "What a fixed inspection interval costs against the advice",
		"Expected inspections per calendar year", "Solver certificate", "Porteus"} {
		if !strings.Contains(rest, w) {
			t.Errorf("later pages lack %q", w)
		}
	}
}

// A class brief with --robust-radius or --robust-confidence says on page 1
// that it shows the nominal advice and where the robust advice differs,
// and adds the page "How sure are we?" with the worst-case figures of
// solve with the same settings.
func TestRobustBrief(t *testing.T) {
	for _, args := range [][]string{{demo, "--robust-radius", "0.1"}, {fittedDemo, "--robust-confidence", "0.9"}} {
		t.Run(args[0], func(t *testing.T) {
			pages := strings.Split(pdfText(t, writeBrief(t, args[0], args[1:]...)), "\f")
			flat := func(s string) string { return strings.Join(strings.Fields(s), " ") }
			d := solveRobustJSON(t, args...)
			page1 := flat(pages[0])
			if !strings.Contains(page1, "Which advice: this page and the charts give the nominal advice") {
				t.Error("page 1 does not say which advice it shows")
			}
			differs := "it is the same in every condition."
			if len(d.Robust.Differs) > 0 {
				var parts []string
				for _, name := range d.Robust.Differs {
					for _, s := range d.States {
						if s.State == name {
							parts = append(parts, s.Action+" in "+name)
						}
					}
				}
				differs = "it advises " + strings.Join(parts, " and ") + " instead, at a price of robustness of " + reports.Money(d.Robust.PriceOfRobustness, 2) + " EUR."
			}
			if !strings.Contains(page1, differs) {
				t.Errorf("page 1 lacks %q", differs)
			}
			var robust string
			for _, p := range pages {
				if strings.Contains(p, "How sure are we?") {
					robust = flat(p)
				}
			}
			if robust == "" {
				t.Fatal("no page \"How sure are we?\"")
			}
			for _, s := range d.States {
				label := s.State
				if s.Unsafe {
					label += " (unsafe)"
				}
				if w := label + " " + s.Action + " " + reports.Money(s.WorstCase, 2); !strings.Contains(robust, w) {
					t.Errorf("the robust page lacks %q", w)
				}
			}
		})
	}
}

// Page 1 carries the traceability (file name, its SHA-256, the version,
// the date, prepared for and by), the sign-off and the certificate in
// words; the PDF's metadata names the author and subject, and its
// catalog the language. The charts say which population they follow and
// the survival chart runs over their horizon; the rate table marks the
// changed advice; yen print without decimals.
func TestBriefTraceability(t *testing.T) {
	t.Setenv("FIXPOINT_PREPARED_FOR", "Kestrel Valley asset board (invented)")
	path := writeBrief(t, demo, "--prepared-by", "R. Example")
	pages := strings.Split(pdfText(t, path), "\f")
	flat := func(s string) string { return strings.Join(strings.Fields(s), " ") }
	data, err := os.ReadFile(demo)
	if err != nil {
		t.Fatal(err)
	}
	sum := sha256.Sum256(data)
	page1 := flat(pages[0])
	for _, w := range []string{"Config file pumps.yaml", hex.EncodeToString(sum[:]), "fixpoint version", "1 December 2026",
		"Prepared for Kestrel Valley asset board (invented)", "Prepared by R. Example", "Reviewed by (competent person)", "Approved by",
		"Name", "Role", "Signature", "Date", "Certified optimal: no other policy saves more than 0.01 EUR in any condition", "Key assumptions"} {
		if !strings.Contains(page1, w) {
			t.Errorf("page 1 lacks %q", w)
		}
	}
	if strings.Contains(page1, "e-09") || strings.Contains(page1, "e-1") {
		t.Error("page 1 shows e-notation; it belongs on the certificate page")
	}
	charts := flat(pages[1])
	for _, w := range []string{"The charts follow 100 units, all starting sound", "Survival over the same 20 years"} {
		if !strings.Contains(charts, w) {
			t.Errorf("chart page lacks %q", w)
		}
	}
	if !strings.Contains(flat(pages[2]), "service *") {
		t.Error("the rate table does not mark the changed advice")
	}
	info, err := exec.Command(poppler(t, "pdfinfo"), path).CombinedOutput()
	if err != nil {
		t.Fatal(err)
	}
	for _, w := range []string{"Author:          R. Example", "Subject:         Maintenance policy brief"} {
		if !strings.Contains(string(info), w) {
			t.Errorf("pdfinfo lacks %q:\n%s", w, info)
		}
	}
	if strings.Contains(string(info), "Syntax") {
		t.Errorf("pdfinfo complains:\n%s", info)
	}
	raw, _ := os.ReadFile(path)
	if !bytes.Contains(raw, []byte("/Lang (en-GB)")) {
		t.Error("no /Lang in the PDF catalog")
	}
}

// A system file gives the joint brief: the advice per component and the
// grouping rules in words, the saving against separate planning, the
// expected cost and its certificate, with the figures of solve.
func TestSystemBrief(t *testing.T) {
	crane := filepath.Join("..", "..", "configs", "crane.yaml")
	text := strings.Join(strings.Fields(pdfText(t, writeBrief(t, crane))), " ")
	var doc struct {
		States []struct {
			Value float64
		}
		SavingPV float64 `json:"joint_saving_present_value"`
	}
	runJSON(t, &doc, "solve", crane, "--format", "json")
	for _, w := range []string{"Joint maintenance brief", "What to do to each component", "hoist_motor", "When the machine is stopped anyway",
		"When the machine is stopped for", "joint planning saves " + reports.Money(doc.SavingPV, 2) + " EUR",
		"expected to cost " + reports.Money(doc.States[0].Value, 2) + " EUR", "Certified optimal", "Sign-off", "Solver certificate", "Component 3 of 3: brake"} {
		if !strings.Contains(text, w) {
			t.Errorf("system brief lacks %q", w)
		}
	}
}
