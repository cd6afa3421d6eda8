package main

import (
	"os"
	"strings"
	"testing"
)

// The smaller faults of the adversarial pass: each bad value is reported
// once, located, with no follow-on fault, and a flag value out of range is
// refused with a message that says what range it wants.
func TestSmallerFaults(t *testing.T) {
	base, err := os.ReadFile(demo)
	if err != nil {
		t.Fatal(err)
	}
	edit := func(old, new string) string {
		s := string(base)
		if !strings.Contains(s, old) {
			t.Fatalf("demo lacks %q", old)
		}
		return strings.Replace(s, old, new, 1)
	}
	for _, tc := range []struct {
		name, config string
		want         []string
		not          []string
	}{
		{"period 0", edit("period_years: 1", "period_years: 0"), []string{"period_years: period of 0 years"}, []string{"discount"}},
		{"period as a word", edit("period_years: 1", "period: one"), []string{`missing required key "period_years"`, `unknown key "period"`}, []string{"0 years"}},
		{"long name", edit("{name: sound,", "{name: "+strings.Repeat("s", 201)+","), []string{"name is 201 bytes long, over the limit of 200"}, []string{"empty"}},
		{"name with =", edit("{name: sound,", "{name: so=und,"), []string{`name "so=und" contains "," or "="`}, nil},
	} {
		t.Run(tc.name, func(t *testing.T) {
			path := writeFile(t, "c.yaml", tc.config)
			code, _, stderr := runCLI(t, "check", path)
			if code != exitInput {
				t.Fatalf("exit %d, want %d:\n%s", code, exitInput, stderr)
			}
			for _, w := range tc.want {
				if strings.Count(stderr, w) != 1 {
					t.Errorf("want %q once in:\n%s", w, stderr)
				}
			}
			for _, n := range tc.not {
				if strings.Contains(stderr, n) {
					t.Errorf("follow-on fault %q in:\n%s", n, stderr)
				}
			}
		})
	}
	for _, tc := range []struct {
		args []string
		want string
	}{
		{[]string{"plan", demoFleet, "--budget", "1e300"}, "is not a budget in [0, 1e15]"},
		{[]string{"forecast", demo, "--mix", "sound=1e308"}, "is not a count or share in [0, 1e12]"},
		{[]string{"forecast", demoFleet, "--simulate", "10", "--units", "1e307", "--format", "json"}, "is not a number of units in (0, 1e12]"},
	} {
		code, stdout, stderr := runCLI(t, tc.args...)
		if code != exitUsage || !strings.Contains(stderr, tc.want) || stdout != "" {
			t.Errorf("%v: exit %d, stdout %q, stderr %q; want exit %d and %q", tc.args, code, stdout, stderr, exitUsage, tc.want)
		}
	}
}
