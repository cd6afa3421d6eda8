package condition

import (
	"context"
	"fmt"
	"slices"
	"strconv"
	"strings"
	"testing"
)

var scale3 = []string{"good", "worn", "failed"}

func TestReadRecords(t *testing.T) {
	in := "Unit,Date,Condition,Action,notes\n" +
		"p1,2020-01-10,good,,first\n" +
		"p1,2021-01-12,worn,,\n" +
		"p2,2020-13-01,good,,bad month\n" +
		"p2,2020-02-01,broken,,\n" +
		",2020-02-01,good,,\n" +
		"p3,2020-02-01,good,overhaul,\n"
	recs, warn, err := ReadRecords(strings.NewReader(in), scale3)
	if err != nil {
		t.Fatal(err)
	}
	if len(recs) != 3 || recs[2].Action != "overhaul" || recs[1].Line != 3 {
		t.Errorf("records %+v", recs)
	}
	want := []struct {
		line int
		text string
	}{{4, `date "2020-13-01" is not YYYY-MM-DD`}, {5, `unknown condition "broken"`}, {6, "no unit"}}
	if len(warn) != len(want) {
		t.Fatalf("warnings %+v", warn)
	}
	for i, w := range want {
		if warn[i].Line != w.line || !strings.Contains(warn[i].Message, w.text) {
			t.Errorf("warning %d = %+v, want line %d %q", i, warn[i], w.line, w.text)
		}
	}
}

func TestReadRecordsErrors(t *testing.T) {
	for _, tc := range []struct{ in, want string }{
		{"", "the file is empty"},
		{"unit,condition\np,good\n", `no "date" column`},
		{"unit,date,condition,date\n", `column "date" appears twice`},
		{"unit,date,condition\n\"p1,2020-01-01,good\n", "line 2"},
	} {
		if _, _, err := ReadRecords(strings.NewReader(tc.in), scale3); err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("ReadRecords(%q) error %v, want %q", tc.in, err, tc.want)
		}
	}
}

func TestBuildPanelReportsProblems(t *testing.T) {
	in := "unit,date,condition,action\n" +
		"a,2021-01-01,worn,\n" + // line 2
		"a,2020-01-01,good,\n" + // 3: out of order
		"a,2022-01-01,good,\n" + // 4: improvement, no work
		"a,2022-01-01,worn,\n" + // 5: same date
		"b,2020-01-01,good,\n" + // 6: single inspection
		"c,2020-01-01,worn,\n" + // 7
		"c,2021-01-01,good,overhaul\n" + // 8: improvement with work: fine
		"c,2022-01-01,worn,scrub\n" // 9: unknown work
	recs, _, err := ReadRecords(strings.NewReader(in), scale3)
	if err != nil {
		t.Fatal(err)
	}
	for _, asError := range []bool{false, true} {
		p, _, warn := BuildPanel(recs, PanelOptions{Actions: []string{"leave", "overhaul"}, Passive: 0, ImprovementIsError: asError})
		text := ""
		for _, w := range warn {
			text += "\n" + strconv.Itoa(w.Line) + ": " + w.Message
		}
		for _, w := range []string{"3: unit a: dates out of order", "5: unit a: a second inspection on the same date",
			"6: unit b has a single inspection", `9: unknown work "scrub"`, "0: 1 improvements with no recorded work in 1 units (a; lines 4)"} {
			if !strings.Contains(text, w) {
				t.Errorf("ImprovementIsError=%v: warnings lack %q:%s", asError, w, text)
			}
		}
		// a: good(2020) -> worn(2021) -> good(2022, improvement); c: worn -> good by overhaul.
		if len(p.Transitions) != 3 {
			t.Fatalf("transitions %+v", p.Transitions)
		}
		last := p.Transitions[1]
		if want := map[bool]int{false: 0, true: 1}[asError]; last.To != want {
			t.Errorf("ImprovementIsError=%v: improvement recorded as %d, want %d", asError, last.To, want)
		}
		if p.Transitions[2].Action != 1 || p.Transitions[2].Days != 366 {
			t.Errorf("work transition %+v", p.Transitions[2])
		}
	}
}

func TestReadRecordsLimit(t *testing.T) {
	in := "unit,date,condition\n" + strings.Repeat("a,2020-01-01,good\n", 11)
	if _, _, _, err := readRecords(context.Background(), strings.NewReader(in), scale3, 10, false); err == nil || !strings.Contains(err.Error(), "more than 10 records; split the file") {
		t.Errorf("err = %v", err)
	}
}

// longScale is a scale of 500 states with 200-byte names (the shape of an
// adversarial config), for the bound on warning text.
func longScale() []string {
	states := make([]string, 500)
	for i := range states {
		states[i] = "s" + strconv.Itoa(i) + "_" + strings.Repeat("q", 200)
	}
	return states
}

func totalText(warn []Warning) int {
	n := 0
	for _, w := range warn {
		n += len(w.Message)
	}
	return n
}

// Repeated problems are reported once per kind with a count and the first
// few lines, so the warning text stays bounded whatever the number of bad
// rows (each "unknown condition" warning once embedded the whole scale:
// 60,000 rows against 500 long names grew to gigabytes).
func TestReadRecordsSummarisesRepeats(t *testing.T) {
	states := longScale()
	const bound = 4096 // bytes of warning text, whatever the number of rows
	for _, n := range []int{7, 1000, 20000} {
		t.Run(strconv.Itoa(n), func(t *testing.T) {
			var b strings.Builder
			b.WriteString("unit,date,condition\n")
			for i := range n {
				fmt.Fprintf(&b, "u%d,2020-01-01,worn_%d\n", i, i)    // unknown condition
				fmt.Fprintf(&b, "u%d,2020-13-01,%s\n", i, states[0]) // bad date
				fmt.Fprintf(&b, ",2020-01-01,%s\n", states[0])       // no unit
			}
			_, warn, err := ReadRecords(strings.NewReader(b.String()), states)
			if err != nil {
				t.Fatal(err)
			}
			if len(warn) != 3 {
				t.Fatalf("ReadRecords(%d bad rows of 3 kinds): %d warnings, want 3 (one per kind)", 3*n, len(warn))
			}
			if got := totalText(warn); got > bound {
				t.Errorf("ReadRecords(%d bad rows): %d bytes of warning text, want at most %d", 3*n, got, bound)
			}
			text := warn[0].Message + "\n" + warn[1].Message + "\n" + warn[2].Message
			for _, want := range []string{
				fmt.Sprintf("%d records have an unknown condition and are left out: line 2 \"worn_0\", line 5 \"worn_1\"", n),
				fmt.Sprintf("%d records have a date that is not YYYY-MM-DD and are left out: line 3 \"2020-13-01\"", n),
				fmt.Sprintf("%d records have no unit and are left out: lines 4, 7, 10, 13, 16 and %d more", n, n-5),
				fmt.Sprintf("and %d more; want one of s0_", n-5),
				" and 490 more", // states listed: the first 10
			} {
				if !strings.Contains(text, want) {
					t.Errorf("ReadRecords(%d bad rows): warnings lack %q:\n%.2000s", 3*n, want, text)
				}
			}
			for _, w := range warn {
				if w.Line != 0 {
					t.Errorf("summary %q at line %d, want 0", w.Message[:40], w.Line)
				}
			}
		})
	}
}

// A lone problem keeps its line and its whole message; a value that only
// differs in case or separators from a state gets a hint.
func TestReadRecordsHint(t *testing.T) {
	in := "unit,date,condition\na,2020-01-01,Light wear\nb,2020-01-01," + strings.Repeat("x", 5000) + "\n"
	_, warn, err := ReadRecords(strings.NewReader(in), []string{"good", "light_wear"})
	if err != nil {
		t.Fatal(err)
	}
	if len(warn) != 1 || warn[0].Line != 0 {
		t.Fatalf("warnings %+v, want one summary", warn)
	}
	if want := `line 2 "Light wear" (did you mean "light_wear"?), line 3 "xxxxxxxxxx`; !strings.Contains(warn[0].Message, want) {
		t.Errorf("warning %q lacks %q", warn[0].Message, want)
	}
	if len(warn[0].Message) > 400 {
		t.Errorf("warning of %d bytes quotes a 5000-byte value whole", len(warn[0].Message))
	}
	_, warn, _ = ReadRecords(strings.NewReader("unit,date,condition\na,2020-01-01,GOOD\n"), []string{"good", "light_wear"})
	if len(warn) != 1 || warn[0].Line != 2 || warn[0].Message != `unknown condition "GOOD" (want one of good, light_wear; did you mean "good"?); record left out` {
		t.Errorf("lone warning %+v", warn)
	}
}

// BuildPanel summarises its repeated problems the same way.
func TestBuildPanelSummarisesRepeats(t *testing.T) {
	actions := []string{"leave"}
	for i := range 300 {
		actions = append(actions, "work_"+strconv.Itoa(i)+strings.Repeat("w", 100))
	}
	const bound = 4096
	for _, n := range []int{6, 5000} {
		var recs []Record
		line := 2
		add := func(unit string, day, cond int, action string) {
			recs = append(recs, Record{Line: line, Unit: unit, Day: day, Condition: cond, Action: action})
			line++
		}
		for i := range n {
			add("single"+strconv.Itoa(i), 0, 0, "")
			u := "twice" + strconv.Itoa(i)
			add(u, 400, 0, "")
			add(u, 0, 0, "") // out of order
			add(u, 0, 1, "") // same date
			add(u, 800, 1, "scrub")
		}
		_, _, warn := BuildPanel(recs, PanelOptions{Actions: actions, Passive: 0})
		if len(warn) != 4 {
			t.Fatalf("BuildPanel(%d units of each fault): %d warnings, want 4 (one per kind): %.2000v", n, len(warn), warn)
		}
		if got := totalText(warn); got > bound {
			t.Errorf("BuildPanel(%d units of each fault): %d bytes of warning text, want at most %d", n, got, bound)
		}
		text := ""
		for _, w := range warn {
			text += w.Message + "\n"
		}
		for _, want := range []string{
			fmt.Sprintf("%d units have a single inspection and give no transition: line 2 (unit single0)", n),
			fmt.Sprintf("%d units have dates out of order; sorted by date: line 4 (unit twice0, dated before line 3)", n),
			fmt.Sprintf("%d records repeat an inspection date of their unit and are left out: line 5 (unit twice0, as line 4)", n),
			fmt.Sprintf("%d intervals have unknown work and are left out: line 6 \"scrub\"", n),
			"and 291 more\n", // actions listed: the first 10 of 301
		} {
			if !strings.Contains(text, want) {
				t.Errorf("BuildPanel(%d units of each fault): warnings lack %q:\n%s", n, want, text)
			}
		}
	}
}

// SurveyRecords takes conditions as they come, in order of first
// appearance, and still leaves out records with no unit, no condition or a
// bad date, with warnings (hand-made file; expected values counted by hand).
func TestSurveyRecords(t *testing.T) {
	in := "unit,date,condition,action\n" +
		"u1,2021-01-01,good,\n" +
		"u1,2022-01-01,fair,\n" +
		"u2,2020-06-30,good,\n" +
		"u2,2023-03-01,poor,repair\n" +
		",2021-01-01,good,\n" +
		"u3,2021-02-30,good,\n" +
		"u3,2021-03-01,,\n"
	sv, warn, err := SurveyRecords(strings.NewReader(in))
	if err != nil {
		t.Fatal(err)
	}
	if sv.Records != 4 || sv.Units != 2 || !slices.Equal(sv.Conditions, []string{"good", "fair", "poor"}) || !slices.Equal(sv.Actions, []string{"repair"}) {
		t.Errorf("survey %+v", sv)
	}
	if d, _ := parseDay("2020-06-30"); sv.First != d {
		t.Errorf("first day %d, want %d", sv.First, d)
	}
	if d, _ := parseDay("2023-03-01"); sv.Last != d {
		t.Errorf("last day %d, want %d", sv.Last, d)
	}
	if len(warn) != 3 {
		t.Errorf("want 3 warnings (no unit, bad date, no condition), got %v", warn)
	}
}
