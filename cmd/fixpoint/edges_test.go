package main

import (
	"bytes"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// A safety rule must not hang on a flag the user can forget: a class whose
// leave action is not marked passive, with a row that keeps failed units
// failed, is refused by check, solve and brief, naming the action and the
// state; so is a cheap non-passive action that does the same.
func TestSafetyDoesNotHangOnThePassiveFlag(t *testing.T) {
	cheapLeave := strings.NewReplacer(
		"    passive: true\n    cost: 0\n", "    cost: 0\n",
		"      worn: {worn: 0.7, failed: 0.3}\n", "      worn: {worn: 0.7, failed: 0.3}\n      failed: {failed: 1}\n",
		"running_cost: 500, unsafe: true", "running_cost: 5, unsafe: true",
	).Replace(base)
	patch := strings.Replace(base, "  - name: replace\n", "  - name: patch\n    cost: 1\n    transitions:\n      failed: {failed: 1}\n  - name: replace\n", 1)
	for _, tc := range []struct{ name, text, want string }{
		{"no passive action", cheapLeave, "no action is passive"},
		{"no passive action", cheapLeave, `actions[0].transitions.failed (action leave, row failed): action "leave" keeps a unit in unsafe state "failed" within unsafe states with probability 1`},
		{"cheap action keeps unsafe", patch, `(action patch, row failed): action "patch" keeps a unit in unsafe state "failed" within unsafe states with probability 1`},
	} {
		path := writeFile(t, "unsafe.yaml", tc.text)
		for _, args := range [][]string{{"check", path}, {"solve", path}, {"brief", path, "-o", filepath.Join(t.TempDir(), "b.pdf")}} {
			code, stdout, stderr := runCLI(t, args...)
			if code != exitInput || stdout != "" || !strings.Contains(stderr, tc.want) {
				t.Errorf("%s: %v: exit %d, stderr:\n%s\nwant exit 1 and %q", tc.name, args[0], code, stderr, tc.want)
			}
		}
	}
}

// An action declared out of service may keep an unsafe unit where it is;
// every output then says so in words.
func TestOutOfServiceIsSaidEverywhere(t *testing.T) {
	text := strings.NewReplacer(
		"running_cost: 500, unsafe: true", "running_cost: 50, unsafe: true",
		"  - name: replace\n", "  - name: retire\n    out_of_service: true\n    cost: 0\n    transitions:\n      failed: {failed: 1}\n  - name: replace\n",
	).Replace(base)
	path := writeFile(t, "retire.yaml", text)
	const said = "In failed the advice is retire, which takes the unit out of service"
	for _, format := range []string{"table", "json", "csv"} {
		code, stdout, stderr := runCLI(t, "solve", path, "--format", format)
		if code != 0 || !strings.Contains(stdout, said) || !strings.Contains(stderr, "takes the unit out of service") {
			t.Errorf("%s: exit %d, stdout lacks %q:\n%s\nstderr %s", format, code, said, stdout, stderr)
		}
	}
	pdf := filepath.Join(t.TempDir(), "b.pdf")
	if code, _, stderr := runCLI(t, "brief", path, "-o", pdf, "--date", "2026-12-01"); code != 0 {
		t.Fatalf("brief: exit %d: %s", code, stderr)
	}
	if text := strings.Join(strings.Fields(pdfText(t, pdf)), " "); !strings.Contains(text, said) {
		t.Errorf("brief lacks %q", said)
	}
}

// A unit that enters an unsafe state and is expected to stay unsafe for
// more than a period under the advice gets a warning in every output.
func TestWarningWhenUnsafeUnitsStayUnsafe(t *testing.T) {
	text := strings.Replace(base, "      - [1, 0, 0]\n      - [1, 0, 0]\n      - [1, 0, 0]\n",
		"      - [1, 0, 0]\n      - [1, 0, 0]\n      - [0.4, 0, 0.6]\n", 1)
	path := writeFile(t, "slow.yaml", text)
	// Replacement from failed works with probability 0.4 a period: 2.5
	// periods in failed on average (closed form 1/0.4).
	const want = "expected to stay in unsafe states for 2.50 periods"
	for _, format := range []string{"table", "json", "csv"} {
		code, stdout, stderr := runCLI(t, "solve", path, "--format", format)
		if code != 0 || !strings.Contains(strings.Join(strings.Fields(stdout), " "), want) || !strings.Contains(stderr, "warning: Under the advice a unit that becomes failed") {
			t.Errorf("%s: exit %d, want %q in stdout and a warning on stderr:\n%s\n%s", format, code, want, stdout, stderr)
		}
	}
}

// Rates typed as percent numbers are refused with a suggestion; "3.5%"
// is accepted in config files as on flags.
func TestRatesTypedAsPercentNumbers(t *testing.T) {
	code, _, stderr := runCLI(t, "compare", demo, "--rates", "2,3.5,5")
	if code != exitUsage || !strings.Contains(stderr, "write 2% for 2 percent") {
		t.Errorf("--rates 2,3.5,5: exit %d, %s", code, stderr)
	}
	code, _, stderr = runCLI(t, "check", writeFile(t, "pct.yaml", strings.Replace(base, "rate: 0.05", "rate: 3.5", 1)))
	if code != exitInput || !strings.Contains(stderr, "discount.rate: rate 3.5 per year is over 100%; write 3.5% for 3.5 percent") {
		t.Errorf("rate: 3.5: exit %d, %s", code, stderr)
	}
	code, stdout, stderr := runCLI(t, "check", writeFile(t, "pct.yaml", strings.Replace(base, "rate: 0.05", "rate: 3.5%", 1)))
	if code != 0 || !strings.Contains(stdout, "discount factor 0.966184") { // 1/1.035, closed form
		t.Errorf("rate: 3.5%%: exit %d, %s%s", code, stdout, stderr)
	}
	code, _, stderr = runCLI(t, "solve", demo, "--rate", "4")
	if code != exitUsage || !strings.Contains(stderr, "write 4% for 4 percent") {
		t.Errorf("--rate 4: exit %d, %s", code, stderr)
	}
}

// Every command honours the config's criterion or says in one line that
// it does not support it; without a discount block the discounted
// commands say what is missing.
func TestCriterionHonouredEverywhere(t *testing.T) {
	avg := strings.Replace(base, "discount:\n  rate: 0.05\n", "criterion: average\n", 1)
	path := writeFile(t, "avg.yaml", avg)
	var doc map[string]any
	runJSON(t, &doc, "solve", path, "--format", "json")
	if doc["criterion"] != "average" {
		t.Errorf("solve: criterion %v", doc["criterion"])
	}
	runJSON(t, &doc, "forecast", path, "--from", "good", "--format", "json")
	if code, stdout, stderr := runCLI(t, "check", path); code != 0 || !strings.Contains(stdout, "average criterion") {
		t.Errorf("check: exit %d, %s%s", code, stdout, stderr)
	}
	if code, _, stderr := runCLI(t, "sensitivity", path); code != exitInput || strings.Count(stderr, "\n") != 1 || !strings.Contains(stderr, "criterion") {
		t.Errorf("sensitivity: exit %d, want one line about the criterion: %s", code, stderr)
	}
	// The brief honours the criterion: the long-run average cost and the
	// relative values, said in words.
	flat := strings.Join(strings.Fields(pdfText(t, writeBrief(t, path))), " ")
	for _, w := range []string{"per year in the long run (undiscounted", "Relative value", "Criterion: least long-run average cost per period",
		"Certified optimal: no other policy has a long-run average cost lower by more than"} {
		if !strings.Contains(flat, w) {
			t.Errorf("average brief lacks %q", w)
		}
	}
	code, _, stderr := runCLI(t, "solve", path, "--criterion", "discounted")
	if code != exitInput || !strings.Contains(stderr, "discount: the discounted criterion needs a discount rate or factor") {
		t.Errorf("discounted without a discount: exit %d, %s", code, stderr)
	}
	if code, _, stderr := runCLI(t, "sensitivity", path, "--rate", "4%"); code != 0 {
		t.Errorf("sensitivity --rate: exit %d, %s", code, stderr)
	}
}

// A flag that does not apply to the file given is a usage error naming it.
func TestFlagsThatDoNotApply(t *testing.T) {
	avg := writeFile(t, "avg.yaml", strings.Replace(base, "discount:\n  rate: 0.05\n", "criterion: average\n", 1))
	noCompare := writeFile(t, "nocmp.yaml", base)
	pdf := filepath.Join(t.TempDir(), "b.pdf")
	for _, tc := range []struct {
		args []string
		want string
	}{
		{[]string{"solve", demoSystem, "--criterion", "average"}, "--criterion does not apply to a system file"},
		{[]string{"solve", demoSystem, "--method", "lp"}, "--method does not apply to a system file"},
		{[]string{"solve", demoSystem, "--target", "failed"}, "--target does not apply to a system file"},
		{[]string{"solve", demo, "--workers", "2"}, "--workers does not apply to a class config"},
		{[]string{"forecast", demoFleet, "--simulate", "10", "--from", "sound"}, "--from does not apply to a fleet file"},
		{[]string{"forecast", demo, "--from", "sound", "--budget", "5"}, "--budget does not apply to a class config"},
		{[]string{"solve", demo, "--criterion", "average", "--rate", "3%"}, "--rate does not apply to the average criterion"},
		{[]string{"solve", "../../configs/relief-valves.yaml", "--robust"}, "--robust does not apply to a class with an inspection block"},
		{[]string{"solve", "../../configs/relief-valves.yaml", "--robust-radius", "0.1"}, "--robust-radius does not apply to a class with an inspection block"},
		{[]string{"plan", demoFleet, "--inflation", "2%"}, "--inflation does not apply to a plan at one rate"},
		{[]string{"plan", demoFleet, "--simulate", "0", "--seed", "4"}, "--seed does not apply to a plan with --simulate 0"},
		{[]string{"brief", demoFleet, "-o", pdf, "--inflation", "2%"}, "--inflation does not apply to a fleet brief without --rates"},
		{[]string{"brief", noCompare, "-o", pdf, "--inflation", "2%"}, "--inflation does not apply to a class without discount.compare when --rates is not given"},
		{[]string{"forecast", avg, "--from", "good", "--rate", "3%"}, "--rate does not apply to the average criterion"},
		{[]string{"forecast", avg, "--from", "good", "--factor", "0.5"}, "--factor does not apply to the average criterion"},
		{[]string{"forecast", demo, "--from", "sound", "--seed", "9"}, "--seed does not apply to a class config"},
		{[]string{"forecast", demoFleet, "--simulate", "50", "--follow", "advice", "--gap", "0.5"}, "--gap does not apply to --follow advice"},
	} {
		code, _, stderr := runCLI(t, tc.args...)
		if code != exitUsage || !strings.Contains(stderr, tc.want) {
			t.Errorf("%v: exit %d, want 2 and %q: %s", tc.args, code, tc.want, stderr)
		}
	}
	if _, err := os.Stat(pdf); err == nil {
		t.Errorf("a refused brief left %s", pdf)
	}
	// The same settings from the environment or a settings file hold
	// defaults for every command and kind of file: they are ignored with a
	// warning naming where they came from; at their default they change
	// nothing and pass silently.
	methodLP := writeFile(t, "sm.yaml", "method: lp\n")
	for _, tc := range []struct {
		env  map[string]string
		args []string
		want string
	}{
		{map[string]string{"FIXPOINT_CRITERION": "average"}, []string{"solve", demoSystem}, "FIXPOINT_CRITERION=average does not apply to a system file"},
		{map[string]string{"FIXPOINT_METHOD": "lp"}, []string{"solve", demoSystem}, "FIXPOINT_METHOD=lp does not apply to a system file"},
		{nil, []string{"solve", demoSystem, "--settings", methodLP}, "settings file " + methodLP + ": method lp does not apply to a system file"},
		{map[string]string{"FIXPOINT_SEED": "4"}, []string{"plan", demoFleet, "--simulate", "0"}, "FIXPOINT_SEED=4 does not apply to a plan with --simulate 0"},
	} {
		t.Run(strings.Join(tc.args[:1], " "), func(t *testing.T) {
			for k, v := range tc.env {
				t.Setenv(k, v)
			}
			code, _, stderr := runCLI(t, tc.args...)
			if code != 0 || !strings.Contains(stderr, "fixpoint: warning: "+tc.want) || !strings.Contains(stderr, "; ignored") {
				t.Errorf("%v %v: exit %d, want 0 and the warning %q ... ignored: %s", tc.env, tc.args, code, tc.want, stderr)
			}
		})
	}
	t.Setenv("FIXPOINT_METHOD", "auto")
	if code, _, stderr := runCLI(t, "solve", demoSystem, "--format", "json"); code != 0 || strings.Contains(stderr, "FIXPOINT_METHOD") {
		t.Errorf("FIXPOINT_METHOD=auto (the default) solve system: exit %d, %s", code, stderr)
	}
}

// Settings keys mean one thing: FIXPOINT_METHOD (a solver) does not reach
// fit (whose estimator is --estimator); notes of decoding print once; the
// horizon follows the precedence rules; a settings-file typo is a usage
// error.
func TestSettingsMeanOneThing(t *testing.T) {
	t.Setenv("FIXPOINT_METHOD", "policy")
	if code, _, stderr := runCLI(t, "fit", demoRecords, "--config", demo, "--bootstrap", "0"); code != 0 {
		t.Errorf("FIXPOINT_METHOD=policy fit: exit %d, %s", code, stderr)
	}
	rounded := strings.Replace(base, "good: {good: 0.8, worn: 0.2}", "good: {good: 0.333, worn: 0.333, failed: 0.333}", 1)
	path := writeFile(t, "rounded.yaml", rounded)
	for _, args := range [][]string{
		{"brief", path, "--renormalize", "-o", filepath.Join(t.TempDir(), "b.pdf")},
		{"forecast", path, "--renormalize", "--from", "good"},
	} {
		code, _, stderr := runCLI(t, args...)
		if code != 0 || strings.Count(stderr, "row summed to 0.999") != 1 {
			t.Errorf("%v: exit %d, want the note once: %s", args[0], code, stderr)
		}
	}
	t.Setenv("FIXPOINT_YEARS", "3")
	var f struct {
		Periods []any `json:"periods"`
	}
	runJSON(t, &f, "forecast", demo, "--from", "sound", "--format", "json")
	if len(f.Periods) != 3 {
		t.Errorf("FIXPOINT_YEARS=3: %d periods, want 3", len(f.Periods))
	}
	var plan struct {
		Years []any `json:"years"`
	}
	runJSON(t, &plan, "plan", demoFleet, "--format", "json", "--budget", "60000")
	if len(plan.Years) != 3 {
		t.Errorf("FIXPOINT_YEARS=3 plan: %d years, want 3", len(plan.Years))
	}
	typo := writeFile(t, "typo.yaml", "methd: lp\n")
	if code, _, stderr := runCLI(t, "solve", demo, "--settings", typo); code != exitUsage || !strings.Contains(stderr, `did you mean "method"?`) {
		t.Errorf("settings typo: exit %d, %s", code, stderr)
	}
	for _, bad := range []string{filepath.Join(t.TempDir(), "nonexistent"), writeFile(t, "blob.yaml", "\x00\x01\x02")} {
		t.Setenv("FIXPOINT_SETTINGS", bad)
		code, _, stderr := runCLI(t, "solve", demo)
		if code != exitUsage || strings.Contains(stderr, "Unsupported Config Type") || !strings.Contains(stderr, "settings file") {
			t.Errorf("FIXPOINT_SETTINGS=%s: exit %d, %s", bad, code, stderr)
		}
	}
}

// The survival horizon is the longer of the advice's and the passive
// chain's horizons, as documented (on the demo the advice's is 100 years).
func TestSurvivalHorizon(t *testing.T) {
	var doc struct {
		Life struct {
			Passive map[string][]float64 `json:"survival_passive"`
			Policy  map[string][]float64 `json:"survival_policy"`
		} `json:"life"`
	}
	code, out, stderr := runCLI(t, "solve", demo, "--format", "json")
	if code != 0 {
		t.Fatal(stderr)
	}
	if err := json.Unmarshal([]byte(out), &doc); err != nil {
		t.Fatal(err)
	}
	for _, curves := range []map[string][]float64{doc.Life.Passive, doc.Life.Policy} {
		if len(curves) == 0 {
			t.Fatalf("no survival curves in %.200s", out)
		}
		for name, curve := range curves {
			if len(curve) != 101 {
				t.Errorf("survival from %s: %d points, want 101 (periods 0..100)", name, len(curve))
			}
		}
	}
}

// A YAML syntax error inside an action is reported at the line where
// parsing failed, with the line where the enclosing block starts.
func TestYAMLSyntaxErrorLine(t *testing.T) {
	text := strings.Replace(base, "    cost: 1000\n    matrix:", "    cost: 1000\n   matrix:", 1)
	path := writeFile(t, "syntax.yaml", text)
	code, _, stderr := runCLI(t, "check", path)
	lines := strings.Split(base, "\n")
	bad := 0
	for i, l := range lines {
		if l == "    matrix:" {
			bad = i + 1
		}
	}
	if code != exitInput || !strings.Contains(stderr, filepath.Base(path)+":"+strconv.Itoa(bad)+": YAML syntax error") {
		t.Errorf("exit %d, want the error at line %d: %s", code, bad, stderr)
	}
}

// Every file read in a run is protected, --force or not: a fleet's class
// files and inventory, the settings file, a fit's records and config.
func TestEveryInputProtected(t *testing.T) {
	dir := t.TempDir()
	for _, name := range []string{"east-zone.yaml", "pumps.yaml", "valves.yaml", "east-zone-inventory.csv", "pump-inspections.csv"} {
		data, err := os.ReadFile(filepath.Join("..", "..", "configs", name))
		if err != nil {
			t.Fatal(err)
		}
		os.WriteFile(filepath.Join(dir, name), data, 0o644)
	}
	settings := filepath.Join(dir, "s.yaml")
	os.WriteFile(settings, []byte("tol: 0.01\n"), 0o644)
	fleet, pumps, inv := filepath.Join(dir, "east-zone.yaml"), filepath.Join(dir, "pumps.yaml"), filepath.Join(dir, "east-zone-inventory.csv")
	records := filepath.Join(dir, "pump-inspections.csv")
	for _, args := range [][]string{
		{"plan", fleet, "-o", pumps, "--force"},
		{"plan", fleet, "-o", inv, "--force", "--format", "csv"},
		{"forecast", fleet, "--simulate", "5", "-o", inv, "--force", "--format", "csv"},
		{"brief", fleet, "-o", pumps, "--force"},
		{"solve", pumps, "--settings", settings, "-o", settings, "--force"},
		{"fit", records, "--config", pumps, "-o", records, "--force"},
		{"fit", records, "--config", pumps, "--merge", "-o", pumps, "--force"},
	} {
		before := map[string][]byte{}
		for _, f := range []string{fleet, pumps, inv, settings, records} {
			before[f], _ = os.ReadFile(f)
		}
		code, _, stderr := runCLI(t, args...)
		if code != exitUsage || !strings.Contains(stderr, "never overwrites a file it reads") {
			t.Errorf("%v: exit %d, want a refusal: %s", args, code, stderr)
		}
		for f, data := range before {
			if now, _ := os.ReadFile(f); !bytes.Equal(now, data) {
				t.Fatalf("%v changed %s", args, f)
			}
		}
	}
}

// Terminal and spreadsheet injection: names with escape sequences,
// newlines or a leading "=" are refused, naming each, and nothing raw
// reaches the terminal.
func TestHostileNames(t *testing.T) {
	code, stdout, stderr := runCLI(t, "solve", filepath.Join("testdata", "hostile", "escapes.yaml"), "--format", "csv")
	if code != exitInput || stdout != "" {
		t.Fatalf("exit %d, stdout %q", code, stdout)
	}
	if strings.ContainsAny(stderr, "\x1b\a") {
		t.Errorf("raw control characters reached the terminal: %q", stderr)
	}
	for _, want := range []string{`name: name "\x1b]0;pwned-title\a`, `currency: name "EUR\x1b[5m" contains a control character`,
		`states[1].name: name "=HYPERLINK(\"http://x\")" contains "," or "="`, `states[2].name: name "fa\niled" contains a control character`} {
		if !strings.Contains(stderr, want) {
			t.Errorf("stderr lacks %q:\n%s", want, stderr)
		}
	}
}

// Writing to a device writes to it and leaves it a device.
func TestOutputToDevice(t *testing.T) {
	if _, err := os.Stat("/dev/null"); err != nil {
		t.Skip("no /dev/null")
	}
	for _, args := range [][]string{{"-o", "/dev/null"}, {"-o", "/dev/null", "--force"}} {
		if code, _, stderr := runCLI(t, append([]string{"solve", demo, "--format", "json"}, args...)...); code != 0 {
			t.Errorf("%v: exit %d: %s", args, code, stderr)
		}
	}
	if info, err := os.Lstat("/dev/null"); err != nil || info.Mode()&os.ModeDevice == 0 {
		t.Fatalf("/dev/null is no longer a device: %v", err)
	}
}

// Figures that were wrong or lost: the tie rule keeps the cheaper action
// (0.50 apart at 10^9), the LP finishes on tied degenerate models, a
// multichain model with one gain is answered, a 1e-17 probability keeps
// the certified advice.
func TestSolverEdges(t *testing.T) {
	dir := filepath.Join("testdata", "edges")
	var tie struct {
		States []struct {
			Action string   `json:"action"`
			Margin *float64 `json:"margin"`
		} `json:"states"`
	}
	runJSON(t, &tie, "solve", filepath.Join(dir, "neartie.yaml"), "--format", "json")
	for _, s := range tie.States {
		if s.Action != "y" || s.Margin == nil || *s.Margin < 0 {
			t.Errorf("neartie: advice %s margin %v, want y with margin >= 0", s.Action, s.Margin)
		}
	}
	for _, method := range []string{"lp", "value", "policy"} {
		if code, _, stderr := runCLI(t, "solve", filepath.Join(dir, "lp_hang5.yaml"), "--method", method); code != 0 {
			t.Errorf("lp_hang5 --method %s: exit %d: %s", method, code, stderr)
		}
	}
	var avg struct {
		Gain   float64 `json:"gain_per_period"`
		Status string  `json:"status"`
	}
	runJSON(t, &avg, "solve", filepath.Join(dir, "multi.yaml"), "--format", "json")
	if avg.Status != "certified" || math.Abs(avg.Gain) > 1e-9 {
		t.Errorf("multi: gain %g, %s; want 0, certified", avg.Gain, avg.Status)
	}
	if code, out, stderr := runCLI(t, "solve", filepath.Join(dir, "fp.yaml")); code != 0 || !strings.Contains(out, "certified") {
		t.Errorf("fp: exit %d: %s", code, stderr)
	}
	code, _, stderr := runCLI(t, "solve", demo, "--rate", "1e-12")
	if code != exitUsage || !strings.Contains(stderr, "use the average criterion") || strings.Contains(stderr, "--method policy") {
		t.Errorf("rate 1e-12: exit %d, want a refusal suggesting the average criterion: %s", code, stderr)
	}
}

// The output format follows the -o file's extension; an extension naming
// a kind of file the command does not write, or contradicting --format,
// is refused before any work and writes nothing; .txt takes any text
// format; a file read in the run (here the --font file) is never the
// output.
func TestOutputExtensions(t *testing.T) {
	dir := t.TempDir()
	for _, tc := range []struct {
		args []string
		code int
		want string // in stderr for a refusal; the file's first bytes for a write
	}{
		{[]string{"solve", demo, "-o", "a.csv"}, 0, "# Advisory only"},
		{[]string{"solve", demo, "-o", "a.json"}, 0, "{"},
		{[]string{"solve", demo, "--format", "csv", "-o", "a.txt"}, 0, "# Advisory only"},
		{[]string{"solve", demo, "-o", "b.txt"}, 0, "Kestrel Valley"},
		{[]string{"fit", demoRecords, "--config", demo, "--bootstrap", "0", "-o", "f.json"}, 0, "{"},
		{[]string{"solve", demo, "--format", "table", "-o", "c.csv"}, exitUsage, "--format table contradicts the output file"},
		{[]string{"solve", demo, "--format", "xlsx", "-o", "c.txt"}, exitUsage, "--format xlsx contradicts the output file"},
		{[]string{"solve", demo, "-o", "c.pdf"}, exitUsage, "named as a PDF file, which this command does not write"},
		{[]string{"plan", demoFleet, "-o", "c.pdf"}, exitUsage, "a PDF brief is written by fixpoint brief"},
		{[]string{"fit", demoRecords, "--config", demo, "-o", "c.csv"}, exitUsage, "named as a CSV file, which this command does not write (it writes table, json, yaml)"},
		{[]string{"brief", demo, "-o", "c.csv"}, exitUsage, "name the file .pdf"},
		{[]string{"brief", demo, "-o", "c.xlsx"}, exitUsage, "named as a workbook"},
	} {
		args := append([]string{}, tc.args...)
		out := filepath.Join(dir, args[len(args)-1])
		args[len(args)-1] = out
		code, _, stderr := runCLI(t, args...)
		data, _ := os.ReadFile(out)
		switch {
		case code != tc.code:
			t.Errorf("%v: exit %d, want %d: %s", tc.args, code, tc.code, stderr)
		case code != 0 && (!strings.Contains(stderr, tc.want) || data != nil):
			t.Errorf("%v: stderr %q (file written: %v), want %q and no file", tc.args, stderr, data != nil, tc.want)
		case code == 0 && !strings.HasPrefix(string(data), tc.want):
			t.Errorf("%v: the file starts %.40q, want %q", tc.args, data, tc.want)
		}
	}
	font := filepath.Join(dir, "font.ttf")
	if err := os.WriteFile(font, []byte("not a font"), 0o644); err != nil {
		t.Fatal(err)
	}
	code, _, stderr := runCLI(t, "brief", demo, "--font", font, "-o", font, "--force")
	if data, _ := os.ReadFile(font); code != exitUsage || string(data) != "not a font" || !strings.Contains(stderr, "is the input file") {
		t.Errorf("brief --font F -o F --force: exit %d, %s; the font file now holds %.20q", code, stderr, data)
	}
}
