package main

import (
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

// kindFiles writes or names one file of every kind a user may hand to a
// command.
func kindFiles(t *testing.T) map[string]string {
	dir := t.TempDir()
	write := func(name string, data []byte) string {
		path := filepath.Join(dir, name)
		if err := os.WriteFile(path, data, 0o644); err != nil {
			t.Fatal(err)
		}
		return path
	}
	return map[string]string{
		"class":     demo,
		"system":    demoSystem,
		"fleet":     demoFleet,
		"records":   demoRecords,
		"inventory": "../../configs/east-zone-inventory.csv",
		"settings":  write("run.yaml", []byte("method: policy\ntol: 0.01\n")),
		"empty":     write("empty.yaml", nil),
		"binary":    write("blob.bin", []byte{0x7f, 'E', 'L', 'F', 2, 1, 1, 0, 0, 0, 0xff, 0xfe}),
	}
}

var kinds = []string{"class", "system", "fleet", "records", "inventory", "settings", "empty", "binary"}

// accepts lists, per command, the kinds it does its job on, with the
// arguments that job needs.
var accepts = map[string]map[string][]string{
	"solve":       {"class": nil, "system": nil},
	"check":       {"class": nil, "system": nil, "fleet": nil, "records": nil},
	"compare":     {"class": nil},
	"sensitivity": {"class": nil},
	"forecast":    {"class": {"--from", "sound"}, "fleet": {"--simulate", "20"}},
	"plan":        {"fleet": nil},
	"brief":       {"class": {"-o", "OUT.pdf"}, "system": {"-o", "OUT.pdf"}, "fleet": {"-o", "OUT.pdf"}},
	"fit":         {"records": {"--config", demo, "--bootstrap", "0"}},
}

// defaultArgs are what a command is given with a file of a kind it does
// not take: the arguments of its first accepted kind.
func defaultArgs(cmd string) []string {
	acc := accepts[cmd]
	for _, k := range kinds {
		if args, ok := acc[k]; ok {
			return args
		}
	}
	return nil
}

// Every command given every kind of file does its job (exit 0), or exits 1
// with one line naming the commands that take that kind; never a stack
// trace. The outputs are kept as golden files in testdata/matrix at the
// top of the project.
func TestCommandFileKindMatrix(t *testing.T) {
	files := kindFiles(t)
	out := t.TempDir()
	cmds := make([]string, 0, len(accepts))
	for c := range accepts {
		cmds = append(cmds, c)
	}
	slices.Sort(cmds)
	for _, cmd := range cmds {
		for _, kind := range kinds {
			t.Run(cmd+"/"+kind, func(t *testing.T) {
				args, ok := accepts[cmd][kind]
				if !ok {
					args = defaultArgs(cmd)
				}
				args = slices.Clone(args)
				for i, a := range args {
					if a == "OUT.pdf" {
						args[i] = filepath.Join(out, cmd+"-"+kind+".pdf")
					}
				}
				code, stdout, stderr := runCLI(t, append([]string{cmd, files[kind]}, args...)...)
				if strings.Contains(stderr, "goroutine ") || strings.Contains(stderr, "panic") {
					t.Fatalf("stack trace:\n%s", stderr)
				}
				switch {
				case ok && code != 0:
					t.Errorf("exit %d, want 0; stderr:\n%s", code, stderr)
				case !ok && code != exitInput:
					t.Errorf("exit %d, want %d; stderr:\n%s", code, exitInput, stderr)
				case !ok && (strings.Count(stderr, "\n") != 1 || !strings.Contains(stderr, "take")):
					t.Errorf("want one line naming the commands that take a %s file, got:\n%s", kind, stderr)
				}
				if cmd == "brief" {
					stdout = "" // the PDF is checked by the brief tests
				}
				text := fmt.Sprintf("$ fixpoint %s %s %s\nexit %d\n--- stdout\n%s--- stderr\n%s", cmd, kind, strings.Join(args, " "), code, stdout, stderr)
				text = strings.NewReplacer(files["settings"], "run.yaml", files["empty"], "empty.yaml", files["binary"], "blob.bin", out+"/", "").Replace(text)
				golden(t, filepath.Join("..", "..", "..", "..", "testdata", "matrix", cmd+"-"+kind+".txt"), text)
			})
		}
	}
}
