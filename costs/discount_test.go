package costs

import (
	"math"
	"testing"
)

// Engineering-economy compound interest tables, discrete compounding.
func TestInterestFactorsMatchTables(t *testing.T) {
	type row struct {
		FP, PF, AF, FA, AP, PA, PG, AG float64
	}
	tests := []struct {
		name   string
		source string
		i      float64
		n      int
		want   row
		tol    float64 // half a unit in the last printed digit
	}{
		{
			name:   "0.25%/10",
			source: "L. Blank & A. Tarquin, Engineering Economy, Table 1 'Discrete Cash Flow: Compound Interest Factors 0.25%', n = 10",
			i:      0.0025, n: 10,
			want: row{FP: 1.0253, PF: 0.9753, AF: 0.09888, FA: 10.1133, AP: 0.10138, PA: 9.8639, PG: 44.1842, AG: 4.4794},
			tol:  0.00005,
		},
		{
			name:   "5%/10",
			source: "standard 5% compound interest table, n = 10 (from memory)",
			i:      0.05, n: 10,
			want: row{FP: 1.6289, PF: 0.6139, AF: 0.0795, FA: 12.5779, AP: 0.1295, PA: 7.7217, PG: 31.652, AG: 4.0991},
			tol:  0.0005,
		},
		{
			name:   "10%/5",
			source: "standard 10% compound interest table, n = 5 (from memory)",
			i:      0.10, n: 5,
			want: row{FP: 1.6105, PF: 0.6209, AF: 0.1638, FA: 6.1051, AP: 0.2638, PA: 3.7908, PG: 6.8618, AG: 1.8101},
			tol:  0.00005,
		},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			got := row{
				FP: CompoundAmount(tc.i, tc.n), PF: PresentWorth(tc.i, tc.n),
				AF: SinkingFund(tc.i, tc.n), FA: SeriesCompoundAmount(tc.i, tc.n),
				AP: CapitalRecovery(tc.i, tc.n), PA: SeriesPresentWorth(tc.i, tc.n),
				PG: GradientPresentWorth(tc.i, tc.n), AG: GradientSeries(tc.i, tc.n),
			}
			for _, f := range []struct {
				name      string
				got, want float64
			}{
				{"F/P", got.FP, tc.want.FP}, {"P/F", got.PF, tc.want.PF}, {"A/F", got.AF, tc.want.AF},
				{"F/A", got.FA, tc.want.FA}, {"A/P", got.AP, tc.want.AP}, {"P/A", got.PA, tc.want.PA},
				{"P/G", got.PG, tc.want.PG}, {"A/G", got.AG, tc.want.AG},
			} {
				if math.Abs(f.got-f.want) > tc.tol {
					t.Errorf("(%s, %g, %d) = %.6f, want %g (tol %g; %s)", f.name, tc.i, tc.n, f.got, f.want, tc.tol, tc.source)
				}
			}
		})
	}
}

// At i = 0 every factor takes its limit (closed forms).
func TestInterestFactorsAtZero(t *testing.T) {
	for _, tc := range []struct {
		name      string
		got, want float64
	}{
		{"P/A", SeriesPresentWorth(0, 7), 7},
		{"F/A", SeriesCompoundAmount(0, 7), 7},
		{"P/G", GradientPresentWorth(0, 7), 21},
		{"A/G", GradientSeries(0, 7), 3},
		{"P/A near 0", SeriesPresentWorth(1e-12, 7), 7},
	} {
		if math.Abs(tc.got-tc.want) > 1e-9 {
			t.Errorf("%s = %.12g, want %g", tc.name, tc.got, tc.want)
		}
	}
}

func TestDiscountFactor(t *testing.T) {
	tests := []struct {
		rate, period, want float64
	}{
		{0.04, 1, 1 / 1.04},
		{0.05, 0.5, 1 / math.Sqrt(1.05)},
		{0, 3, 1},
	}
	for _, tc := range tests {
		got, err := DiscountFactor(tc.rate, tc.period)
		if err != nil || math.Abs(got-tc.want) > 1e-15 {
			t.Errorf("DiscountFactor(%g, %g) = %g, %v, want %g", tc.rate, tc.period, got, err, tc.want)
		}
		back, err := RateFromFactor(got, tc.period)
		if err != nil || math.Abs(back-tc.rate) > 1e-12 {
			t.Errorf("RateFromFactor(%g, %g) = %g, %v, want %g", got, tc.period, back, err, tc.rate)
		}
	}
	for _, bad := range []struct{ rate, period float64 }{{-1, 1}, {-2, 1}, {math.NaN(), 1}, {math.Inf(1), 1}, {0.04, 0}, {0.04, -1}} {
		if _, err := DiscountFactor(bad.rate, bad.period); err == nil {
			t.Errorf("DiscountFactor(%g, %g): no error", bad.rate, bad.period)
		}
	}
}

// The start-of-period level stream (1 - γ^n)/(1 - γ) equals (1+i)(P/A,i,n)
// (closed-form identity).
func TestLevelPresentWorth(t *testing.T) {
	for _, i := range []float64{0.01, 0.04, 0.1} {
		for _, n := range []int{1, 5, 30} {
			got := LevelPresentWorth(1/(1+i), n)
			want := (1 + i) * SeriesPresentWorth(i, n)
			if math.Abs(got-want) > 1e-12*want {
				t.Errorf("LevelPresentWorth(1/(1+%g), %d) = %.15g, want %.15g", i, n, got, want)
			}
		}
	}
}

// Fisher relation: 1.07 = 1.05 * (1 + r) at 5% inflation gives r = 1.90476%.
func TestRealRate(t *testing.T) {
	if got, want := RealRate(0.07, 0.05), 0.02/1.05; math.Abs(got-want) > 1e-15 {
		t.Errorf("RealRate(0.07, 0.05) = %g, want %g", got, want)
	}
}

func TestDiscountType(t *testing.T) {
	half, _ := NewPeriod(0.5)
	year, _ := NewPeriod(1)
	tests := []struct {
		name       string
		d          func() (Discount, error)
		wantFactor float64
		wantRate   float64
		tol        float64
	}{
		// (1.04)^-1 = 0.961538..., closed form.
		{"rate 4% yearly", func() (Discount, error) { return Rate(0.04, year) }, 1 / 1.04, 0.04, 1e-15},
		// (1.04)^-0.5 = 0.980581..., closed form.
		{"rate 4% half-yearly", func() (Discount, error) { return Rate(0.04, half) }, 1 / math.Sqrt(1.04), 0.04, 1e-15},
		// 0.95^-2 - 1 = 0.108033..., closed form.
		{"factor 0.95 half-yearly", func() (Discount, error) { return Factor(0.95, half) }, 0.95, 1/(0.95*0.95) - 1, 1e-14},
	}
	for _, tc := range tests {
		d, err := tc.d()
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		if math.Abs(d.Factor()-tc.wantFactor) > tc.tol || math.Abs(d.RatePerYear()-tc.wantRate) > tc.tol {
			t.Errorf("%s: factor %g rate %g, want %g and %g (tol %g)", tc.name, d.Factor(), d.RatePerYear(), tc.wantFactor, tc.wantRate, tc.tol)
		}
	}
	for _, bad := range []func() (Discount, error){
		func() (Discount, error) { return Rate(0, year) },
		func() (Discount, error) { return Rate(-0.5, year) },
		func() (Discount, error) { return Rate(math.NaN(), year) },
		func() (Discount, error) { return Rate(1e-12, year) },
		func() (Discount, error) { return Rate(0.04, Period{}) },
		func() (Discount, error) { return Factor(1, year) },
		func() (Discount, error) { return Factor(0.9999999999999999, year) },
		func() (Discount, error) { return Factor(0, year) },
		func() (Discount, error) { return Rate(1e300, year) },
	} {
		if d, err := bad(); err == nil {
			t.Errorf("accepted %v", d)
		}
	}
}

func TestPeriodCalendar(t *testing.T) {
	tests := []struct {
		years     float64
		horizon   float64
		wantCount int
		wantYears []int // Year(k) for k = 0..wantCount-1
	}{
		{0.25, 2, 8, []int{0, 0, 0, 0, 1, 1, 1, 1}},
		{0.5, 1.5, 3, []int{0, 0, 1}},
		{1, 3, 3, []int{0, 1, 2}},
		{2, 5, 3, []int{0, 2, 4}},
		{5, 10, 2, []int{0, 5}},
		{0.1, 1, 10, []int{0, 0, 0, 0, 0, 0, 0, 0, 0, 0}},
	}
	for _, tc := range tests {
		p, err := NewPeriod(tc.years)
		if err != nil {
			t.Fatal(err)
		}
		if n := p.Count(tc.horizon); n != tc.wantCount {
			t.Errorf("Period(%g).Count(%g) = %d, want %d", tc.years, tc.horizon, n, tc.wantCount)
		}
		for k, want := range tc.wantYears {
			if y := p.Year(k); y != want {
				t.Errorf("Period(%g).Year(%d) = %d, want %d", tc.years, k, y, want)
			}
		}
	}
	for _, bad := range []float64{0, -1, math.Inf(1), math.NaN(), 1e300} {
		if _, err := NewPeriod(bad); err == nil {
			t.Errorf("NewPeriod(%g) accepted", bad)
		}
	}
	for years, want := range map[float64]string{1: "1 year", 0.5: "0.5 years", 0.25: "0.25 years", 2: "2 years", 1.5: "1.5 years"} {
		p, _ := NewPeriod(years)
		if p.String() != want {
			t.Errorf("Period(%g) = %q, want %q", years, p.String(), want)
		}
	}
}
