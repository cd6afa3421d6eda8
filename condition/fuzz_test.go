package condition

import (
	"strings"
	"testing"
)

// FuzzReadRecords: any input gives an error or records that BuildPanel
// accepts, and a survey that agrees with itself; never a panic.
func FuzzReadRecords(f *testing.F) {
	f.Add("unit,date,condition,action\np1,2020-01-01,good,\np1,2021-01-03,worn,\np1,2022-01-02,good,overhaul\n")
	f.Add("Unit,Date,Condition\n\"a\",2020-02-29,failed\n")
	f.Add("unit,date,condition\np,2020-01-01\n")
	f.Add("\ufeffunit;date;condition\n")
	f.Fuzz(func(t *testing.T, in string) {
		if sv, warn, err := SurveyRecords(strings.NewReader(in)); err == nil {
			checkWarnings(t, "SurveyRecords", warn, 3)
			if sv.Records > 0 && (sv.Units == 0 || sv.Units > sv.Records || len(sv.Conditions) == 0 || sv.First > sv.Last) {
				t.Fatalf("survey %+v", sv)
			}
		}
		recs, warn, err := ReadRecords(strings.NewReader(in), scale3)
		if err != nil {
			return
		}
		checkWarnings(t, "ReadRecords", warn, 3)
		for _, r := range recs {
			if r.Condition < 0 || r.Condition >= len(scale3) || r.Unit == "" {
				t.Fatalf("bad record %+v", r)
			}
		}
		p, _, warn := BuildPanel(recs, PanelOptions{Actions: []string{"leave"}, NewActions: true})
		checkWarnings(t, "BuildPanel", warn, 5)
		for _, tr := range p.Transitions {
			if tr.Days <= 0 {
				t.Fatalf("transition of %d days", tr.Days)
			}
		}
	})
}

// checkWarnings checks that warnings come one per kind (at most kinds of
// them) and that each is bounded in size and free of control characters.
func checkWarnings(t *testing.T, what string, warn []Warning, kinds int) {
	t.Helper()
	if len(warn) > kinds {
		t.Fatalf("%s: %d warnings, want at most %d (one per kind): %v", what, len(warn), kinds, warn)
	}
	for _, w := range warn {
		// 10 names or 5 values of at most maxQuoted bytes each, escaped
		// (at most 4 bytes per byte), and the fixed text.
		if len(w.Message) > 2048 {
			t.Fatalf("%s: warning of %d bytes: %.200q", what, len(w.Message), w.Message)
		}
		if strings.ContainsFunc(w.Message, func(r rune) bool { return r < ' ' || r == 0x7f }) {
			t.Fatalf("%s: warning with a control character: %q", what, w.Message)
		}
	}
}
