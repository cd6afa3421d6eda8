package modelfile

import (
	"context"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

func writeFiles(t *testing.T, files map[string]string) string {
	t.Helper()
	dir := t.TempDir()
	for name, text := range files {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	return dir
}

// Fleet files that list each other are refused at once: a fleet's class
// must be a class config, recognised before its content is decoded.
func TestFleetFilesNamingEachOther(t *testing.T) {
	fleet := func(other string) string {
		return "version: 1\ncurrency: EUR\nclasses: {x: " + other + "}\ninventory: inv.csv\nbudget: {years: 1, per_year: 1}\n"
	}
	dir := writeFiles(t, map[string]string{"A.yaml": fleet("B.yaml"), "B.yaml": fleet("A.yaml"), "inv.csv": "unit,class,condition\n"})
	_, err := Load(context.Background(), filepath.Join(dir, "A.yaml"), Options{})
	if err == nil || !strings.Contains(err.Error(), "B.yaml: is a fleet file, not a class config") {
		t.Fatalf("err %v", err)
	}
	if n := strings.Count(err.Error(), "\n") + 1; n > 3 {
		t.Errorf("%d lines of faults for one cycle:\n%v", n, err)
	}
}

// Paths in a fleet file are relative to it; absolute ones are refused, and
// nothing of a file of the wrong kind is echoed.
func TestFleetPathsStayRelative(t *testing.T) {
	secret := "root:x:0:0:root:/root:/bin/bash\n"
	dir := writeFiles(t, map[string]string{
		"secret.txt": secret,
		"f.yaml":     "version: 1\ncurrency: EUR\nclasses: {a: /etc/passwd, b: secret.txt}\ninventory: /etc/shadow\nbudget: {years: 1, per_year: 1}\n",
	})
	_, err := Load(context.Background(), filepath.Join(dir, "f.yaml"), Options{})
	if err == nil {
		t.Fatal("accepted")
	}
	msg := err.Error()
	for _, want := range []string{"classes.a: give the file's path relative to the fleet file", "inventory: give the file's path relative to the fleet file",
		"secret.txt: is a file fixpoint does not recognise, not a class config"} {
		if !strings.Contains(msg, want) {
			t.Errorf("missing %q in:\n%s", want, msg)
		}
	}
	if strings.Contains(msg, "root:x") || strings.Contains(msg, "/bin/bash") {
		t.Errorf("the content of a file of the wrong kind was echoed:\n%s", msg)
	}
}

// Load recognises every kind of file.
func TestKinds(t *testing.T) {
	dir := writeFiles(t, map[string]string{
		"records.csv":   "# comment\nunit,date,condition\nA,2020-01-01,good\n",
		"inventory.csv": "\ufeffUnit, Class, Condition\nA,p,good\n",
		"settings.yaml": "method: lp\n",
		"settings.json": "{\"tol\": 0.1}\n",
		"empty.yaml":    "  \n\n",
		"binary.dat":    "\x00\x01ELF",
		"list.yaml":     "- a\n- b\n",
		"broken.yaml":   "version: 1\nstates: [a\n",
	})
	for name, want := range map[string]Kind{"records.csv": RecordsFile, "inventory.csv": InventoryFile, "settings.yaml": SettingsFile,
		"settings.json": SettingsFile, "empty.yaml": EmptyFile, "binary.dat": BinaryFile, "list.yaml": OtherFile} {
		f, err := Load(context.Background(), filepath.Join(dir, name), Options{})
		if err != nil || f.Kind != want {
			t.Errorf("Load(%s) = %v, %v; want %v", name, f, err, want)
		}
	}
	if _, err := Load(context.Background(), filepath.Join(dir, "broken.yaml"), Options{}); err == nil || !strings.Contains(err.Error(), "YAML syntax error") {
		t.Errorf("a model file with a syntax error: %v", err)
	}
}

// Faults are capped per file, and the "did you mean" search runs for the
// first few names only, so a hostile file costs little.
func TestCapsOnFaultsAndHints(t *testing.T) {
	var b strings.Builder
	b.WriteString("version: 1\ncurrency: EUR\nperiod_years: 1\ndiscount: {rate: 0.05}\nstates: [good, failed]\nactions:\n  - name: leave\n    passive: true\n    transitions:\n")
	for i := range 500 {
		b.WriteString("      nowhere" + strconv.Itoa(i) + ": {good: 1}\n")
	}
	_, err := Decode(context.Background(), "big.yaml", []byte(b.String()), Options{})
	if err == nil {
		t.Fatal("accepted")
	}
	lines := strings.Split(err.Error(), "\n")
	if len(lines) > maxFaults+1 || !strings.Contains(err.Error(), "more problems") {
		t.Errorf("%d fault lines, want at most %d and a count of the rest", len(lines), maxFaults+1)
	}
	d := &doc{ctx: context.Background()}
	for range 3 * maxHints {
		d.didYouMean("gooood", []string{"good", "failed"})
	}
	if d.hints != maxHints {
		t.Errorf("%d hint searches, want the cap %d", d.hints, maxHints)
	}
	if DidYouMean("x", make([]string, maxHintCandidates+1)) != "" {
		t.Error("hint searched among too many candidates")
	}
}

// A cancelled load stops.
func TestLoadCancelled(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	_, err := Load(ctx, demo, Options{})
	if err == nil || !strings.Contains(err.Error(), "context canceled") {
		t.Errorf("err %v, want cancellation", err)
	}
}
