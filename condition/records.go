package condition

import (
	"context"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"slices"
	"strings"
	"time"
)

// Record is one inspection: a unit, a date and the condition found, with
// the work done since the previous inspection of the unit ("" for none).
type Record struct {
	// Line is the record's line in the CSV file.
	Line int
	Unit string
	// Day is the date as days since 1970-01-01.
	Day       int
	Condition int
	Action    string
}

// Warning is a data problem found in the records, at a CSV line (0 when
// it concerns several lines).
type Warning struct {
	Line    int
	Message string
}

// MaxRecords bounds the records read from one file.
const MaxRecords = 2_000_000

// ReadRecords reads inspection records from CSV with a header naming at
// least the columns unit, date and condition (any order, any case; an
// action column is optional; other columns are ignored). Lines starting
// with "#" are comments. Dates are ISO
// 8601 (YYYY-MM-DD); conditions are names of states. A record with a bad
// date, an unknown condition or no unit is reported as a Warning and left
// out: one warning per kind of problem, at its line when it occurs once,
// otherwise a summary at line 0 with the count and the first few lines
// (values clipped, the states wanted listed up to ten), so that the
// warnings stay bounded whatever the size of the file. An unknown
// condition that matches a state but for case, spaces, "_" or "-" gets a
// "did you mean" hint. A missing header or column, or more than MaxRecords
// records, is an error.
func ReadRecords(r io.Reader, states []string) ([]Record, []Warning, error) {
	return ReadRecordsContext(context.Background(), r, states)
}

// ReadRecordsContext is ReadRecords that checks ctx every checkEvery
// records and returns ctx.Err() once it is done.
func ReadRecordsContext(ctx context.Context, r io.Reader, states []string) ([]Record, []Warning, error) {
	recs, _, warn, err := readRecords(ctx, r, states, MaxRecords, false)
	return recs, warn, err
}

// checkEvery is how many records or transitions the readers and
// estimators handle between checks of their context.
const checkEvery = 4096

// RecordSurvey describes a records file read without a condition scale:
// the conditions and work it names, in order of first appearance, its
// units and its span of dates.
type RecordSurvey struct {
	Records, Units int
	Conditions     []string
	Actions        []string
	// First and Last are the earliest and latest dates (days since
	// 1970-01-01); both 0 without records.
	First, Last int
}

// SurveyRecords reads records as ReadRecords does, but takes every
// condition name as it comes instead of checking it against a scale: what
// a file holds before it is fitted against a class config. Records with
// no unit or a bad date are reported as warnings and left out.
func SurveyRecords(r io.Reader) (*RecordSurvey, []Warning, error) {
	return SurveyRecordsContext(context.Background(), r)
}

// SurveyRecordsContext is SurveyRecords that checks ctx every checkEvery
// records and returns ctx.Err() once it is done.
func SurveyRecordsContext(ctx context.Context, r io.Reader) (*RecordSurvey, []Warning, error) {
	recs, conds, warn, err := readRecords(ctx, r, nil, MaxRecords, true)
	if err != nil {
		return nil, nil, err
	}
	sv := &RecordSurvey{Records: len(recs), Conditions: conds}
	units := map[string]bool{}
	acts := map[string]bool{}
	for i, rec := range recs {
		units[rec.Unit] = true
		if rec.Action != "" && !acts[rec.Action] {
			acts[rec.Action] = true
			sv.Actions = append(sv.Actions, rec.Action)
		}
		if i == 0 || rec.Day < sv.First {
			sv.First = rec.Day
		}
		if i == 0 || rec.Day > sv.Last {
			sv.Last = rec.Day
		}
	}
	sv.Units = len(units)
	return sv, warn, nil
}

// readRecords reads records against states; with open, a condition not in
// states is appended to them instead of being left out. It returns the
// states it ends with.
func readRecords(ctx context.Context, r io.Reader, states []string, limit int, open bool) ([]Record, []string, []Warning, error) {
	states = slices.Clone(states)
	cr := csv.NewReader(r)
	cr.FieldsPerRecord = -1
	cr.Comment = '#'
	cr.ReuseRecord = true
	header, err := cr.Read()
	if errors.Is(err, io.EOF) {
		return nil, nil, nil, errors.New("condition: records: the file is empty; want a header unit,date,condition[,action]")
	}
	if err != nil {
		return nil, nil, nil, fmt.Errorf("condition: records: %w", err)
	}
	col := map[string]int{"unit": -1, "date": -1, "condition": -1, "action": -1}
	for i, h := range header {
		h = strings.ToLower(strings.TrimSpace(strings.TrimPrefix(h, "\ufeff")))
		if j, ok := col[h]; ok {
			if j >= 0 {
				return nil, nil, nil, fmt.Errorf("condition: records: line 1: column %q appears twice", h)
			}
			col[h] = i
		}
	}
	for _, name := range []string{"unit", "date", "condition"} {
		if col[name] < 0 {
			return nil, nil, nil, fmt.Errorf("condition: records: line 1: the header has no %q column; want unit,date,condition[,action]", name)
		}
	}
	index := make(map[string]int, len(states))
	for i, s := range states {
		index[s] = i
	}
	var (
		out  []Record
		log  problemLog
		want = nameList(states)
		near = newSuggester(states)
	)
	noUnit := &problemKind{many: "%d records have no unit and are left out"}
	noCond := &problemKind{many: "%d records have no condition and are left out"}
	badDate := &problemKind{many: "%d records have a date that is not YYYY-MM-DD and are left out"}
	unknown := &problemKind{many: "%d records have an unknown condition and are left out", tail: "; want one of " + want}
	field := func(rec []string, name string) string {
		if i := col[name]; i >= 0 && i < len(rec) {
			return strings.TrimSpace(rec[i])
		}
		return ""
	}
	for n := 0; ; n++ {
		if n%checkEvery == 0 {
			if err := ctx.Err(); err != nil {
				return nil, nil, nil, err
			}
		}
		rec, err := cr.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			var pe *csv.ParseError
			if errors.As(err, &pe) {
				return nil, nil, nil, fmt.Errorf("condition: records: line %d: %v", pe.Line, pe.Err)
			}
			return nil, nil, nil, fmt.Errorf("condition: records: %w", err)
		}
		line, _ := cr.FieldPos(0)
		if len(out) >= limit {
			return nil, nil, nil, fmt.Errorf("condition: records: more than %d records; split the file", limit)
		}
		if len(rec) == 1 && strings.TrimSpace(rec[0]) == "" {
			continue
		}
		unit, date, cond := field(rec, "unit"), field(rec, "date"), field(rec, "condition")
		if unit == "" {
			log.add(noUnit, line, "no unit; record left out", "")
			continue
		}
		day, err := parseDay(date)
		if err != nil {
			log.add(badDate, line, fmt.Sprintf("date %s is not YYYY-MM-DD; record left out", quoted(date)), quoted(date))
			continue
		}
		if open && cond == "" {
			log.add(noCond, line, "no condition; record left out", "")
			continue
		}
		s, ok := index[cond]
		if !ok && open {
			s, ok = len(states), true
			index[cond] = s
			states = append(states, cond)
		}
		if !ok {
			// The message of a lone occurrence and the short detail
			// are built for the first few occurrences only.
			var one, short string
			if log.keeps(unknown) {
				hint := ""
				short = quoted(cond)
				if n := near.suggest(cond); n != "" {
					hint = fmt.Sprintf("; did you mean %q?", n)
					short += fmt.Sprintf(" (did you mean %q?)", n)
				}
				one = fmt.Sprintf("unknown condition %s (want one of %s%s); record left out", quoted(cond), want, hint)
			}
			log.add(unknown, line, one, short)
			continue
		}
		out = append(out, Record{Line: line, Unit: unit, Day: day, Condition: s, Action: field(rec, "action")})
	}
	warn := log.warnings()
	slices.SortStableFunc(warn, func(a, b Warning) int { return a.Line - b.Line })
	return out, states, warn, nil
}

// parseDay parses YYYY-MM-DD strictly (years 1000..9999) into days since
// 1970-01-01.
func parseDay(s string) (int, error) {
	if len(s) != 10 {
		return 0, errors.New("bad date")
	}
	t, err := time.Parse("2006-01-02", s)
	if err != nil || t.Year() < 1000 {
		return 0, errors.New("bad date")
	}
	return int(t.Unix() / 86400), nil
}

// Transition is one observed interval between two inspections of a unit.
type Transition struct {
	Unit     int // index into Panel.Units
	From, To int
	Days     int
	// End is the day of the later inspection (days since 1970-01-01).
	End int
	// Action is the index of the work done in the interval in the actions
	// of BuildPanel (the passive action for none).
	Action int
	// Line is the CSV line of the later inspection.
	Line int
}

// Panel is the inspection history of a population, as transitions.
type Panel struct {
	Units       []string
	Transitions []Transition
}

// PanelOptions controls how records become transitions.
type PanelOptions struct {
	// Actions names the actions transitions may carry; Passive is the index
	// of the one that stands for "no work recorded".
	Actions []string
	Passive int
	// NewActions accepts work names not in Actions, appending them (used
	// when there is no class config).
	NewActions bool
	// ImprovementIsError treats an improvement with no recorded work as an
	// inspection error: the later reading is replaced by the earlier
	// condition (the unit is taken to have stayed as it was).
	ImprovementIsError bool
}

// BuildPanel turns records into transitions between consecutive
// inspections of each unit, and reports data problems: records out of date
// order within a unit (sorted, with a warning), repeated dates (the later
// record left out), units with a single inspection, unknown work names,
// and improvements with no recorded work (counted, with the units), each
// kind summarised as in ReadRecords. It returns the panel and the action
// names (extended when NewActions).
func BuildPanel(records []Record, opts PanelOptions) (*Panel, []string, []Warning) {
	p, actions, warn, _ := BuildPanelContext(context.Background(), records, opts)
	return p, actions, warn
}

// BuildPanelContext is BuildPanel that checks ctx every checkEvery
// records and returns ctx.Err() once it is done.
func BuildPanelContext(ctx context.Context, records []Record, opts PanelOptions) (*Panel, []string, []Warning, error) {
	actions := slices.Clone(opts.Actions)
	byUnit := make(map[string][]Record)
	var order []string
	for i, r := range records {
		if i%checkEvery == 0 {
			if err := ctx.Err(); err != nil {
				return nil, nil, nil, err
			}
		}
		if _, ok := byUnit[r.Unit]; !ok {
			order = append(order, r.Unit)
		}
		byUnit[r.Unit] = append(byUnit[r.Unit], r)
	}
	p := &Panel{}
	var log problemLog
	outOfOrder := &problemKind{many: "%d units have dates out of order; sorted by date"}
	sameDate := &problemKind{many: "%d records repeat an inspection date of their unit and are left out"}
	single := &problemKind{many: "%d units have a single inspection and give no transition"}
	unknownWork := &problemKind{many: "%d intervals have unknown work and are left out"}
	var improved []string
	improvements, firstLines := 0, []int{}
	seen, check := 0, 0 // records of the units handled so far; when to check ctx next
	for _, unit := range order {
		recs := byUnit[unit]
		if seen >= check {
			if err := ctx.Err(); err != nil {
				return nil, nil, nil, err
			}
			check = seen + checkEvery
		}
		seen += len(recs)
		for i := 1; i < len(recs); i++ {
			if recs[i].Day < recs[i-1].Day {
				log.add(outOfOrder, recs[i].Line,
					fmt.Sprintf("unit %s: dates out of order (line %d is dated after this one); sorted by date", clip(unit), recs[i-1].Line),
					fmt.Sprintf("(unit %s, dated before line %d)", clip(unit), recs[i-1].Line))
				break
			}
		}
		slices.SortStableFunc(recs, func(a, b Record) int { return a.Day - b.Day })
		kept := recs[:0:0]
		for i, r := range recs {
			if i > 0 && r.Day == recs[i-1].Day {
				log.add(sameDate, r.Line,
					fmt.Sprintf("unit %s: a second inspection on the same date as line %d; left out", clip(unit), recs[i-1].Line),
					fmt.Sprintf("(unit %s, as line %d)", clip(unit), recs[i-1].Line))
				continue
			}
			kept = append(kept, r)
		}
		if len(kept) < 2 {
			log.add(single, kept[0].Line, fmt.Sprintf("unit %s has a single inspection; it gives no transition", clip(unit)),
				fmt.Sprintf("(unit %s)", clip(unit)))
			continue
		}
		u := len(p.Units)
		p.Units = append(p.Units, unit)
		unitImproved := false
		prev := kept[0].Condition
		for i, r := range kept[1:] {
			days := r.Day - kept[i].Day
			a := opts.Passive
			if r.Action != "" {
				a = slices.Index(actions, r.Action)
				if a < 0 && opts.NewActions {
					actions = append(actions, r.Action)
					a = len(actions) - 1
				}
				if a < 0 {
					var one string
					if log.keeps(unknownWork) {
						one = fmt.Sprintf("unknown work %s (want one of %s); interval left out", quoted(r.Action), nameList(actions))
					}
					log.add(unknownWork, r.Line, one, quoted(r.Action))
					prev = r.Condition
					continue
				}
			}
			to := r.Condition
			if a == opts.Passive && to < prev {
				improvements++
				if len(firstLines) < 10 {
					firstLines = append(firstLines, r.Line)
				}
				unitImproved = true
				if opts.ImprovementIsError {
					to = prev
				}
			}
			p.Transitions = append(p.Transitions, Transition{Unit: u, From: prev, To: to, Days: days, End: r.Day, Action: a, Line: r.Line})
			prev = to
		}
		if unitImproved {
			improved = append(improved, unit)
		}
	}
	if log.byKind[unknownWork] != nil {
		unknownWork.tail = "; want one of " + nameList(actions)
	}
	warn := log.warnings()
	if improvements > 0 {
		what := "kept as observed (use the inspection-error option to treat them as misreadings)"
		if opts.ImprovementIsError {
			what = "treated as inspection errors: the unit is taken to have stayed in its earlier condition"
		}
		lines := make([]string, len(firstLines))
		for i, l := range firstLines {
			lines[i] = fmt.Sprint(l)
		}
		warn = append(warn, Warning{0, fmt.Sprintf("%d improvements with no recorded work in %d units (%s; lines %s%s); %s",
			improvements, len(improved), nameList(improved), strings.Join(lines, ", "), ellipsis(improvements > 10), what)})
	}
	slices.SortStableFunc(warn, func(a, b Warning) int { return a.Line - b.Line })
	return p, actions, warn, nil
}

func ellipsis(more bool) string {
	if more {
		return ", ..."
	}
	return ""
}
