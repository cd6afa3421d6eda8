package inspect

import (
	"context"
	"fmt"
	"math"
	"slices"
	"testing"

	"fixpoint/condition"
	"fixpoint/optimize"
)

// expandedPolicy maps the advice r onto the expanded MDP of cl: the
// advised (action, interval) at the epochs, wait elsewhere. It returns
// the positions in ex.Choices.
func expandedPolicy(ex *optimize.Problem, ks []int, r *Result) []int {
	n := len(r.Policy)
	pos := make([]int, len(ex.States))
	for s := range n {
		want := r.Action[s]*len(ks) + slices.Index(ks, r.Interval[s])
		pos[s] = slices.IndexFunc(ex.Choices[s], func(c optimize.Choice) bool { return c.Action == want })
	}
	return pos
}

// The long-run figures equal those of the stationary distribution μ of the
// expanded chain under the advice (an independent computation: each
// period is one step, epochs are the states with r = 0): the share of
// periods at an epoch, the share spent in a hidden failure with r >= 1,
// the average cost per period.
func TestLongRunAgainstExpandedChain(t *testing.T) {
	for _, cl := range testClasses() {
		p := cl.build(t)
		r, err := Solve(context.Background(), p, &optimize.Settings{Tol: 1e-9})
		if err != nil {
			t.Fatal(err)
		}
		lr, err := p.LongRun(r.Policy)
		if err != nil {
			t.Fatalf("LongRun(%q): %v", cl.name, err)
		}
		ex, ks := expanded(cl)
		pos := expandedPolicy(ex, ks, r)
		rows := make([][]condition.Entry, len(ex.States))
		for i := range rows {
			rows[i] = ex.Choices[i][pos[i]].Next
		}
		mu, err := condition.Chain{Rows: rows}.Stationary()
		if err != nil {
			t.Fatalf("expanded chain of %q: %v", cl.name, err)
		}
		n := len(p.States)
		var epochs, hiddenShare, cost, unsafe float64
		for i, m := range mu {
			x, rem := i%n, i/n
			cost += m * ex.Choices[i][pos[i]].Cost
			if rem == 0 {
				epochs += m
				if p.Unsafe[x] {
					unsafe += m
				}
			} else if p.Hidden[x] {
				hiddenShare += m
			}
		}
		for _, tc := range []struct {
			what      string
			got, want float64
		}{
			{"EpochsPerYear", lr.EpochsPerYear, epochs / cl.m.PeriodYears},
			{"PeriodsBetween", lr.PeriodsBetween, 1 / epochs},
			{"HiddenShare", lr.HiddenShare, hiddenShare},
			{"UnsafeAtEpoch", lr.UnsafeAtEpoch, unsafe / epochs},
			{"CostPerPeriod", lr.CostPerPeriod, cost},
			{"CostPerYear", lr.CostPerYear, cost / cl.m.PeriodYears},
		} {
			if !relClose(tc.got, tc.want, 1e-9) {
				t.Errorf("LongRun(%q): %s = %.12g, want %.12g from the expanded chain (rel tol 1e-9)", cl.name, tc.what, tc.got, tc.want)
			}
		}
		for x := range n {
			if math.Abs(lr.Found[x]-mu[x]/epochs) > 1e-9 {
				t.Errorf("LongRun(%q): Found[%d] = %.12g, want %.12g", cl.name, x, lr.Found[x], mu[x]/epochs)
			}
		}
	}
}

// The calendar equals the period-by-period propagation of the population
// through the expanded chain, and its present value tends to Σ start·v.
func TestCalendarAgainstExpandedChain(t *testing.T) {
	for _, cl := range testClasses() {
		p := cl.build(t)
		n := len(p.States)
		r, err := Solve(context.Background(), p, &optimize.Settings{Tol: 1e-9})
		if err != nil {
			t.Fatal(err)
		}
		start := make([]float64, n)
		for s := range start {
			start[s] = float64(10 * (s + 1))
		}
		const years = 7
		cal, err := p.Calendar(context.Background(), r.Policy, start, years)
		if err != nil {
			t.Fatalf("Calendar(%q): %v", cl.name, err)
		}
		ex, ks := expanded(cl)
		pos := expandedPolicy(ex, ks, r)
		mass := make([]float64, len(ex.States))
		copy(mass, start)
		type totals struct{ epochs, unsafe, spend, epochSpend, hidden float64 }
		want := make([]totals, years)
		pv, g := 0.0, 1.0
		periods := int(math.Round(years / cl.m.PeriodYears))
		for t := range periods {
			y := &want[int(float64(t)*cl.m.PeriodYears+1e-9)]
			next := make([]float64, len(mass))
			for i, m := range mass {
				ch := ex.Choices[i][pos[i]]
				x, rem := i%n, i/n
				y.spend += m * ch.Cost
				pv += g * m * ch.Cost
				if rem == 0 {
					y.epochs += m
					y.epochSpend += m * (ch.Cost - cl.c.Running[x])
					if p.Unsafe[x] {
						y.unsafe += m
					}
				} else if p.Hidden[x] {
					y.hidden += m * cl.m.PeriodYears
				}
				for _, e := range ch.Next {
					next[e.To] += m * e.P
				}
			}
			mass = next
			g *= cl.gamma
		}
		if len(cal.Found) != periods || len(cal.Spend) != periods {
			t.Errorf("Calendar(%q): %d and %d periods, want %d", cl.name, len(cal.Found), len(cal.Spend), periods)
		}
		byYear := make([]float64, years)
		for t, found := range cal.Found {
			byYear[int(float64(t)*cl.m.PeriodYears+1e-9)] += sum(found)
		}
		for yi, w := range want {
			got := cal.Years[yi]
			if !relClose(byYear[yi], got.Epochs, 1e-12) {
				t.Errorf("Calendar(%q): year %d: Found sums to %g, Epochs %g", cl.name, got.Year, byYear[yi], got.Epochs)
			}
			for _, tc := range []struct {
				what      string
				got, want float64
			}{
				{"Epochs", got.Epochs, w.epochs},
				{"UnsafeFound", got.UnsafeFound, w.unsafe},
				{"Total", got.Total, w.spend},
				{"InspectionCost+ActionCost", got.InspectionCost + got.ActionCost, w.epochSpend},
				{"InspectionCost", got.InspectionCost, p.EpochCost * w.epochs},
				{"HiddenUnitYears", got.HiddenUnitYears, w.hidden},
			} {
				if !relClose(tc.got, tc.want, 1e-9) {
					t.Errorf("Calendar(%q): year %d: %s = %.12g, want %.12g from the expanded chain (rel tol 1e-9)", cl.name, got.Year, tc.what, tc.got, tc.want)
				}
			}
			if a := sum(got.Actions); !relClose(a, got.Epochs, 1e-12) {
				t.Errorf("Calendar(%q): year %d: %g actions for %g epochs", cl.name, got.Year, a, got.Epochs)
			}
			if !(got.Unscheduled >= 0 && got.Unscheduled <= got.Epochs*(1+1e-12)) {
				t.Errorf("Calendar(%q): year %d: %g unscheduled of %g epochs", cl.name, got.Year, got.Unscheduled, got.Epochs)
			}
		}
		if !relClose(cal.PresentValue, pv, 1e-9) {
			t.Errorf("Calendar(%q): present value %.12g, want %.12g", cl.name, cal.PresentValue, pv)
		}
		// Over a long horizon the present value is Σ start·v, up to the
		// tail γ^T·Σ start·max|v|.
		long, err := p.Calendar(context.Background(), r.Policy, start, 3000)
		if err != nil {
			t.Fatal(err)
		}
		want0 := 0.0
		for s := range start {
			want0 += start[s] * r.Value[s]
		}
		if !relClose(long.PresentValue, want0, 1e-9) {
			t.Errorf("Calendar(%q, 3000 years): present value %.12g, want Σ start·v = %.12g", cl.name, long.PresentValue, want0)
		}
	}
}

func sum(xs []float64) float64 {
	s := 0.0
	for _, x := range xs {
		s += x
	}
	return s
}

// Each fixed-interval cost equals the expanded MDP with that one interval
// solved by optimize, and none beats the optimum by more than the gaps.
func TestFixedIntervals(t *testing.T) {
	for _, cl := range testClasses() {
		p := cl.build(t)
		opt, err := Solve(context.Background(), p, &optimize.Settings{Tol: 1e-9})
		if err != nil {
			t.Fatal(err)
		}
		fixed, err := FixedIntervals(context.Background(), p, opt, &optimize.Settings{Tol: 1e-9})
		if err != nil {
			t.Fatal(err)
		}
		if len(fixed) != len(p.Intervals) {
			t.Fatalf("FixedIntervals(%q): %d results for %d intervals", cl.name, len(fixed), len(p.Intervals))
		}
		for _, f := range fixed {
			one := *cl
			one.plan.Intervals = []int{f.Interval}
			ex, _ := expanded(&one)
			want, err := optimize.Solve(context.Background(), ex, &optimize.Settings{Method: optimize.PolicyIteration, Tol: 1e-9})
			if err != nil {
				t.Fatal(err)
			}
			for s := range p.States {
				if !relClose(f.Result.Value[s], want.Value[s], 1e-9) {
					t.Errorf("FixedIntervals(%q): every %d: value[%d] = %.12g, want %.12g from the expanded MDP", cl.name, f.Interval, s, f.Result.Value[s], want.Value[s])
				}
				if f.Excess[s] < -(f.Result.Gap + opt.Gap) {
					t.Errorf("FixedIntervals(%q): every %d: state %d beats the optimum by %g", cl.name, f.Interval, s, -f.Excess[s])
				}
				if f.Result.Interval[s] != f.Interval {
					t.Errorf("FixedIntervals(%q): every %d: state %d inspected after %d", cl.name, f.Interval, s, f.Result.Interval[s])
				}
			}
		}
	}
}

// Solves and calendars may share a Problem (run with -race).
func TestConcurrentUse(t *testing.T) {
	cl := reliefValves()
	p := cl.build(t)
	r, err := Solve(context.Background(), p, nil)
	if err != nil {
		t.Fatal(err)
	}
	start := []float64{10, 0, 0, 0, 0}
	want, err := p.Calendar(context.Background(), r.Policy, start, 10)
	if err != nil {
		t.Fatal(err)
	}
	errs := make(chan error, 8)
	for range 4 {
		go func() {
			_, err := Solve(context.Background(), p, nil)
			errs <- err
		}()
		go func() {
			c, err := p.Calendar(context.Background(), r.Policy, start, 10)
			if err == nil && !relClose(c.PresentValue, want.PresentValue, 1e-12) {
				err = fmt.Errorf("concurrent calendar: present value %v, want %v", c.PresentValue, want.PresentValue)
			}
			errs <- err
		}()
	}
	for range 8 {
		if err := <-errs; err != nil {
			t.Error(err)
		}
	}
}
