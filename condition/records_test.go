package condition

import (
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
	if _, _, err := readRecords(strings.NewReader(in), scale3, 10); err == nil || !strings.Contains(err.Error(), "more than 10 records; split the file") {
		t.Errorf("err = %v", err)
	}
}
