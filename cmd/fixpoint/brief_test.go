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

// A fleet file gives the fleet brief: bounds, spend against the budget,
// deferred units and the mix per class, with the caution on every page.
func TestFleetBrief(t *testing.T) {
	path := writeBrief(t, demoFleet)
	text := pdfText(t, path)
	pages := strings.Split(text, "\f")
	for i, page := range pages[:len(pages)-1] {
		if !strings.Contains(page, "CAUTION: advisory only") {
			t.Errorf("page %d lacks the caution", i+1)
		}
	}
	flat := strings.Join(strings.Fields(text), " ")
	for _, w := range []string{"Fleet plan under the budget", "pumps", "valves", "Work spend per year by class against the budget",
		"Units deferred", "Expected condition mix of valves", "lower bound"} {
		if !strings.Contains(flat, w) {
			t.Errorf("fleet brief lacks %q", w)
		}
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
