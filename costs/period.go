package costs

import (
	"fmt"
	"math"
	"strconv"
)

// MaxPeriodYears is the longest model period accepted, in years.
const MaxPeriodYears = 100

// Period is the length of one model period. Build it with NewPeriod; the
// zero value is not a period.
//
// Calendar convention: period k (k = 0, 1, ...) starts k·Years() years
// after the start of the plan; its work is done, and paid, at its start,
// so it belongs to the calendar year in which it starts (Year(k)). With
// periods shorter than a year several periods share a year's budget; with
// periods longer than a year some years see no work at all.
type Period struct{ years float64 }

// NewPeriod returns a period of years years; years must be finite, above 0
// and at most MaxPeriodYears.
func NewPeriod(years float64) (Period, error) {
	if !finite(years) || years <= 0 || years > MaxPeriodYears {
		return Period{}, fmt.Errorf("costs: period of %g years is not in (0, %d] years", years, MaxPeriodYears)
	}
	return Period{years}, nil
}

// Years returns the length of the period in years (0 for the zero value).
func (p Period) Years() float64 { return p.years }

// Valid reports whether p was built by NewPeriod.
func (p Period) Valid() bool { return p.years > 0 }

// slack absorbs the rounding of k·years (0.1 years times 10 is not 1).
const slack = 1e-9

// Start returns the start of period k in years from the start of the plan.
func (p Period) Start(k int) float64 { return float64(k) * p.years }

// Year returns the calendar year (0 = the first) in which period k starts.
func (p Period) Year(k int) int { return int(math.Floor(float64(k)*p.years + slack)) }

// Count returns the number of periods that start within the first years
// years: ceil(years / Years()).
func (p Period) Count(years float64) int {
	if !(years > 0) {
		return 0
	}
	return int(math.Ceil(years/p.years - slack))
}

// PerYear converts an amount per period into the same amount per year.
func (p Period) PerYear(perPeriod float64) float64 { return perPeriod / p.years }

// PeriodsPerYear returns how many periods make one year (1/Years()).
func (p Period) PeriodsPerYear() float64 { return 1 / p.years }

// Whole reports whether a year is a whole number of periods or a period a
// whole number of years, so that period boundaries fall on year ends.
func (p Period) Whole() bool {
	near := func(x float64) bool { return math.Abs(x-math.Round(x)) < 1e-9*max(1, x) }
	return near(1/p.years) || near(p.years)
}

// String says the period in words: "1 year", "0.5 years".
func (p Period) String() string {
	if p.years == 1 {
		return "1 year"
	}
	return strconv.FormatFloat(p.years, 'f', -1, 64) + " years"
}

// trimFloat formats x with up to 6 decimals and no trailing zeros.
func trimFloat(x float64) string {
	s := fmt.Sprintf("%.6f", x)
	for s[len(s)-1] == '0' {
		s = s[:len(s)-1]
	}
	if s[len(s)-1] == '.' {
		s = s[:len(s)-1]
	}
	return s
}
