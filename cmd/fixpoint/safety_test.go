package main

import (
	"path/filepath"
	"strings"
	"testing"
)

// safetyOutputs runs every output of the files under testdata/safety of
// kind (stay or oos) that takes a class, its fleet or its system, and
// returns each one's text (stdout, or the brief's PDF text) with runs of
// white space made single spaces, by a name for the failure message.
func safetyOutputs(t *testing.T, kind string) map[string]string {
	t.Helper()
	dir := filepath.Join("testdata", "safety")
	class, fleet, system := filepath.Join(dir, kind+"-class.yaml"), filepath.Join(dir, kind+"-fleet.yaml"), filepath.Join(dir, kind+"-system.yaml")
	out := map[string]string{}
	flat := func(s string) string { return strings.Join(strings.Fields(s), " ") }
	for _, format := range []string{"table", "json", "csv"} {
		for name, args := range map[string][]string{
			"compare":             {"compare", class, "--rates", "3%,5%"},
			"sensitivity":         {"sensitivity", class},
			"plan":                {"plan", fleet, "--simulate", "0"},
			"forecast --simulate": {"forecast", fleet, "--simulate", "20"},
			"solve system":        {"solve", system},
		} {
			code, stdout, stderr := runCLI(t, append(args, "--format", format)...)
			if code != 0 {
				t.Fatalf("%v --format %s: exit %d: %s", args, format, code, stderr)
			}
			out[name+" "+format] = flat(stdout)
		}
	}
	for name, path := range map[string]string{"fleet brief": fleet, "system brief": system} {
		out[name] = flat(pdfText(t, writeBrief(t, path)))
	}
	return out
}

// A unit that enters an unsafe state and is expected to stay unsafe for
// more than a period under the advice gets a warning in every output, not
// only those of solve, forecast and brief of a class: across rates, in
// the sensitivity, in a fleet's plan, brief and simulation, and in a
// system's joint advice. The stay is 1/(1-0.99) = 100 periods (closed
// form of a geometric sojourn, from memory).
func TestStaysUnsafeWarningInEveryOutput(t *testing.T) {
	want := map[string]string{
		"compare":     "At rates 3.00% real, 5.00% real: Under the advice a unit that becomes failed is expected to stay in unsafe states for 100.00 periods",
		"sensitivity": "Under the advice a unit that becomes failed is expected to stay in unsafe states for 100.00 periods",
		"plan":        "Under the plan a unit of class pumps that becomes failed is expected to stay in unsafe states for 100.00 periods",
		"forecast":    "Under the plan a unit of class pumps that becomes failed is expected to stay in unsafe states for 100.00 periods",
		"fleet":       "Under the plan a unit of class pumps that becomes failed is expected to stay in unsafe states for 100.00 periods",
		"solve":       "Under the joint advice component rope that becomes discard is expected to stay in unsafe states for 100.00 periods (50.00 years)",
		"system":      "Under the joint advice component rope that becomes discard is expected to stay in unsafe states for 100.00 periods (50.00 years)",
	}
	for name, text := range safetyOutputs(t, "stay") {
		w := want[strings.Fields(name)[0]]
		if !strings.Contains(text, w) {
			t.Errorf("%s lacks %q:\n%s", name, w, text)
		}
	}
}

// An out-of-service action that is advised is said in words in every
// output; check names it and where it is admissible.
func TestOutOfServiceSaidInEveryOutput(t *testing.T) {
	const class = "In failed the advice is patch, which takes the unit out of service"
	const fleet = "In failed (class pumps) the advice is patch, which takes the unit out of service"
	const system = "In discard (component rope) the advice is lock_out, which takes the unit out of service"
	want := map[string]string{"compare": "At rates 3.00% real, 5.00% real: " + class, "sensitivity": class,
		"plan": fleet, "forecast": fleet, "fleet": fleet, "solve": system, "system": system}
	for name, text := range safetyOutputs(t, "oos") {
		w := want[strings.Fields(name)[0]]
		if !strings.Contains(text, w) {
			t.Errorf("%s lacks %q:\n%s", name, w, text)
		}
	}
	for path, w := range map[string]string{
		"oos-class.yaml":  "note: action patch takes the unit out of service (out_of_service: true); it is admissible in failed",
		"oos-fleet.yaml":  "note: class pumps: action patch takes the unit out of service (out_of_service: true); it is admissible in failed",
		"oos-system.yaml": "note: component rope: action lock_out takes the unit out of service (out_of_service: true); it is admissible in discard",
	} {
		code, stdout, stderr := runCLI(t, "check", filepath.Join("testdata", "safety", path))
		if code != 0 || !strings.Contains(stdout, w) {
			t.Errorf("check %s: exit %d, stdout lacks %q:\n%s%s", path, code, w, stdout, stderr)
		}
	}
}
