package inspect

import (
	"context"
	"math"
	"strconv"
	"testing"

	"fixpoint/condition"
	"fixpoint/costs"
	"fixpoint/optimize"
)

// scale30 is the benchmark class (invented numbers): 28 condition levels
// rated monthly, a hidden failure and a self-announcing one; left alone a
// unit stays, slips one or two levels, or fails (more often the worse it
// is); repair moves it back a quarter of the scale, overhaul to level 1,
// replacement to new. Intervals 1..12 months, limit one year.
func scale30() *class {
	const levels = 28
	n := levels + 2
	hid, ann := levels, levels+1
	m := &condition.Model{PeriodYears: 1.0 / 12}
	for s := range n {
		m.States = append(m.States, condition.State{Name: "s" + strconv.Itoa(s), Unsafe: s >= levels})
	}
	leave := condition.Action{Name: "leave", Passive: true, Rows: make([][]condition.Entry, n)}
	repair := condition.Action{Name: "repair", Rows: make([][]condition.Entry, n)}
	overhaul := condition.Action{Name: "overhaul", Rows: make([][]condition.Entry, n)}
	replace := condition.Action{Name: "replace", Rows: make([][]condition.Entry, n)}
	c := &costs.Schedule{Currency: "EUR", Running: make([]float64, n), Action: make([][]float64, 4)}
	for a := range c.Action {
		c.Action[a] = make([]float64, n)
	}
	for s := range levels {
		x := float64(s) / levels
		fh, fa := 0.001+0.02*x*x, 0.0005+0.01*x*x
		slip1, slip2 := 0.10, 0.04
		if s == levels-1 {
			slip1, slip2 = 0, 0
		} else if s == levels-2 {
			slip1, slip2 = slip1+slip2, 0
		}
		row := []condition.Entry{{To: s, P: 1 - fh - fa - slip1 - slip2}}
		if slip1 > 0 {
			row = append(row, condition.Entry{To: s + 1, P: slip1})
		}
		if slip2 > 0 {
			row = append(row, condition.Entry{To: s + 2, P: slip2})
		}
		leave.Rows[s] = append(row, condition.Entry{To: hid, P: fh}, condition.Entry{To: ann, P: fa})
		c.Running[s] = 10 + 40*x*x
		if s > 0 {
			repair.Rows[s] = []condition.Entry{{To: s - (s+3)/4, P: 0.9}, {To: s, P: 0.1}}
			c.Action[1][s] = 200 + 10*float64(s)
		}
		if s > 3 {
			overhaul.Rows[s] = []condition.Entry{{To: 1, P: 1}}
			c.Action[2][s] = 1500
		}
	}
	for s := range n {
		replace.Rows[s] = []condition.Entry{{To: 0, P: 1}}
		c.Action[3][s] = 4000
	}
	repair.Rows[hid] = []condition.Entry{{To: levels / 2, P: 1}}
	c.Action[1][hid] = 900
	c.Running[hid], c.Running[ann] = 40, 2500
	m.Actions = []condition.Action{leave, repair, overhaul, replace}
	ks := make([]int, 12)
	for i := range ks {
		ks[i] = i + 1
	}
	risk := make([]float64, n)
	risk[hid] = 3000
	return &class{name: "scale30", m: m, c: c, gamma: math.Pow(1.04, -1.0/12),
		plan: Plan{Cost: 80, Downtime: 40, Intervals: ks, Hidden: []int{hid}, RiskCost: risk, MaxIntervalYears: 1}}
}

// BenchmarkCertify times what the performance target names: a 30-state
// class with 12 allowed intervals, built and certified (tolerance 1e-6
// currency units), by method; "build" is the kernel computation alone.
func BenchmarkCertify(b *testing.B) {
	cl := scale30()
	b.Run("build", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			if _, err := Build(context.Background(), cl.m, cl.c, cl.gamma, &cl.plan); err != nil {
				b.Fatal(err)
			}
		}
	})
	for _, m := range append([]optimize.Method{optimize.Auto}, methods...) {
		b.Run("build+solve/"+m.String(), func(b *testing.B) {
			b.ReportAllocs()
			var iters int
			for b.Loop() {
				p, err := Build(context.Background(), cl.m, cl.c, cl.gamma, &cl.plan)
				if err != nil {
					b.Fatal(err)
				}
				r, err := Solve(context.Background(), p, &optimize.Settings{Method: m, Tol: 1e-6})
				if err != nil {
					b.Fatal(err)
				}
				if r.Status != optimize.Certified {
					b.Fatalf("not certified: gap %g", r.Gap)
				}
				iters = r.Iterations
			}
			b.ReportMetric(float64(iters), "iterations/op")
		})
	}
}

// BenchmarkFigures times the figures beside the advice on the same class:
// every fixed interval, the long-run figures and a 30-year calendar.
func BenchmarkFigures(b *testing.B) {
	cl := scale30()
	p := cl.build(b)
	r, err := Solve(context.Background(), p, &optimize.Settings{Tol: 1e-6})
	if err != nil {
		b.Fatal(err)
	}
	start := make([]float64, len(p.States))
	start[0] = 100
	b.Run("fixed", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			if _, err := FixedIntervals(context.Background(), p, r, &optimize.Settings{Tol: 1e-6}); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Run("longrun", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			if _, err := p.LongRun(r.Policy); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Run("calendar-30y", func(b *testing.B) {
		b.ReportAllocs()
		for b.Loop() {
			if _, err := p.Calendar(context.Background(), r.Policy, start, 30); err != nil {
				b.Fatal(err)
			}
		}
	})
}

// The benchmark class is a valid, certifiable problem whose advice uses
// several intervals and actions (so the benchmark times a real answer).
func TestScale30(t *testing.T) {
	cl := scale30()
	p := cl.build(t)
	r, err := Solve(context.Background(), p, &optimize.Settings{Tol: 1e-6})
	if err != nil {
		t.Fatal(err)
	}
	ks, as := map[int]bool{}, map[int]bool{}
	for s := range p.States {
		ks[r.Interval[s]], as[r.Action[s]] = true, true
	}
	if r.Status != optimize.Certified || len(ks) < 3 || len(as) < 2 || len(p.Intervals) != 12 {
		t.Errorf("scale30: status %v, intervals %v, actions %v, %d admissible intervals", r.Status, r.Interval, r.Action, len(p.Intervals))
	}
}
