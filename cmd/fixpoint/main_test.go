package main

import (
	"bytes"
	"flag"
	"os"
	"path/filepath"
	"testing"

	"github.com/rogpeppe/go-internal/testscript"
)

var update = flag.Bool("update", false, "rewrite golden files and script outputs")

func TestMain(m *testing.M) {
	testscript.Main(m, map[string]func(){"fixpoint": main})
}

// TestScripts runs the end-to-end scripts in testdata/script: exit codes,
// error text and files written, with the demo configs copied into $WORK.
func TestScripts(t *testing.T) {
	testscript.Run(t, testscript.Params{
		Dir:           "testdata/script",
		UpdateScripts: *update,
		Setup: func(env *testscript.Env) error {
			env.Setenv("NO_COLOR", "1")
			return copyDir(filepath.Join("..", "..", "configs"), filepath.Join(env.WorkDir, "configs"))
		},
	})
}

func copyDir(from, to string) error {
	entries, err := os.ReadDir(from)
	if err != nil {
		return err
	}
	if err := os.MkdirAll(to, 0o755); err != nil {
		return err
	}
	for _, e := range entries {
		if e.IsDir() {
			continue
		}
		data, err := os.ReadFile(filepath.Join(from, e.Name()))
		if err != nil {
			return err
		}
		if err := os.WriteFile(filepath.Join(to, e.Name()), data, 0o644); err != nil {
			return err
		}
	}
	return nil
}

// runCLI runs the command in-process and returns its exit code and output.
func runCLI(t *testing.T, args ...string) (code int, stdout, stderr string) {
	t.Helper()
	var out, errb bytes.Buffer
	code = run(args, bytes.NewReader(nil), &out, &errb)
	return code, out.String(), errb.String()
}

// golden compares got with testdata/golden/name, rewriting it under -update.
func golden(t *testing.T, name, got string) {
	t.Helper()
	path := filepath.Join("testdata", "golden", name)
	if *update {
		if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(path, []byte(got), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test ./cmd/fixpoint -run %s -update to create it)", err, t.Name())
	}
	if got != string(want) {
		t.Errorf("output differs from %s (rerun with -update after checking the change):\n--- got\n%s\n--- want\n%s", path, got, want)
	}
}
