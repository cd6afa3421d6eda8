package main

import (
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// msgs is the folder of the inputs of these tests: small invented models,
// each the minimal case of a fault found on an adversarial pass.
var msgs = filepath.Join("testdata", "msgs")

// TestCheckRefusesWhatSolveRefuses: check exits as solve would with the
// default settings, naming file and field, instead of saying ok.
func TestCheckRefusesWhatSolveRefuses(t *testing.T) {
	for _, tc := range []struct {
		file string
		code int
		want string
	}{
		// 10 components of 4 states and 3 actions: the estimate is about 61 h, above --max-hours 1.
		{"g_10_4_3.yaml", exitInput, "g_10_4_3.yaml: components: solve and brief refuse this system at their default limits"},
		// two absorbing states of different cost under criterion: average: the gain depends on the start.
		{"multi2.yaml", exitInput, "multi2.yaml: criterion: the long-run average cost depends on the starting condition"},
		// factor 0.99999999: the rounding floor is far above the default tolerance; shown with its digits.
		{"h1.yaml", exitUncertified, "h1.yaml: discount: at discount factor 0.99999999 solve cannot certify"},
	} {
		path := filepath.Join(msgs, tc.file)
		code, out, errs := runCLI(t, "check", path)
		if code != tc.code || !strings.Contains(errs, tc.want) || strings.Contains(out, "ok") {
			t.Errorf("check %s: exit %d, stdout %q, stderr %q; want exit %d and %q", tc.file, code, out, errs, tc.code, tc.want)
		}
		scode, _, serrs := runCLI(t, "solve", path)
		if scode != tc.code {
			t.Errorf("solve %s: exit %d, want %d as check (stderr %q)", tc.file, scode, tc.code, serrs)
		}
	}
}

// TestOneJointEstimate: check, solve and solve --format json state one
// memory estimate of a joint model.
func TestOneJointEstimate(t *testing.T) {
	path := filepath.Join(msgs, "g_10_4_3.yaml")
	need := regexp.MustCompile(`need up to ([0-9.]+ [KMG]iB) of memory`)
	var seen []string
	for _, args := range [][]string{{"check", path}, {"solve", path}, {"solve", path, "--format", "json"}} {
		_, _, errs := runCLI(t, args...)
		m := need.FindStringSubmatch(errs)
		if m == nil {
			t.Fatalf("%v: no memory estimate in %q", args, errs)
		}
		seen = append(seen, m[1])
	}
	if seen[0] != seen[1] || seen[1] != seen[2] {
		t.Errorf("memory estimates of check, solve, solve --format json: %q, want one figure", seen)
	}
}

// TestForecastLocatesSolveFaults: an error of the solve behind forecast
// names the file and field, as solve does.
func TestForecastLocatesSolveFaults(t *testing.T) {
	code, _, errs := runCLI(t, "forecast", filepath.Join(msgs, "multi2.yaml"), "--from", "a")
	if code != exitInput || !strings.Contains(errs, "multi2.yaml: criterion: the long-run average cost depends") {
		t.Errorf("forecast multi2.yaml: exit %d, stderr %q; want exit 1 located at criterion", code, errs)
	}
}

// TestHiddenNamesRefusedOnce: a state name with a bidirectional override
// or an escape is refused where it is declared, once: its uses are not
// reported again as unknown states.
func TestHiddenNamesRefusedOnce(t *testing.T) {
	code, _, errs := runCLI(t, "check", filepath.Join(msgs, "hidden.yaml"))
	lines := strings.Split(strings.TrimSpace(errs), "\n")
	if code != exitInput || len(lines) != 2 ||
		!strings.Contains(lines[0], `states[1].name: name "fair\u202e" contains the invisible format character U+202E`) ||
		!strings.Contains(lines[1], `states[2].name: name "poor\x1b[8m" contains a control character`) {
		t.Errorf("check hidden.yaml: exit %d, stderr:\n%s\nwant exit 1 and the two names refused, nothing else", code, errs)
	}
	if strings.ContainsRune(errs, '\u202e') || strings.ContainsRune(errs, '\x1b') {
		t.Errorf("check hidden.yaml: raw hidden characters on stderr: %q", errs)
	}
}

// TestFleetPathsStayInside: a fleet file names files of its own folder
// tree; a path that leaves it by ".." or through a symbolic link is
// refused at its field, and every bad path is reported, not the first.
func TestFleetPathsStayInside(t *testing.T) {
	root := t.TempDir()
	dir := filepath.Join(root, "fleet")
	if err := os.MkdirAll(filepath.Join(dir, "sub"), 0o755); err != nil {
		t.Fatal(err)
	}
	pumps, err := os.ReadFile(filepath.Join("..", "..", "configs", "pumps.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	write := func(path, text string) {
		t.Helper()
		if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	write(filepath.Join(dir, "pumps.yaml"), string(pumps))
	write(filepath.Join(root, "outside.csv"), "unit,class,condition\nP1,pumps,sound\n")
	write(filepath.Join(dir, "sub", "inv.csv"), "unit,class,condition\nP1,pumps,sound\n")
	if err := os.Symlink(filepath.Join(root, "outside.csv"), filepath.Join(dir, "link.csv")); err != nil {
		t.Skip("no symbolic links here:", err)
	}
	fleet := func(classPath, inventory string) string {
		return "version: 1\nkind: fleet\nname: paths\ncurrency: EUR\nclasses:\n  pumps: " + classPath +
			"\ninventory: " + inventory + "\nbudget: {years: 2, per_year: 100}\n"
	}
	for _, tc := range []struct {
		name, class, inventory string
		code                   int
		want                   []string
	}{
		{"dotdot", "pumps.yaml", "../outside.csv", exitInput, []string{`f.yaml:7: inventory: "../outside.csv" leaves the fleet file's folder`}},
		{"both", "../fleet/pumps.yaml", "sub/../../outside.csv", exitInput, []string{
			`f.yaml:6: classes.pumps: "../fleet/pumps.yaml" leaves the fleet file's folder`,
			`f.yaml:7: inventory: "sub/../../outside.csv" leaves the fleet file's folder`}},
		{"link", "pumps.yaml", "link.csv", exitInput, []string{`f.yaml:7: inventory: "link.csv" leads through a symbolic link out of the fleet file's folder`}},
		{"inside", "pumps.yaml", "sub/inv.csv", exitOK, nil},
	} {
		path := filepath.Join(dir, "f.yaml")
		write(path, fleet(tc.class, tc.inventory))
		code, out, errs := runCLI(t, "check", path)
		if code != tc.code {
			t.Errorf("%s: check exit %d, want %d (stdout %q, stderr %q)", tc.name, code, tc.code, out, errs)
		}
		for _, w := range tc.want {
			if !strings.Contains(errs, w) {
				t.Errorf("%s: stderr %q, want %q", tc.name, errs, w)
			}
		}
	}
}

// TestMessagesNameTheFileKind: a file given to an option that wants
// another kind says what the option wants; a value refused in a settings
// file names the file.
func TestMessagesNameTheFileKind(t *testing.T) {
	dir := t.TempDir()
	bad := filepath.Join(dir, "st.yaml")
	if err := os.WriteFile(bad, []byte("tol: lots\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	cfg := func(name string) string { return filepath.Join("..", "..", "configs", name) }
	for _, tc := range []struct {
		name string
		args []string
		code int
		want string
	}{
		{"fit --config records", []string{"fit", cfg("pump-inspections.csv"), "--config", cfg("pump-inspections.csv")}, exitInput,
			"pump-inspections.csv: this is an inspection-records CSV, not a class config: --config wants a class config"},
		{"--settings class", []string{"solve", cfg("pumps.yaml"), "--settings", cfg("pumps.yaml")}, exitUsage,
			"pumps.yaml is a class config, not a settings file"},
		{"--settings records", []string{"solve", cfg("pumps.yaml"), "--settings", cfg("pump-inspections.csv")}, exitUsage,
			"pump-inspections.csv is an inspection-records CSV, not a settings file"},
		{"settings file value", []string{"solve", cfg("pumps.yaml"), "--settings", bad}, exitUsage,
			"st.yaml: tol (settings file): \"lots\" is not"},
		{"flag value", []string{"solve", cfg("pumps.yaml"), "--settings", bad, "--tol", "few"}, exitUsage,
			"setting tol (flag --tol or FIXPOINT_TOL): \"few\" is not"},
	} {
		code, _, errs := runCLI(t, tc.args...)
		if code != tc.code || !strings.Contains(errs, tc.want) {
			t.Errorf("%s: exit %d, stderr %q; want exit %d and %q", tc.name, code, errs, tc.code, tc.want)
		}
	}
}

// TestFaultWording: a row of 4-decimal entries is not said to look
// rounded to 3 decimals; a fleet's classes of different periods are not
// also reported for their different discount factors; a fault inside a
// system's component names the component.
func TestFaultWording(t *testing.T) {
	cfg := func(name string) string { return filepath.Join("..", "..", "configs", name) }
	read := func(path string) string {
		t.Helper()
		b, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		return string(b)
	}
	dir := t.TempDir()
	write := func(name, text string) string {
		t.Helper()
		path := filepath.Join(dir, name)
		if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		return path
	}
	// rn4dec.yaml: critical: {critical: 0.5555, failed: 0.4455} sums to 1.001, ten times what rounding two 4-decimal entries can miss.
	code, _, errs := runCLI(t, "check", filepath.Join(msgs, "rn4dec.yaml"))
	if code != exitInput || strings.Contains(errs, "rounded to 3 decimals") || !strings.Contains(errs, "written to 4 decimals, and rounding them cannot miss 1 by this much") {
		t.Errorf("check rn4dec.yaml: exit %d, stderr %q; want the 4 decimals named and no rounding hint", code, errs)
	}
	// 0.5001 + 0.4998 + 0.0002 misses 1 by 1e-4: within rounding three 4-decimal entries (1.5e-4).
	text := strings.Replace(read(cfg("pumps.yaml")), "{critical: 0.55, failed: 0.45}", "{critical: 0.5001, failed: 0.4998, sound: 0.0002}", 1)
	if code, _, errs := runCLI(t, "check", write("r4.yaml", text)); code != exitInput || !strings.Contains(errs, "it looks rounded to 4 decimals") {
		t.Errorf("check r4.yaml: exit %d, stderr %q; want \"looks rounded to 4 decimals\"", code, errs)
	}

	half := strings.Replace(read(cfg("pumps.yaml")), "period_years: 1", "period_years: 0.5", 1)
	write("half.yaml", half)
	write("valves.yaml", read(cfg("valves.yaml")))
	write("inv.csv", "unit,class,condition\nP1,pumps,sound\n")
	fleet := write("mix.yaml", "version: 1\nkind: fleet\nname: mix\ncurrency: EUR\nclasses:\n  pumps: half.yaml\n  valves: valves.yaml\ninventory: inv.csv\nbudget: {years: 2, per_year: 100}\n")
	code, _, errs = runCLI(t, "check", fleet)
	if code != exitInput || !strings.Contains(errs, "different periods") || strings.Contains(errs, "different discount factors") {
		t.Errorf("check mix.yaml: exit %d, stderr %q; want the different periods only", code, errs)
	}

	// crane.yaml without its passive action in component wire_rope.
	crane := read(cfg("crane.yaml"))
	i := strings.Index(crane, "wire_rope")
	j := strings.Index(crane[i:], "passive: true")
	if i < 0 || j < 0 {
		t.Fatal("configs/crane.yaml has changed: no passive action of wire_rope")
	}
	sys := write("sys.yaml", crane[:i+j]+"passive: false"+crane[i+j+len("passive: true"):])
	code, _, errs = runCLI(t, "check", sys)
	if code != exitInput || !strings.Contains(errs, "components[1].actions (component wire_rope): no action is passive") {
		t.Errorf("check sys.yaml: exit %d, stderr %q; want the component named", code, errs)
	}
}

// TestFitRefusesHiddenNames: names that fit takes from the records (new
// actions) or from --states reach its tables and files, so an escape or a
// bidirectional override in them is refused, not printed raw.
func TestFitRefusesHiddenNames(t *testing.T) {
	dir := t.TempDir()
	for _, tc := range []struct {
		name, action, states string
		code                 int
		want                 string
	}{
		{"escape", "\x1b[2Jfix", "a,b", exitInput, `action: action name "\x1b[2Jfix" contains a control character`},
		{"bidi", "\u202efix", "a,b", exitInput, `action: action name "\u202efix" contains the invisible format character U+202E`},
		{"states", "fix", "a\u202e,b", exitUsage, `setting states (flag --states or FIXPOINT_STATES): name "a\u202e" contains the invisible format character`},
	} {
		path := filepath.Join(dir, tc.name+".csv")
		recs := "unit,date,condition,action\nu1,2020-01-01,a,\nu1,2021-01-01,b," + tc.action + "\nu1,2022-01-01,a,\nu2,2020-01-01,a,\nu2,2021-01-01,a,\n"
		if err := os.WriteFile(path, []byte(recs), 0o644); err != nil {
			t.Fatal(err)
		}
		code, out, errs := runCLI(t, "fit", path, "--states", tc.states, "--period-years", "1")
		if code != tc.code || !strings.Contains(errs, tc.want) || out != "" {
			t.Errorf("%s: exit %d, stdout %q, stderr %q; want exit %d and %q", tc.name, code, out, errs, tc.code, tc.want)
		}
	}
}

// TestFleetReportsEveryBadFile: a fleet whose class file is of the wrong
// kind still has its inventory checked for being an inventory at all.
func TestFleetReportsEveryBadFile(t *testing.T) {
	dir := t.TempDir()
	files := map[string]string{
		"recs.csv": "unit,date,condition\nP1,2020-01-01,sound\n",
		"bin.dat":  "\x00\x01\x02",
		"f.yaml":   "version: 1\nkind: fleet\nname: two bad files\ncurrency: EUR\nclasses:\n  pumps: recs.csv\ninventory: bin.dat\nbudget: {years: 2, per_year: 100}\n",
	}
	for name, text := range files {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	code, _, errs := runCLI(t, "check", filepath.Join(dir, "f.yaml"))
	for _, want := range []string{"recs.csv: is an inspection-records CSV, not a class config", "bin.dat: this is a binary file, not an inventory CSV"} {
		if code != exitInput || !strings.Contains(errs, want) {
			t.Errorf("check f.yaml: exit %d, stderr %q; want exit 1 and %q", code, errs, want)
		}
	}
}
