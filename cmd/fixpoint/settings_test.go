package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/spf13/cobra"
)

// Precedence of run-time settings: flag > FIXPOINT_* env > settings file >
// default, checked in-process on the method and the discount rate.
func TestSettingsPrecedence(t *testing.T) {
	dir := t.TempDir()
	file := filepath.Join(dir, "run.toml")
	if err := os.WriteFile(file, []byte("method = \"lp\"\nrate = \"0.05\"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		name       string
		env        map[string]string
		args       []string
		wantMethod string
		wantRate   float64
	}{
		{"defaults", nil, nil, "policy", 0.04},
		{"file", nil, []string{"--settings", file}, "lp", 0.05},
		{"env over file", map[string]string{"FIXPOINT_METHOD": "value", "FIXPOINT_RATE": "0.06"}, []string{"--settings", file}, "value", 0.06},
		{"flag over env", map[string]string{"FIXPOINT_METHOD": "value"}, []string{"--settings", file, "--method", "policy", "--rate", "7%"}, "policy", 0.07},
		{"file from env", map[string]string{"FIXPOINT_SETTINGS": file}, nil, "lp", 0.05},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			for k, v := range tc.env {
				t.Setenv(k, v)
			}
			code, out, stderr := runCLI(t, append([]string{"solve", demo, "--format", "json"}, tc.args...)...)
			if code != 0 {
				t.Fatalf("exit %d: %s", code, stderr)
			}
			var doc struct {
				Method string  `json:"method"`
				Rate   float64 `json:"discount_rate"`
			}
			if err := json.Unmarshal([]byte(out), &doc); err != nil {
				t.Fatal(err)
			}
			if doc.Method != tc.wantMethod || doc.Rate != tc.wantRate {
				t.Errorf("method %q, rate %g; want %q, %g", doc.Method, doc.Rate, tc.wantMethod, tc.wantRate)
			}
		})
	}
}

// Every command's --help shows examples, the root's and completion's too.
func TestEveryCommandHasExamples(t *testing.T) {
	var walk func(c *cobra.Command)
	walk = func(c *cobra.Command) {
		if !c.Hidden && c.Name() != "help" && strings.TrimSpace(c.Example) == "" {
			t.Errorf("%q has no examples in its help", c.CommandPath())
		}
		for _, sub := range c.Commands() {
			walk(sub)
		}
	}
	walk((&app{}).newRoot())
}
