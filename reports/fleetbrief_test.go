package reports

import (
	"bytes"
	"context"
	"math"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"

	"fixpoint/optimize/fleet"
)

// twoClassFleet is testFleet with a second class ("valves", the same
// invented model) of other counts.
func twoClassFleet(t *testing.T, h float64, budget float64, years int) *fleet.Problem {
	t.Helper()
	f := testFleet(t, h, []float64{12, 7, 2}, budget, years)
	c := f.Classes[0]
	c.Name, c.Counts = "valves", []float64{20, 9, 1}
	f.Classes = append(f.Classes, c)
	return f
}

func fleetBrief(t *testing.T, f *fleet.Problem) *FleetBrief {
	t.Helper()
	r := planReport(t, f, false)
	r.Discount = f.Discount
	return &FleetBrief{Plan: r, GapTarget: 1e-4, Imprint: Imprint{Date: time.Date(2026, 12, 1, 0, 0, 0, 0, time.UTC), PreparedBy: "R. Example"},
		Sources: []SourceFile{{Role: "fleet file", Path: "fleet.yaml", SHA256: strings.Repeat("ab", 32)}}}
}

// pageText joins the text the layout engine placed on page p.
func pageText(d *doc, p int) string {
	var parts []string
	for _, pl := range d.placed {
		if pl.page == p {
			parts = append(parts, pl.text)
		}
	}
	return strings.Join(parts, " ")
}

// The work list's lines add up, by class and in all, to the work list
// spend the planner reports (an independent sum: its units times the
// class's action costs); work in the unsafe condition, where leaving the
// unit is not admissible, is marked mandatory and adds up to the
// planner's mandatory spend.
func TestFleetBriefWorkList(t *testing.T) {
	for _, tc := range []struct {
		name   string
		f      func(t *testing.T) *fleet.Problem
		budget float64
	}{
		{"ample budget", func(t *testing.T) *fleet.Problem { return twoClassFleet(t, 1, 1e6, 4) }, 1e6},
		{"tight budget", func(t *testing.T) *fleet.Problem { return twoClassFleet(t, 1, 25000, 4) }, 25000},
		{"zero budget", func(t *testing.T) *fleet.Problem { return twoClassFleet(t, 1, 0, 3) }, 0},
		{"half-year periods", func(t *testing.T) *fleet.Problem { return twoClassFleet(t, 0.5, 30000, 3) }, 30000},
	} {
		t.Run(tc.name, func(t *testing.T) {
			b := fleetBrief(t, tc.f(t))
			wl := b.Plan.Plan.First
			rows, _, _, _ := b.workList()
			num := func(s string) float64 {
				x, err := strconv.ParseFloat(strings.ReplaceAll(s, ",", ""), 64)
				if err != nil {
					t.Fatalf("cell %q is not a number", s)
				}
				return x
			}
			byClass := map[string]float64{}
			lines := map[string]int{}
			spend, mandatory := 0.0, 0.0
			for _, r := range rows {
				switch {
				case r[0] == "All classes":
					if got := num(r[4]); math.Abs(got-math.Round(wl.Spend)) > 0.5 {
						t.Errorf("all classes: cost %s, want %s (work list spend)", r[4], Money(wl.Spend, 0))
					}
				case strings.HasSuffix(r[0], ": total"):
					name := strings.TrimSuffix(r[0], ": total")
					if lines[name] < 2 || math.Abs(num(r[4])-byClass[name]) > 0.5+float64(lines[name]) {
						t.Errorf("%s: total %s over %d lines, want the sum %g", name, r[4], lines[name], byClass[name])
					}
				default:
					cost := num(r[4])
					byClass[r[0]] += cost
					lines[r[0]]++
					spend += cost
					unsafe := strings.HasSuffix(r[1], "(unsafe)")
					if (r[5] == "mandatory") != unsafe {
						t.Errorf("row %q: work %q, condition unsafe %v", r, r[5], unsafe)
					}
					if unsafe {
						mandatory += cost
					}
				}
			}
			if math.Abs(spend-wl.Spend) > 0.5*float64(len(rows)) {
				t.Errorf("lines add up to %g, want the work list spend %g", spend, wl.Spend)
			}
			if math.Abs(mandatory-wl.Mandatory) > 0.5*float64(len(rows)) {
				t.Errorf("mandatory lines add up to %g, want %g", mandatory, wl.Mandatory)
			}
			if tc.budget == 0 && wl.Spend > wl.Mandatory+1e-6 {
				t.Errorf("zero budget: work list spends %g beyond the mandatory %g", wl.Spend, wl.Mandatory)
			}
		})
	}
}

// Page 1 of the fleet brief holds the recommendation, the work list (at
// least its first rows), the key assumptions with the budget and
// mandatory-work rules, the certificate in words and the sign-off;
// later pages hold the spend against the budget and the files.
func TestFleetBriefPageOne(t *testing.T) {
	for _, tc := range []struct {
		name string
		f    func(t *testing.T) *fleet.Problem
		want []string
	}{
		{"within budget", func(t *testing.T) *fleet.Problem { return twoClassFleet(t, 1, 40000, 4) },
			[]string{"Work list for year 1", "Budget: 40,000 EUR a calendar year", "(none here)", "Certified"}},
		{"mandatory first", func(t *testing.T) *fleet.Problem { return twoClassFleet(t, 1, 0, 3) },
			[]string{"Work list for year 1", "(here years 1-3)", "cannot cover the mandatory work", "Certified"}},
		{"half-year periods", func(t *testing.T) *fleet.Problem { return twoClassFleet(t, 0.5, 30000, 3) },
			[]string{"Work list for the first 6 months of year 1", "3 years in 6 periods of 0.5 years", "Certified"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			d, err := fleetBrief(t, tc.f(t)).layout()
			if err != nil {
				t.Fatal(err)
			}
			for _, m := range []string{"recommendation", "key assumptions", "sign-off"} {
				if d.marks[m] != 1 {
					t.Errorf("%s on page %d, want 1", m, d.marks[m])
				}
			}
			page1 := pageText(d, 1)
			for _, w := range append(tc.want, "Mandatory work", "Period and horizon", "Discount rate: 4.00% per year", "Prepared by R. Example") {
				if !strings.Contains(page1, w) && !strings.Contains(strings.ReplaceAll(page1, " ", ""), strings.ReplaceAll(w, " ", "")) {
					t.Errorf("page 1 lacks %q:\n%s", w, page1)
				}
			}
			all := pageText(d, d.pdf.PageNo())
			for p := 2; p < d.pdf.PageNo(); p++ {
				all += " " + pageText(d, p)
			}
			for _, w := range []string{"Planned work spend per calendar year against the budget", "Spend and budget per calendar year", "SHA-256 " + strings.Repeat("ab", 32)} {
				if !strings.Contains(all, w) {
					t.Errorf("later pages lack %q", w)
				}
			}
		})
	}
}

// The budget line never merges with the top of the axis: it stays at
// least 5% of the plot's height below it, whatever the budget and the
// spend (over or under it).
func TestBudgetLineHeadRoom(t *testing.T) {
	for _, tc := range []struct {
		budget, spend float64
	}{
		{60000, 60000}, {46296, 40000}, {50000, 50000}, {9.6e8, 9.6e8}, {1e9, 9e8}, {99999, 120000}, {1, 1}, {2.5e4, 0},
	} {
		d := testDoc(t)
		f := d.stackedBarsWithLimit(marginX, 30, contentW, 60, "spend", "year", "EUR", []string{"1", "2"},
			[]series{{name: "work", color: actionRamp[1], values: []float64{tc.spend, tc.spend / 2}}}, []float64{tc.budget, tc.budget}, "budget",
			func(v float64) string { return Money(v, 0) })
		for _, v := range []float64{tc.budget, tc.spend} {
			if room := (f.yAt(v) - f.y) / f.h; room < 0.05 {
				t.Errorf("budget %g, spend %g: %g lies %.1f%% of the plot below the top, want at least 5%%", tc.budget, tc.spend, v, 100*room)
			}
		}
	}
}

// Amounts in plan warnings carry the currency with the decimals of its
// minor unit below 100, none from 100 up or when whole.
func TestAmountMinorUnit(t *testing.T) {
	for _, tc := range []struct {
		x        float64
		currency string
		want     string
	}{
		{12.5, "EUR", "12.50 EUR"}, {12.7, "JPY", "13 JPY"}, {1.25, "KWD", "1.250 KWD"}, {150.7, "EUR", "151 EUR"},
		{12, "EUR", "12 EUR"}, {1234567.4, "JPY", "1,234,567 JPY"}, {0.004, "EUR", "0 EUR"},
	} {
		if got := amount(tc.x, tc.currency); got != tc.want {
			t.Errorf("amount(%g, %q) = %q, want %q", tc.x, tc.currency, got, tc.want)
		}
	}
	f := testFleet(t, 1, []float64{10, 6, 3}, 0, 3)
	p, err := fleet.Solve(context.Background(), f, &fleet.Settings{Gap: 1e-9})
	if err != nil {
		t.Fatal(err)
	}
	decimals := regexp.MustCompile(`[0-9]\.[0-9]+ JPY`)
	ws := PlanWarnings(f, p, 1e-4, "JPY")
	if len(ws) == 0 {
		t.Fatal("no warnings with a zero budget")
	}
	for _, w := range ws {
		if !strings.Contains(w, " JPY") || decimals.MatchString(w) || w[0] < 'A' || w[0] > 'Z' {
			t.Errorf("warning %q: want a capital and yen without decimals", w)
		}
	}
}

// Parts of a table too wide for the page hold nearly equal numbers of
// columns, each with the kept leading columns.
func TestEvenColumnParts(t *testing.T) {
	d := testDoc(t)
	tb := pdfTable{header: []string{"Year", "Budget"}, keep: 2}
	row := []string{"1", "960,000,000"}
	for i := range 10 {
		tb.header = append(tb.header, Percent(float64(i+1)/100, 2))
		row = append(row, "*960,000,000")
	}
	tb.right = slicesRepeat(true, len(tb.header))
	tb.rows = [][]string{row}
	groups := d.layoutColumns(&tb)
	if len(groups) < 2 {
		t.Fatalf("%d part(s), want several", len(groups))
	}
	lo, hi := 100, 0
	for _, g := range groups {
		if g[0] != 0 || g[1] != 1 {
			t.Errorf("part %v does not start with the two kept columns", g)
		}
		lo, hi = min(lo, len(g)), max(hi, len(g))
	}
	if hi-lo > 1 {
		t.Errorf("parts %v differ by %d columns, want at most 1", groups, hi-lo)
	}
}

// The fleet brief is byte-identical for the same plan and date.
func TestFleetBriefDeterministic(t *testing.T) {
	var out [][]byte
	for range 2 {
		var buf bytes.Buffer
		if err := fleetBrief(t, twoClassFleet(t, 0.5, 30000, 3)).WritePDF(&buf); err != nil {
			t.Fatal(err)
		}
		out = append(out, buf.Bytes())
	}
	if !bytes.Equal(out[0], out[1]) {
		t.Error("two fleet briefs of the same plan differ")
	}
}
