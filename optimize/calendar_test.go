package optimize

import (
	"math"
	"testing"

	"fixpoint/costs"
)

// Summing periods by calendar year: the yearly totals add up to the
// periods' totals, with 4, 2, 1, 1/2 or 1/5 periods per year.
func TestForecastYears(t *testing.T) {
	m, c := classModel()
	for _, years := range []float64{0.25, 0.5, 1, 2, 5} {
		period, err := costs.NewPeriod(years)
		if err != nil {
			t.Fatal(err)
		}
		f, err := NewForecast(m, c, 0.97, []int{0, 0, 1, 2}, []float64{10, 0, 0, 0}, period.Count(10))
		if err != nil {
			t.Fatal(err)
		}
		ys := f.Years(period)
		if len(ys) != 10 {
			t.Fatalf("period %g: %d years, want 10", years, len(ys))
		}
		sumP, sumY, n := 0.0, 0.0, 0
		for _, p := range f.Periods {
			sumP += p.Total
		}
		for _, y := range ys {
			sumY += y.Total
			n += y.Periods
		}
		if math.Abs(sumP-sumY) > 1e-9*math.Abs(sumP) || n != len(f.Periods) {
			t.Errorf("period %g: yearly totals %g over %d periods, periods %g over %d", years, sumY, n, sumP, len(f.Periods))
		}
		if want := max(1, int(math.Round(1/years))); years <= 1 && ys[3].Periods != want {
			t.Errorf("period %g: year 3 holds %d periods, want %d", years, ys[3].Periods, want)
		}
	}
}
