package main

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"github.com/spf13/pflag"

	"fixpoint/cmd/internal/modelfile"
	"fixpoint/condition"
)

// TestREADMEExamples runs every command shown in a ```console block of the
// README (lines starting "$ fixpoint ") in a scratch directory holding a
// copy of configs/ (so that files the examples write land there), and
// checks the output printed under it: line for line, where a line "..."
// stands for any number of lines. With -update the blocks without "..."
// are rewritten from the real output.
func TestREADMEExamples(t *testing.T) {
	root := filepath.Join("..", "..")
	path := filepath.Join(root, "README.md")
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	scratch := t.TempDir()
	if err := copyDir(filepath.Join(root, "configs"), filepath.Join(scratch, "configs")); err != nil {
		t.Fatal(err)
	}
	wd, _ := os.Getwd()
	if err := os.Chdir(scratch); err != nil {
		t.Fatal(err)
	}
	defer os.Chdir(wd)
	t.Setenv("NO_COLOR", "1")
	lines := strings.SplitAfter(string(data), "\n")
	var out strings.Builder
	examples := 0
	for i := 0; i < len(lines); i++ {
		out.WriteString(lines[i])
		if strings.TrimSpace(lines[i]) != "```console" {
			continue
		}
		// One block: commands and the output each prints.
		var block []string
		for i++; i < len(lines) && strings.TrimSpace(lines[i]) != "```"; i++ {
			block = append(block, strings.TrimSuffix(lines[i], "\n"))
		}
		for j := 0; j < len(block); {
			cmd := block[j]
			if !strings.HasPrefix(cmd, "$ fixpoint ") {
				t.Fatalf("README.md: console block line %q: want a line starting \"$ fixpoint \"", cmd)
			}
			k := j + 1
			for k < len(block) && !strings.HasPrefix(block[k], "$ ") {
				k++
			}
			want := block[j+1 : k]
			args, err := shellFields(strings.TrimPrefix(cmd, "$ fixpoint "))
			if err != nil {
				t.Fatalf("README.md: %s: %v", cmd, err)
			}
			var stdout, stderr bytes.Buffer
			code := run(args, bytes.NewReader(nil), &stdout, &stderr)
			examples++
			got := strings.Split(strings.TrimSuffix(stdout.String()+stderr.String(), "\n"), "\n")
			if stdout.Len()+stderr.Len() == 0 {
				got = nil
			}
			if code != 0 && code != exitUncertified && !strings.Contains(strings.Join(want, "\n"), "fixpoint: ") {
				t.Errorf("README.md: %s: exit %d:\n%s", cmd, code, stderr.String())
			}
			elided := false
			for _, w := range want {
				elided = elided || w == "..."
			}
			switch {
			case *update && !elided:
				out.WriteString(cmd + "\n")
				for _, g := range got {
					out.WriteString(g + "\n")
				}
			default:
				if *update {
					out.WriteString(strings.Join(block[j:k], "\n") + "\n")
				}
				if !matchLines(got, want) {
					t.Errorf("README.md: %s: the output differs from the README (rerun with -update for blocks without \"...\"):\n--- got\n%s\n--- README\n%s",
						cmd, strings.Join(got, "\n"), strings.Join(want, "\n"))
				}
			}
			j = k
		}
		if i < len(lines) {
			out.WriteString(lines[i])
		}
	}
	if examples == 0 {
		t.Fatal("README.md has no ```console examples")
	}
	if *update {
		if err := os.WriteFile(filepath.Join(wd, path), []byte(out.String()), 0o644); err != nil {
			t.Fatal(err)
		}
	}
}

// matchLines matches got against want, where a want line "..." matches
// any run of lines (also none).
func matchLines(got, want []string) bool {
	if len(want) == 0 {
		return len(got) == 0
	}
	if want[0] == "..." {
		for i := 0; i <= len(got); i++ {
			if matchLines(got[i:], want[1:]) {
				return true
			}
		}
		return false
	}
	return len(got) > 0 && strings.TrimRight(got[0], " ") == strings.TrimRight(want[0], " ") && matchLines(got[1:], want[1:])
}

// shellFields splits a command line as a POSIX shell would for the
// examples of the README: blanks separate words, and "..." or '...' quote
// them (no escapes, variables or globs, which the examples do not use).
func shellFields(line string) ([]string, error) {
	var words []string
	var word strings.Builder
	inWord := false
	var quote rune
	for _, r := range line {
		switch {
		case quote != 0 && r == quote:
			quote = 0
		case quote != 0:
			word.WriteRune(r)
		case r == '"' || r == '\'':
			quote, inWord = r, true
		case r == ' ' || r == '\t':
			if inWord {
				words = append(words, word.String())
				word.Reset()
				inWord = false
			}
		default:
			word.WriteRune(r)
			inWord = true
		}
	}
	if quote != 0 {
		return nil, fmt.Errorf("unclosed %c quote", quote)
	}
	if inWord {
		words = append(words, word.String())
	}
	return words, nil
}

// readmeBlocks returns the fenced blocks of the README with their info
// string ("sh", "console", "" ...), the line before the fence and the
// line number of the fence.
type readmeBlock struct {
	info, before string
	line         int
	body         []string
}

// readmePath is the README's absolute path (tests change directory).
var readmePath, _ = filepath.Abs(filepath.Join("..", "..", "README.md"))

func readmeBlocks(t *testing.T) []readmeBlock {
	t.Helper()
	data, err := os.ReadFile(readmePath)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(string(data), "\n")
	var out []readmeBlock
	for i := 0; i < len(lines); i++ {
		if !strings.HasPrefix(lines[i], "```") {
			continue
		}
		b := readmeBlock{info: strings.TrimPrefix(lines[i], "```"), line: i + 1}
		if i > 0 {
			b.before = lines[i-1]
		}
		for i++; i < len(lines) && lines[i] != "```"; i++ {
			b.body = append(b.body, lines[i])
		}
		out = append(out, b)
	}
	return out
}

// inScratch runs f in a scratch directory holding a copy of configs/.
func inScratch(t *testing.T, f func()) {
	t.Helper()
	scratch := t.TempDir()
	if err := copyDir(filepath.Join("..", "..", "configs"), filepath.Join(scratch, "configs")); err != nil {
		t.Fatal(err)
	}
	wd, _ := os.Getwd()
	if err := os.Chdir(scratch); err != nil {
		t.Fatal(err)
	}
	defer os.Chdir(wd)
	f()
}

// TestREADMEShellExamples runs every `go run ./cmd/fixpoint ...` and
// `fixpoint ...` line of the README's ```sh blocks (the set-up command,
// the install check and the examples that write files; a trailing
// backslash continues a line, "# ..." is a comment, " && " separates
// commands) and wants each to succeed, so that no example goes stale.
func TestREADMEShellExamples(t *testing.T) {
	const prefix = "go run ./cmd/fixpoint "
	ran := 0
	inScratch(t, func() {
		for _, b := range readmeBlocks(t) {
			if b.info != "sh" {
				continue
			}
			var joined []string
			cont := ""
			for _, l := range b.body {
				if i := strings.Index(l, " #"); i >= 0 {
					l = l[:i]
				}
				l = strings.TrimSpace(l)
				if strings.HasSuffix(l, "\\") {
					cont += strings.TrimSuffix(l, "\\") + " "
					continue
				}
				joined = append(joined, cont+l)
				cont = ""
			}
			var commands []string
			for _, l := range joined {
				if strings.HasPrefix(l, "fixpoint ") {
					for _, c := range strings.Split(l, " && ") {
						commands = append(commands, "go run ./cmd/"+strings.TrimSpace(c))
					}
				} else {
					commands = append(commands, l)
				}
			}
			for _, l := range commands {
				if !strings.HasPrefix(l, prefix) {
					continue
				}
				args, err := shellFields(strings.TrimPrefix(l, prefix))
				if err != nil {
					t.Fatalf("README.md:%d: %s: %v", b.line, l, err)
				}
				var stdout, stderr bytes.Buffer
				if code := run(args, bytes.NewReader(nil), &stdout, &stderr); code != 0 {
					t.Errorf("README.md:%d: %s: exit %d:\n%s", b.line, l, code, stderr.String())
				}
				ran++
			}
		}
	})
	if ran == 0 {
		t.Fatal("README.md has no `go run ./cmd/fixpoint` line in a ```sh block")
	}
}

// TestREADMEJSONKeys checks each JSON sketch of the README against the
// JSON the command really writes. A sketch is a plain ``` block right
// after a line
//
//	<!-- json-keys: solve configs/pumps.yaml ;; ... | optional: tied -->
//
// naming one or more runs (their union of keys is compared); every key of
// the real output must be in the sketch and every key of the sketch in
// the output, except those listed as optional. Keys of maps by name
// (states, actions, classes) are left out: a key that is also a string
// value somewhere in the output, or a name of the model, is a name.
func TestREADMEJSONKeys(t *testing.T) {
	keyRe := regexp.MustCompile(`"([A-Za-z_][A-Za-z0-9_]*)"`)
	checked := 0
	inScratch(t, func() {
		for _, b := range readmeBlocks(t) {
			tag, ok := strings.CutPrefix(strings.TrimSpace(b.before), "<!-- json-keys:")
			if !ok {
				continue
			}
			tag = strings.TrimSpace(strings.TrimSuffix(strings.TrimSpace(tag), "-->"))
			runs, opt, _ := strings.Cut(tag, "| optional:")
			optional := map[string]bool{}
			for _, k := range strings.Split(opt, ",") {
				optional[strings.TrimSpace(k)] = true
			}
			real, names := map[string]bool{}, map[string]bool{}
			for _, r := range strings.Split(runs, ";;") {
				args, err := shellFields(strings.TrimSpace(r))
				if err != nil {
					t.Fatalf("README.md:%d: %v", b.line, err)
				}
				args = append(args, "--format", "json")
				var stdout, stderr bytes.Buffer
				if code := run(args, bytes.NewReader(nil), &stdout, &stderr); code != 0 && code != exitUncertified {
					t.Fatalf("README.md:%d: fixpoint %s: exit %d: %s", b.line, strings.Join(args, " "), code, stderr.String())
				}
				var v any
				if err := json.Unmarshal(stdout.Bytes(), &v); err != nil {
					t.Fatalf("README.md:%d: fixpoint %s: %v", b.line, strings.Join(args, " "), err)
				}
				jsonKeys(v, real, names)
				for _, a := range args {
					modelNames(a, names)
				}
			}
			sketch := map[string]bool{}
			text := strings.Join(b.body, "\n")
			for _, m := range keyRe.FindAllStringSubmatchIndex(text, -1) {
				before := strings.TrimRight(text[:m[0]], " ")
				after := strings.TrimLeft(text[m[1]:], " ")
				if strings.HasSuffix(before, ":") || strings.HasSuffix(before, "|") || strings.HasPrefix(after, "|") {
					continue // a value, not a key
				}
				sketch[text[m[2]:m[3]]] = true
			}
			for k := range real {
				if !sketch[k] && !names[k] {
					t.Errorf("README.md:%d: the JSON of %q has key %q, which the sketch does not show", b.line, runs, k)
				}
			}
			for k := range sketch {
				if !real[k] && !optional[k] {
					t.Errorf("README.md:%d: the sketch shows key %q, which the JSON of %q does not have (mark it optional if it appears only sometimes)", b.line, k, runs)
				}
			}
			checked++
		}
	})
	if checked < 8 {
		t.Errorf("README.md: %d JSON sketches checked, want at least 8", checked)
	}
}

// modelNames adds the state, action, class and component names of the
// model file at path (if it is one) to names.
func modelNames(path string, names map[string]bool) {
	f, err := modelfile.Load(context.Background(), path, modelfile.Options{})
	if err != nil {
		return
	}
	var models []*condition.Model
	switch {
	case f.Class != nil:
		models = append(models, f.Class.Model)
	case f.System != nil:
		for _, c := range f.System.Components {
			names[c.Name] = true
			models = append(models, c.Model)
		}
	case f.Fleet != nil:
		for i, c := range f.Fleet.Classes {
			names[f.Fleet.Names[i]] = true
			models = append(models, c.Model)
		}
	}
	for _, m := range models {
		for _, n := range append(m.StateNames(), m.ActionNames()...) {
			names[n] = true
		}
	}
}

// jsonKeys adds the object keys of v to keys and its string values to
// names.
func jsonKeys(v any, keys, names map[string]bool) {
	switch x := v.(type) {
	case map[string]any:
		for k, e := range x {
			keys[k] = true
			jsonKeys(e, keys, names)
		}
	case []any:
		for _, e := range x {
			jsonKeys(e, keys, names)
		}
	case string:
		names[x] = true
	}
}

// TestREADMESynopsis checks the synopsis under "Commands and settings":
// every flag it shows for a command is a flag of that command, and every
// flag of every command is shown.
func TestREADMESynopsis(t *testing.T) {
	var block []string
	for _, b := range readmeBlocks(t) {
		if b.info == "" && len(b.body) > 0 && strings.HasPrefix(b.body[0], "fixpoint ") {
			block = b.body
			break
		}
	}
	if block == nil {
		t.Fatal("README.md has no synopsis block (a plain ``` block starting \"fixpoint \")")
	}
	a := &app{stdin: bytes.NewReader(nil), stdout: io.Discard, stderr: io.Discard}
	root := a.newRoot()
	shown := map[string]map[string]bool{}
	cmd := ""
	flagRe := regexp.MustCompile(`(?:^|[ \[|(])(-[a-z]\b|--[a-z][a-z0-9-]*)`)
	global := map[string]bool{}
	for _, l := range block {
		if f := strings.Fields(l); len(f) > 1 && f[0] == "fixpoint" {
			cmd = f[1]
		}
		if strings.HasPrefix(l, "global:") {
			cmd = ""
			for _, m := range flagRe.FindAllStringSubmatch(l, -1) {
				global[strings.TrimLeft(m[1], "-")] = true
			}
		}
		if cmd == "" {
			continue
		}
		if shown[cmd] == nil {
			shown[cmd] = map[string]bool{}
		}
		for _, m := range flagRe.FindAllStringSubmatch(l, -1) {
			name := strings.TrimLeft(m[1], "-")
			if len(m[1]) == 2 { // a shorthand
				if c, _, err := root.Find([]string{cmd}); err == nil && c.Flags().ShorthandLookup(name) != nil {
					name = c.Flags().ShorthandLookup(name).Name
				}
			}
			shown[cmd][name] = true
		}
	}
	root.InitDefaultVersionFlag()
	for _, fs := range []*pflag.FlagSet{root.PersistentFlags(), root.LocalFlags()} {
		fs.VisitAll(func(f *pflag.Flag) {
			if f.Name != "help" && !global[f.Name] {
				t.Errorf("README.md synopsis: the global flag --%s is not shown on the \"global:\" line", f.Name)
			}
		})
	}
	for _, c := range root.Commands() {
		if c.Hidden || c.Name() == "help" || c.Name() == "completion" {
			continue
		}
		if shown[c.Name()] == nil {
			t.Errorf("README.md synopsis: no line for fixpoint %s", c.Name())
			continue
		}
		c.LocalFlags().VisitAll(func(f *pflag.Flag) {
			if f.Name != "help" && !shown[c.Name()][f.Name] {
				t.Errorf("README.md synopsis: fixpoint %s --%s is not shown", c.Name(), f.Name)
			}
		})
		for name := range shown[c.Name()] {
			if c.Flags().Lookup(name) == nil && root.PersistentFlags().Lookup(name) == nil {
				t.Errorf("README.md synopsis: fixpoint %s has no flag --%s", c.Name(), name)
			}
		}
	}
}

// TestREADMEConfigs writes each ```yaml block preceded by "<!-- checked -->"
// into configs/ of a scratch copy (so that a fleet's relative paths
// resolve), without the lines ending in "{...}" (blocks documented
// elsewhere), and wants `fixpoint check` to accept it.
func TestREADMEConfigs(t *testing.T) {
	checked := 0
	inScratch(t, func() {
		for _, b := range readmeBlocks(t) {
			if b.info != "yaml" || strings.TrimSpace(b.before) != "<!-- checked -->" {
				continue
			}
			var keep []string
			for _, l := range b.body {
				if code, _, _ := strings.Cut(l, "#"); !strings.HasSuffix(strings.TrimSpace(code), "{...}") {
					keep = append(keep, l)
				}
			}
			path := filepath.Join("configs", fmt.Sprintf("readme-%d.yaml", b.line))
			if err := os.WriteFile(path, []byte(strings.Join(keep, "\n")+"\n"), 0o644); err != nil {
				t.Fatal(err)
			}
			var stdout, stderr bytes.Buffer
			if code := run([]string{"check", path}, bytes.NewReader(nil), &stdout, &stderr); code != 0 {
				t.Errorf("README.md:%d: fixpoint check: exit %d:\n%s", b.line, code, stderr.String())
			}
			checked++
		}
	})
	if checked < 2 {
		t.Errorf("README.md: %d checked configs, want at least 2", checked)
	}
}

// Every project file the README names in backquotes (a test file, a config,
// a package folder's Go file) exists, so that "checked in X_test.go" stays
// true when files move.
func TestREADMEFilePaths(t *testing.T) {
	data, err := os.ReadFile(readmePath)
	if err != nil {
		t.Fatal(err)
	}
	re := regexp.MustCompile("`((?:cmd|condition|costs|optimize|reports|configs|testdata|docs)/[A-Za-z0-9_./-]+\\.(?:go|yaml|csv|json|png))`")
	for _, m := range re.FindAllStringSubmatch(string(data), -1) {
		if _, err := os.Stat(filepath.Join("..", "..", m[1])); err != nil {
			t.Errorf("README names %s, which does not exist", m[1])
		}
	}
}
