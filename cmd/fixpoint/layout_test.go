package main

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"html"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"runtime"
	"slices"
	"sort"
	"strconv"
	"strings"
	"testing"

	"github.com/jung-kurt/gofpdf"
	"golang.org/x/image/font/gofont/goregular"

	"fixpoint/reports"
)

// bboxWord is one word of a page as pdftotext -bbox reads it from the
// PDF, in points from the top-left corner.
type bboxWord struct {
	page                   int
	xMin, yMin, xMax, yMax float64
	text                   string
}

var (
	pageRE = regexp.MustCompile(`<page width="([0-9.]+)" height="([0-9.]+)">`)
)

// pdfWords returns the words of every page of a PDF (pdftotext from
// poppler-utils, an independent reader of the file).
func pdfWords(t *testing.T, path string) [][]bboxWord {
	t.Helper()
	out, err := exec.Command(poppler(t, "pdftotext"), "-bbox", path, "-").Output()
	if err != nil {
		t.Fatalf("pdftotext -bbox: %v", err)
	}
	var pages [][]bboxWord
	for _, chunk := range strings.Split(string(out), "<page ")[1:] {
		var words []bboxWord
		// Lines of the form <word xMin="..." yMin="..." xMax="..." yMax="...">text</word>.
		for _, line := range strings.Split(chunk, "\n") {
			line = strings.TrimSpace(line)
			if !strings.HasPrefix(line, "<word ") {
				continue
			}
			w := bboxWord{page: len(pages) + 1}
			attrs, rest, _ := strings.Cut(line[len("<word "):], ">")
			w.text = html.UnescapeString(strings.TrimSuffix(rest, "</word>"))
			for _, kv := range strings.Fields(attrs) {
				k, v, _ := strings.Cut(kv, "=")
				x, err := strconv.ParseFloat(strings.Trim(v, `"`), 64)
				if err != nil {
					t.Fatalf("pdftotext -bbox: %q", line)
				}
				switch k {
				case "xMin":
					w.xMin = x
				case "yMin":
					w.yMin = x
				case "xMax":
					w.xMax = x
				case "yMax":
					w.yMax = x
				}
			}
			words = append(words, w)
		}
		pages = append(pages, words)
	}
	if !pageRE.Match(out) || len(pages) == 0 {
		t.Fatalf("pdftotext -bbox: no pages in %s", path)
	}
	return pages
}

const mmPt = 72 / 25.4

// Printable area of a brief's pages, in points: the text frame of the
// layout (18 mm side margins, the running header from 8 mm, the page
// number down to 292 mm), with 0.5 pt of slack for glyph side bearings.
var (
	printLeft, printRight  = 18*mmPt - 0.5, (210-18)*mmPt + 0.5
	printTop, printBottom  = 8 * mmPt, 292 * mmPt
	bodyTop, cautionTop    = 14 * mmPt, (297 - 10 - 26) * mmPt
	minBodyLinesOnLastPage = 5
	// frameBottom is the bottom of the text frame (6 mm above the caution
	// box), with 0.5 pt of slack.
	frameBottom = (297-10-26-6)*mmPt + 0.5
	// minPageFill is the least share of the text frame, from its top to
	// the lowest word, that a page other than the last fills.
	minPageFill = 0.25
)

// signOffWords are the words of the sign-off block.
var signOffWords = map[string]bool{"Sign-off": true, "Reviewed": true, "by": true, "(competent": true, "person)": true,
	"Approved": true, "Name": true, "Role": true, "Signature": true, "Date": true}

// signOffProblems checks, from the words of page 1, that the sign-off
// block (from its heading to its last "Date" line, with the rule under
// it) holds no other word and ends above the caution box.
func signOffProblems(name string, words []bboxWord) []string {
	var out []string
	top, bottom := -1.0, -1.0
	for _, w := range words {
		if w.text == "Sign-off" && top < 0 {
			top = w.yMin
		}
	}
	if top < 0 {
		return nil // reported as no "Sign-off"
	}
	for _, w := range words {
		if w.text == "Date" && w.yMin > top && w.yMin < top+40*mmPt {
			bottom = max(bottom, w.yMax+2*mmPt)
		}
	}
	if bottom < 0 {
		return []string{fmt.Sprintf("%s page 1: the sign-off has no Date line", name)}
	}
	if bottom > cautionTop {
		out = append(out, fmt.Sprintf("%s page 1: the sign-off (%.1f-%.1f mm) overlaps the caution box (from %.1f mm)", name, top/mmPt, bottom/mmPt, cautionTop/mmPt))
	}
	for _, w := range words {
		if w.yMax > top+0.5 && w.yMin < bottom-0.5 && !signOffWords[w.text] && w.yMin < cautionTop {
			out = append(out, fmt.Sprintf("%s page 1: %q lies in the sign-off block", name, w.text))
		}
	}
	return out
}

// cautionText joins the words inside the caution box of a page, line by
// line.
func cautionText(words []bboxWord) string {
	var in []bboxWord
	for _, w := range words {
		if w.yMin >= cautionTop && w.yMax <= cautionTop+21*mmPt {
			in = append(in, w)
		}
	}
	sort.SliceStable(in, func(i, j int) bool {
		if !sameLine(in[i], in[j]) {
			return in[i].yMin < in[j].yMin
		}
		return in[i].xMin < in[j].xMin
	})
	var parts []string
	for _, w := range in {
		parts = append(parts, w.text)
	}
	return strings.Join(parts, " ")
}

// blockProblems checks the blocks the layout engine placed (its own
// measured extents): no two blocks of a page overlap and every block but
// the caution lies in the text frame; the sign-off and the key
// assumptions are on page 1, whole; a table that breaks keeps at least
// three rows in every part, and a part on a later page repeats the
// header row and the title with "(continued)".
func blockProblems(name string, l reports.Layout) []string {
	var out []string
	report := func(format string, args ...any) { out = append(out, name+": "+fmt.Sprintf(format, args...)) }
	desc := func(b reports.Block) string {
		s := b.Kind
		if b.Kind == "table" {
			s = fmt.Sprintf("table %q rows %d-%d", b.Of, b.From+1, b.From+b.Rows)
		}
		return fmt.Sprintf("%s (page %d, %.1f-%.1f mm)", s, b.Page, b.Y, b.Y+b.H)
	}
	const frameTop, frameBottom = 14.0, 297 - 10 - 26 - 6 + 0.3
	onFirst := map[string]int{}
	for i, a := range l.Blocks {
		if a.Kind != "caution" && (a.Y < frameTop || a.Y+a.H > frameBottom) {
			report("%s lies outside the text frame (%.0f-%.1f mm)", desc(a), frameTop, frameBottom)
		}
		if a.Kind == "sign-off" || a.Kind == "key assumptions" {
			onFirst[a.Kind]++
			if a.Page != 1 {
				report("%s is not on page 1", desc(a))
			}
		}
		for _, b := range l.Blocks[i+1:] {
			if a.Page != b.Page {
				continue
			}
			ix := min(a.X+a.W, b.X+b.W) - max(a.X, b.X)
			iy := min(a.Y+a.H, b.Y+b.H) - max(a.Y, b.Y)
			if ix > 0.3 && iy > 0.3 {
				report("%s overlaps %s", desc(a), desc(b))
			}
		}
		if a.Kind != "table" {
			continue
		}
		if a.Rows < a.Total && a.Rows < 3 {
			report("%s: a part of %d of the table's %d rows (at least 3 on each side of a break)", desc(a), a.Rows, a.Total)
		}
		if a.From > 0 && !a.Header {
			report("%s: a continued part without the header row", desc(a))
		}
		if a.From > 0 && a.Of != "" && a.Title != a.Of+" (continued)" {
			report("%s: a continued part titled %q, want %q", desc(a), a.Title, a.Of+" (continued)")
		}
	}
	for _, k := range []string{"sign-off", "key assumptions"} {
		if onFirst[k] != 1 {
			report("%d %s blocks, want 1", onFirst[k], k)
		}
	}
	return out
}

// writeBriefLayout writes a brief as writeBrief does and returns, beside
// its path, the blocks the layout engine placed.
func writeBriefLayout(t *testing.T, config string, extra ...string) (string, reports.Layout) {
	t.Helper()
	out := filepath.Join(t.TempDir(), "brief.pdf")
	var l reports.Layout
	var stdout, stderr bytes.Buffer
	a := &app{stdin: bytes.NewReader(nil), stdout: &stdout, stderr: &stderr, layout: &l}
	args := append([]string{"brief", config, "-o", out, "--date", "2026-12-01"}, extra...)
	if code := a.run(context.Background(), args); code != 0 {
		t.Fatalf("brief: exit %d: %s", code, stderr.String())
	}
	return out, l
}

// splitNumber reports whether a word at a line's end and the first word
// of the next line are one number broken in two ("38,647," / "410.54",
// "12.00" / "% real").
func splitNumber(a, b string) bool {
	if !strings.ContainsAny(a, "0123456789") {
		return false
	}
	sep := strings.HasSuffix(a, ",") || strings.HasSuffix(a, ".") || strings.HasSuffix(a, "-") ||
		strings.HasPrefix(b, ",") || strings.HasPrefix(b, ".") || strings.HasPrefix(b, "%")
	joined := strings.Trim(strings.TrimSuffix(a, "-")+b, "()[]")
	return sep && wholeNumberRE.MatchString(joined)
}

// wholeNumberRE is a number as briefs print them: grouped by thousands
// or not, with decimals, an exponent or a percent sign.
var wholeNumberRE = regexp.MustCompile(`^-?([0-9]{1,3}(,[0-9]{3})+|[0-9]+)(\.[0-9]+)?(e[-+]?[0-9]+)?%?$`)

// lineEnd reports whether nothing follows w on its line within gap, and
// lineStart whether nothing precedes it.
func lineEnd(words []bboxWord, w bboxWord, gap float64) bool {
	for _, c := range words {
		if sameLine(c, w) && c.xMin > w.xMax-0.1 && c.xMin < w.xMax+gap {
			return false
		}
	}
	return true
}

func lineStart(words []bboxWord, w bboxWord, gap float64) bool {
	for _, c := range words {
		if sameLine(c, w) && c.xMax < w.xMin+0.1 && c.xMax > w.xMin-gap {
			return false
		}
	}
	return true
}

func sameLine(a, b bboxWord) bool { return math.Abs(a.yMin-b.yMin) < 0.3*(a.yMax-a.yMin) }

// checkLayout fails t with every layout problem of the PDF at path.
func checkLayout(t *testing.T, path, date string, signable bool) {
	t.Helper()
	for _, p := range layoutProblems(t, path, date, signable) {
		t.Error(p)
	}
}

// layoutProblems checks, from the PDF itself, what a signable brief
// needs: no word outside the printable area, no two words overlapping,
// no number split across lines, page 1 with the recommendation, the key
// assumptions and the sign-off, the caution and the dated running header
// on every page, every font embedded, and no page holding only a few
// lines.
func layoutProblems(t *testing.T, path, date string, signable bool) []string {
	t.Helper()
	var problems []string
	report := func(format string, args ...any) { problems = append(problems, fmt.Sprintf(format, args...)) }
	pages := pdfWords(t, path)
	for p, words := range pages {
		text := ""
		for _, w := range words {
			text += w.text + " "
		}
		for _, want := range []string{"CAUTION: advisory only", "competent", date} {
			if !strings.Contains(text, want) {
				report("%s page %d: no %q", filepath.Base(path), p+1, want)
			}
		}
		body := map[int]bool{}
		lowest := bodyTop
		// Words in reading order from the top; each is compared with the
		// words that start above its bottom edge plus a line.
		sort.SliceStable(words, func(i, j int) bool { return words[i].yMin < words[j].yMin })
		for i, a := range words {
			if a.xMin < printLeft || a.xMax > printRight || a.yMin < printTop || a.yMax > printBottom {
				report("%s page %d: %q at (%.1f, %.1f)-(%.1f, %.1f) pt lies outside the printable area", filepath.Base(path), p+1, a.text, a.xMin, a.yMin, a.xMax, a.yMax)
			}
			if strings.ContainsRune(a.text, '\uFFFD') {
				report("%s page %d: %q holds a replacement character (broken text)", filepath.Base(path), p+1, a.text)
			}
			if a.yMin > bodyTop && a.yMax < cautionTop {
				body[int(a.yMin/4)] = true
				lowest = max(lowest, a.yMax)
			}
			if a.yMin > bodyTop && a.yMin < cautionTop && a.yMax > frameBottom {
				report("%s page %d: %q at %.1f-%.1f mm runs below the text frame into the caution box", filepath.Base(path), p+1, a.text, a.yMin/mmPt, a.yMax/mmPt)
			}
			h := a.yMax - a.yMin
			for _, b := range words[i+1:] {
				if b.yMin > a.yMax+1.2*h {
					break
				}
				ix := min(a.xMax, b.xMax) - max(a.xMin, b.xMin)
				iy := min(a.yMax, b.yMax) - max(a.yMin, b.yMin)
				// Word boxes are the fonts' full line boxes; lines set at
				// their leading touch by up to 40% of a box.
				if ix > 0.3 && iy > 0.4*min(a.yMax-a.yMin, b.yMax-b.yMin) {
					report("%s page %d: %q and %q overlap", filepath.Base(path), p+1, a.text, b.text)
				}
				below := b.yMin > a.yMin+0.5*h && b.xMin <= a.xMin+1 && b.xMax > a.xMin-40
				if below && splitNumber(a.text, b.text) && lineEnd(words, a, 4) && lineStart(words, b, 4) {
					report("%s page %d: number split across lines: %q / %q", filepath.Base(path), p+1, a.text, b.text)
				}
			}
		}
		if p > 0 && len(body) < minBodyLinesOnLastPage {
			report("%s page %d holds only %d lines", filepath.Base(path), p+1, len(body))
		}
		if fill := (lowest - bodyTop) / (frameBottom - bodyTop); p < len(pages)-1 && fill < minPageFill {
			report("%s page %d is only %.0f%% full (the text frame down to its lowest word; at least %.0f%% on every page but the last)",
				filepath.Base(path), p+1, 100*fill, 100*minPageFill)
		}
		if c := cautionText(words); c != cautionText(pages[len(pages)-1]) || !strings.HasPrefix(c, "CAUTION: advisory only") {
			report("%s page %d: the caution box holds %q, unlike the last page's", filepath.Base(path), p+1, c)
		}
		if p == 0 && signable {
			problems = append(problems, signOffProblems(filepath.Base(path)+"", words)...)
		}
		if p == 0 && signable {
			for _, want := range []string{"Recommendation", "Key assumptions", "Sign-off", "Signature", "SHA-256", "Certified"} {
				if !strings.Contains(text, want) {
					report("%s page 1: no %q", filepath.Base(path), want)
				}
			}
		}
	}
	fonts, err := exec.Command(poppler(t, "pdffonts"), path).Output()
	if err != nil {
		t.Fatal(err)
	}
	for _, line := range strings.Split(string(fonts), "\n")[2:] {
		if f := strings.Fields(line); len(f) > 4 && f[len(f)-5] != "yes" {
			report("%s: font not embedded: %s", filepath.Base(path), line)
		}
	}
	return problems
}

// hostile are the hostile class, system and fleet files (invented data
// in testdata/hostile): twelve states with 40-character names and a
// 100-character model name with ten rates; Chinese, Japanese and Korean
// names with yen near 10^9 and half-year periods; Cyrillic and German
// names; the average criterion; a machine of six components; a fleet of
// twenty classes with long names, yen near 10^9 and half-year periods,
// alone and with ten rates; a fleet with an inspection calendar whose
// budget cannot cover the mandatory work; robust advice for the twelve
// states; and an inspection block with 40-character names, yen and
// half-year periods.
var hostile = []struct {
	name string
	kind string // class, system or fleet
	args []string
	cjk  bool
}{
	{"long", "class", []string{"testdata/hostile/long.yaml"}, false},
	{"long-average", "class", []string{"testdata/hostile/long.yaml", "--criterion", "average", "--mix",
		"surface_corrosion_with_pitting_grade_00_=40,coating intact minor blistering grade 05=35.5,surface_corrosion_with_pitting_grade_10_=24.5"}, false},
	{"cjk", "class", []string{"testdata/hostile/cjk.yaml", "--prepared-for", "ケストレル渓谷水道 資産委員会", "--prepared-by", "김 예시"}, true},
	{"europe", "class", []string{"testdata/hostile/europe.yaml", "--prepared-by", "Jürgen Beispiel-Überprüfer"}, false},
	{"average", "class", []string{"testdata/hostile/average.yaml"}, false},
	{"machine6", "system", []string{"testdata/hostile/machine6.yaml", "--prepared-for", "Kestrel Valley operations (invented)"}, false},
	{"crane", "system", []string{"../../configs/crane.yaml"}, false},
	{"pumps", "class", []string{demo, "--rates", "0:12%:2%"}, false},
	{"fleet20", "fleet", []string{hostileFleet, "--prepared-for", "Kestrel Valley asset board (invented)", "--prepared-by", "R. Example"}, false},
	{"fleet20-rates", "fleet", []string{hostileFleet, "--rates", "1%:10%:1%"}, false},
	{"relief-fleet", "fleet", []string{"../../configs/relief-fleet.yaml"}, false},
	{"robust", "class", []string{"testdata/hostile/long.yaml", "--robust-radius", "0.1"}, false},
	{"inspection", "class", []string{"testdata/hostile/inspection.yaml", "--units", "240"}, false},
	{"long-imprint", "class", []string{"testdata/hostile/long.yaml", "--prepared-for", longFor, "--prepared-by", longBy}, false},
	{"machine6long", "system", []string{"testdata/hostile/machine6long.yaml", "--prepared-for", longFor, "--prepared-by", longBy}, false},
	{"machine6-tol", "system", []string{"testdata/hostile/machine6.yaml", "--tol", "1"}, false},
	{"cjk30", "class", []string{"testdata/hostile/cjk30.yaml", "--prepared-for", cjkFor, "--prepared-by", cjkBy}, true},
	{"pumps-imprint", "class", []string{demo, "--prepared-for", longFor, "--prepared-by", longBy}, false},
	{"short7", "class", []string{"testdata/hostile/short7.yaml"}, false},
}

// Long --prepared-for and --prepared-by values (about 100 characters),
// in Latin and in Chinese, Japanese and Korean script (invented).
const (
	longFor = "Kestrel Valley Water asset management board, north-east zones, capital programme review panel 2026"
	longBy  = "R. Example-Beispiel, principal asset engineer (invented), on behalf of the maintenance planning office"
	cjkFor  = "ケストレル渓谷水道株式会社 北東地区 資産管理委員会 設備保全計画部会 第二小委員会 事務局 御中 二〇二六年度 点検計画審議用資料 配水施設班"
	cjkBy   = "김 예시 수석 자산 기술자 (가상) 설비 보전 계획실 대표 ケストレル渓谷水道 保全計画課 主任技師 代理 作成者 山田 例示 太郎"
)

// hostileFleet is the fleet of twenty classes.
const hostileFleet = "testdata/hostile/fleet20/fleet.yaml"

// haveCJKFont skips without the fallback font (Debian fonts-droid-fallback)
// unless CI=true.
func haveCJKFont(t *testing.T) {
	t.Helper()
	for _, p := range fallbackFonts {
		if _, err := os.Stat(p); err == nil {
			return
		}
	}
	if os.Getenv("CI") == "true" {
		t.Fatal("no CJK font; CI must install fonts-droid-fallback")
	}
	t.Skip("no CJK font (Debian package fonts-droid-fallback); skipping")
}

// The hostile briefs pass the layout check, and every figure of the
// advice that solve prints appears whole in the class briefs.
func TestBriefLayoutHostile(t *testing.T) {
	for _, tc := range hostile {
		t.Run(tc.name, func(t *testing.T) {
			if tc.cjk {
				haveCJKFont(t)
			}
			path, blocks := writeBriefLayout(t, tc.args[0], tc.args[1:]...)
			checkLayout(t, path, "2026-12-01", true)
			for _, p := range blockProblems(tc.name, blocks) {
				t.Error(p)
			}
			words := map[string]bool{}
			for _, page := range pdfWords(t, path) {
				for _, w := range page {
					words[strings.Trim(w.text, "()[],;")] = true
				}
			}
			var figs []string
			switch tc.kind {
			case "system":
				return // TestSystemBrief checks their figures
			case "fleet":
				figs = fleetFigures(t, tc.args[0])
			default:
				figs = wholeFigures(t, tc.args)
			}
			if len(figs) == 0 {
				t.Fatal("solve gave no figures to look for")
			}
			for _, want := range figs {
				if !words[want] {
					t.Errorf("figure %s of solve is not a whole word of the brief", want)
				}
			}
		})
	}
}

// wholeFigures are the values and margins that solve --format json gives
// for a class file, formatted as the brief prints them (the currency's
// minor unit); none for other kinds.
func wholeFigures(t *testing.T, args []string) []string {
	var doc struct {
		Currency string
		States   []struct {
			Value  *float64
			Bias   *float64
			Margin *float64
		}
	}
	solveArgs := []string{"solve", args[0], "--format", "json"}
	for i, a := range args {
		if a == "--criterion" {
			solveArgs = append(solveArgs, a, args[i+1])
		}
	}
	code, out, _ := runCLI(t, solveArgs...)
	if code != 0 || json.Unmarshal([]byte(out), &doc) != nil || strings.Contains(out, `"kind": "system"`) {
		return nil
	}
	dec := reports.MinorUnit(doc.Currency)
	var want []string
	for _, s := range doc.States {
		for _, x := range []*float64{s.Value, s.Bias, s.Margin} {
			if x != nil {
				want = append(want, reports.Money(*x, dec))
			}
		}
	}
	return want
}

// fleetFigures are the bounds, the cost of the budget, the work list's
// spend and the planned spend per year that plan --format json gives for
// a fleet file, formatted as the fleet brief prints them (whole units).
func fleetFigures(t *testing.T, fleet string) []string {
	var doc struct {
		Lower    float64 `json:"lower_bound"`
		Fluid    float64 `json:"fluid_cost"`
		Cost     float64 `json:"cost_of_budget"`
		WorkList struct {
			Spend float64
		} `json:"work_list"`
		Years []struct {
			Spend float64 `json:"planned_spend"`
		}
	}
	runJSON(t, &doc, "plan", fleet, "--format", "json", "--simulate", "0")
	want := []string{reports.Money(doc.Lower, 0), reports.Money(doc.Fluid, 0), reports.Money(doc.Cost, 0), reports.Money(doc.WorkList.Spend, 0)}
	for _, y := range doc.Years {
		want = append(want, reports.Money(y.Spend, 0))
	}
	return want
}

// A name with a character no font has is refused, naming the character
// and the field; nothing is written.
func TestBriefRefusesMissingGlyphs(t *testing.T) {
	data, err := os.ReadFile(demo)
	if err != nil {
		t.Fatal(err)
	}
	cfg := strings.Replace(string(data), "name: replace", "name: \"replace 𓀀\"", 1)
	path := writeFile(t, "glyph.yaml", cfg)
	out := filepath.Join(t.TempDir(), "b.pdf")
	code, _, stderr := runCLI(t, "brief", path, "-o", out, "--date", "2026-12-01", "--prepared-by", "Ω ok \U0001F527")
	if code != exitInput {
		t.Fatalf("exit %d, want %d: %s", code, exitInput, stderr)
	}
	for _, want := range []string{`actions[3].name "replace 𓀀": "𓀀" (U+13000)`, `prepared-by "Ω ok 🔧": "🔧" (U+1F527)`, "fonts-droid-fallback", "--font"} {
		if !strings.Contains(stderr, want) {
			t.Errorf("stderr lacks %q:\n%s", want, stderr)
		}
	}
	if _, err := os.Stat(out); err == nil {
		t.Error("a PDF was written")
	}
}

// Class and system briefs are byte-identical across runs and numbers of
// cores.
func TestBriefDeterministicAcrossCores(t *testing.T) {
	for _, tc := range hostile {
		// The class briefs' solvers run on one goroutine; the joint solve
		// of a system splits its sweeps among the cores.
		if !slices.Contains([]string{"long", "machine6", "crane", "relief-fleet", "robust", "inspection"}, tc.name) {
			continue
		}
		t.Run(tc.name, func(t *testing.T) {
			var got [][]byte
			for _, procs := range []int{1, 2} {
				prev := runtime.GOMAXPROCS(procs)
				path := writeBrief(t, tc.args[0], tc.args[1:]...)
				runtime.GOMAXPROCS(prev)
				data, err := os.ReadFile(path)
				if err != nil {
					t.Fatal(err)
				}
				got = append(got, data)
			}
			for i := 1; i < len(got); i++ {
				if !bytes.Equal(got[0], got[i]) {
					t.Errorf("run %d differs from run 1", i+1)
				}
			}
		})
	}
}

// The layout check can fail: a page with overprinted words, a word in
// the margin, a number split across lines and no caution fails it; so do
// a sign-off run into the caution box, a near-empty page before the
// last, and blocks of the engine that overlap, leave the frame or break
// a table badly.
func TestLayoutCheckCatchesFaults(t *testing.T) {
	pdf := gofpdf.New("P", "mm", "A4", "")
	pdf.AddUTF8FontFromBytes("go", "", goregular.TTF)
	pdf.AddPage()
	pdf.SetFont("go", "", 9)
	pdf.Text(30, 40, "overprinted")
	pdf.Text(32, 40, "words")
	pdf.Text(2, 60, "margin")
	pdf.Text(30, 80, "cost 38,647,")
	pdf.Text(30, 84, "410.54 EUR")
	path := filepath.Join(t.TempDir(), "bad.pdf")
	if err := pdf.OutputFileAndClose(path); err != nil {
		t.Fatal(err)
	}
	got := strings.Join(layoutProblems(t, path, "2026-12-01", true), "\n")
	for _, want := range []string{`"overprinted" and "words" overlap`, `"margin" at`, `number split across lines: "38,647," / "410.54"`,
		`no "CAUTION: advisory only"`, `no "Sign-off"`} {
		if !strings.Contains(got, want) {
			t.Errorf("layout check missed %s; it said:\n%s", want, got)
		}
	}

	// A sign-off run into the caution box with a word inside it, a page
	// 2 with a few lines only before the last page, a word below the text
	// frame, and a caution box that differs from the last page's.
	pdf = gofpdf.New("P", "mm", "A4", "")
	pdf.AddUTF8FontFromBytes("go", "", goregular.TTF)
	pdf.AddPage()
	pdf.SetFont("go", "", 9)
	pdf.Text(30, 30, "Recommendation")
	pdf.Text(30, 240, "Sign-off")
	pdf.Text(30, 248, "Name")
	pdf.Text(60, 248, "stray")
	pdf.Text(30, 258, "Role")
	pdf.Text(30, 266, "Date")
	pdf.Text(30, 268, "CAUTION: advisory only")
	for range 2 {
		pdf.AddPage()
		pdf.Text(30, 40, "a page of text")
		pdf.Text(30, 268, "CAUTION: advisory only")
	}
	path = filepath.Join(t.TempDir(), "bad2.pdf")
	if err := pdf.OutputFileAndClose(path); err != nil {
		t.Fatal(err)
	}
	got = strings.Join(layoutProblems(t, path, "2026-12-01", true), "\n")
	for _, want := range []string{`the sign-off (`, `overlaps the caution box`, `"stray" lies in the sign-off block`, `page 2 is only`,
		`"Role" at`, `runs below the text frame`, `page 1: the caution box holds`} {
		if !strings.Contains(got, want) {
			t.Errorf("layout check missed %s; it said:\n%s", want, got)
		}
	}

	// The engine's blocks: a sign-off over the caution, a key
	// assumptions block on page 2, a table broken 5+1 whose continued
	// part has neither header nor title, and a chart below the frame.
	l := reports.Layout{Pages: 2, Blocks: []reports.Block{
		{Kind: "sign-off", Page: 1, X: 18, Y: 230, W: 174, H: 40},
		{Kind: "caution", Page: 1, X: 18, Y: 261, W: 174, H: 21},
		{Kind: "key assumptions", Page: 2, X: 18, Y: 20, W: 174, H: 30},
		{Kind: "table", Page: 1, X: 18, Y: 100, W: 174, H: 40, Of: "Advice per condition", Header: true, From: 0, Rows: 5, Total: 6},
		{Kind: "table", Page: 2, X: 18, Y: 60, W: 174, H: 10, Of: "Advice per condition", From: 5, Rows: 1, Total: 6},
		{Kind: "chart", Page: 2, X: 18, Y: 200, W: 174, H: 70},
	}}
	got = strings.Join(blockProblems("bad", l), "\n")
	for _, want := range []string{`sign-off (page 1, 230.0-270.0 mm) overlaps caution`, `sign-off (page 1, 230.0-270.0 mm) lies outside the text frame`,
		`key assumptions (page 2, 20.0-50.0 mm) is not on page 1`, `a part of 1 of the table's 6 rows`, `a continued part without the header row`,
		`a continued part titled "", want "Advice per condition (continued)"`, `chart (page 2, 200.0-270.0 mm) lies outside the text frame`} {
		if !strings.Contains(got, want) {
			t.Errorf("block check missed %s; it said:\n%s", want, got)
		}
	}
}
