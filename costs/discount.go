package costs

import (
	"fmt"
	"math"
)

// DiscountFactor returns the discount factor of one period of periodYears
// years at an annual rate: gamma = (1 + rate)^(-periodYears). The rate must
// be finite and greater than -1, the period finite and positive.
func DiscountFactor(rate, periodYears float64) (float64, error) {
	if !finite(rate) || rate <= -1 {
		return 0, fmt.Errorf("costs: discount rate %v is not a finite number > -1", rate)
	}
	if !finite(periodYears) || periodYears <= 0 {
		return 0, fmt.Errorf("costs: period %v years is not a finite number > 0", periodYears)
	}
	return math.Pow(1+rate, -periodYears), nil
}

// RateFromFactor returns the annual rate whose discount factor over one
// period of periodYears years is factor: rate = factor^(-1/periodYears) - 1.
func RateFromFactor(factor, periodYears float64) (float64, error) {
	if !finite(factor) || factor <= 0 {
		return 0, fmt.Errorf("costs: discount factor %v is not a finite number > 0", factor)
	}
	if !finite(periodYears) || periodYears <= 0 {
		return 0, fmt.Errorf("costs: period %v years is not a finite number > 0", periodYears)
	}
	return math.Pow(factor, -1/periodYears) - 1, nil
}

// RealRate converts a nominal annual rate to a real one by the Fisher
// relation (1 + nominal) = (1 + real)(1 + inflation).
func RealRate(nominal, inflation float64) float64 {
	return (1+nominal)/(1+inflation) - 1
}

// NominalRate is the inverse of RealRate: (1+real)(1+inflation) - 1.
func NominalRate(real, inflation float64) float64 {
	return (1+real)*(1+inflation) - 1
}

// EquivalentAnnualCost returns the level amount per year, paid at the start
// of every year for ever, whose present worth at the annual rate is pw:
// pw * rate / (1 + rate). The rate must be positive: at rate 0 a perpetual
// stream has no finite present worth (use the long-run average instead).
func EquivalentAnnualCost(pw, rate float64) float64 {
	return pw * rate / (1 + rate)
}

// The interest factors below are the discrete-compounding factors of
// engineering economy for an interest rate i per period over n periods,
// with cash flows at the end of periods 1..n (the tables' convention).
// Each is also defined at i = 0 by its limit.

// CompoundAmount is (F/P, i, n) = (1+i)^n.
func CompoundAmount(i float64, n int) float64 { return math.Pow(1+i, float64(n)) }

// PresentWorth is (P/F, i, n) = (1+i)^-n.
func PresentWorth(i float64, n int) float64 { return math.Pow(1+i, -float64(n)) }

// SeriesPresentWorth is (P/A, i, n) = ((1+i)^n - 1) / (i (1+i)^n); n at i = 0.
func SeriesPresentWorth(i float64, n int) float64 {
	if i == 0 {
		return float64(n)
	}
	// -expm1(-n log1p(i)) / i keeps precision for small rates.
	return -math.Expm1(-float64(n)*math.Log1p(i)) / i
}

// CapitalRecovery is (A/P, i, n) = 1 / (P/A, i, n).
func CapitalRecovery(i float64, n int) float64 { return 1 / SeriesPresentWorth(i, n) }

// SeriesCompoundAmount is (F/A, i, n) = ((1+i)^n - 1) / i; n at i = 0.
func SeriesCompoundAmount(i float64, n int) float64 {
	if i == 0 {
		return float64(n)
	}
	return math.Expm1(float64(n)*math.Log1p(i)) / i
}

// SinkingFund is (A/F, i, n) = 1 / (F/A, i, n).
func SinkingFund(i float64, n int) float64 { return 1 / SeriesCompoundAmount(i, n) }

// GradientPresentWorth is (P/G, i, n), the present worth of the arithmetic
// gradient 0, 1, ..., n-1 at the ends of periods 1..n:
// ((P/A, i, n) - n (1+i)^-n) / i; n(n-1)/2 at i = 0.
func GradientPresentWorth(i float64, n int) float64 {
	if i == 0 {
		return float64(n) * float64(n-1) / 2
	}
	return (SeriesPresentWorth(i, n) - float64(n)*PresentWorth(i, n)) / i
}

// GradientSeries is (A/G, i, n), the level series equivalent to that
// gradient: 1/i - n / ((1+i)^n - 1); (n-1)/2 at i = 0.
func GradientSeries(i float64, n int) float64 {
	if i == 0 {
		return float64(n-1) / 2
	}
	return 1/i - float64(n)/math.Expm1(float64(n)*math.Log1p(i))
}

// LevelPresentWorth returns the present worth of n equal payments of 1 at
// the starts of periods 0..n-1 with discount factor gamma per period:
// sum_{k<n} gamma^k = (1 - gamma^n) / (1 - gamma). With gamma = 1/(1+i)
// this is (1+i) (P/A, i, n), the convention fixpoint uses for costs.
func LevelPresentWorth(gamma float64, n int) float64 {
	if gamma == 1 {
		return float64(n)
	}
	return -math.Expm1(float64(n)*math.Log(gamma)) / (1 - gamma)
}

// MinDiscountGap is the smallest 1 - γ accepted: a factor closer to 1 has
// an effective horizon of more than 10⁹ periods, where float64 cannot
// prove any tolerance (errors grow like 1/(1-γ)); use the long-run
// average criterion instead.
const MinDiscountGap = 1e-9

// MaxRatePerYear is the highest discount rate accepted, per year (1000%).
const MaxRatePerYear = 10

// Discount says how costs one period apart are weighed: either a real
// rate per year together with the period length, or a factor per period.
// Build it with Rate or Factor; the zero value means "no discounting given"
// (the long-run average criterion needs none).
//
// The factor per period is γ = (1 + rate)^(-period in years); the rate of a
// factor is γ^(-1/period) - 1. Costs are charged at the start of each
// period, so a cost k periods ahead is worth γ^k today.
type Discount struct {
	rate, factor float64
	period       Period
	byRate       bool
}

// Rate returns the discount at rate per year (0.04 for 4%) over periods
// of p. The rate must be above 0 and at most MaxRatePerYear, and the
// factor it gives must lie in (0, 1 - MinDiscountGap].
func Rate(ratePerYear float64, p Period) (Discount, error) {
	if !p.Valid() {
		return Discount{}, fmt.Errorf("costs: discount rate needs a period")
	}
	if !finite(ratePerYear) || ratePerYear <= 0 || ratePerYear > MaxRatePerYear {
		return Discount{}, fmt.Errorf("costs: discount rate %v per year is not in (0, %d]", ratePerYear, MaxRatePerYear)
	}
	g := math.Pow(1+ratePerYear, -p.Years())
	if err := checkFactor(g); err != nil {
		return Discount{}, fmt.Errorf("costs: discount rate %v per year over %s: %w", ratePerYear, p, err)
	}
	return Discount{rate: ratePerYear, factor: g, period: p, byRate: true}, nil
}

// Factor returns the discount of factor per period of p; factor must lie
// in (0, 1 - MinDiscountGap].
func Factor(factor float64, p Period) (Discount, error) {
	if !p.Valid() {
		return Discount{}, fmt.Errorf("costs: discount factor needs a period")
	}
	if err := checkFactor(factor); err != nil {
		return Discount{}, fmt.Errorf("costs: %w", err)
	}
	return Discount{rate: math.Pow(factor, -1/p.Years()) - 1, factor: factor, period: p}, nil
}

func checkFactor(g float64) error {
	switch {
	case !finite(g) || g <= 0 || g >= 1:
		return fmt.Errorf("discount factor %v per period is not in (0, 1)", g)
	case 1-g < MinDiscountGap:
		return fmt.Errorf("discount factor %v per period is within %g of 1: no tolerance can be proven in float64 at such a factor; use the average criterion", g, MinDiscountGap)
	}
	return nil
}

// IsZero reports whether d is the zero value (no discounting given).
func (d Discount) IsZero() bool { return d.factor == 0 }

// Factor returns γ, the discount factor per period.
func (d Discount) Factor() float64 { return d.factor }

// RatePerYear returns the annual rate: as given, or the rate whose factor
// over one period is the factor given.
func (d Discount) RatePerYear() float64 { return d.rate }

// Period returns the period length the discount is stated for.
func (d Discount) Period() Period { return d.period }

// ByRate reports whether the discount was given as a rate per year (true)
// or as a factor per period (false).
func (d Discount) ByRate() bool { return d.byRate }

// Over returns γ^k, the weight of a cost k periods ahead.
func (d Discount) Over(k int) float64 { return math.Pow(d.factor, float64(k)) }

// EquivalentAnnual returns the level amount per year, paid at the start of
// every year for ever, with present worth pw at the annual rate.
func (d Discount) EquivalentAnnual(pw float64) float64 { return EquivalentAnnualCost(pw, d.rate) }

// String describes the discount: "4% per year (factor 0.961538 per period
// of 1 year)".
func (d Discount) String() string {
	if d.IsZero() {
		return "no discounting"
	}
	return fmt.Sprintf("%s%% per year (factor %.6f per period of %s)", trimFloat(100*d.rate), d.factor, d.period)
}
