package optimize

import (
	"context"
	"errors"
	"fmt"
	"math"
	"slices"

	"fixpoint/costs"
)

// RateRow is the advice at one annual (real) discount rate.
type RateRow struct {
	Rate     float64
	Discount float64
	// Result is the discounted answer (nil at rate 0), Average the
	// long-run average answer used at rate 0.
	Result  *Result
	Average *AverageResult
	Policy  []int
	// EquivalentAnnual is the equivalent annual cost of a unit starting in
	// state 0: v(0)·r/(1+r), or at rate 0 the gain per year.
	EquivalentAnnual float64
	// Changed lists the states whose advice differs from the previous row.
	Changed []int
}

// RateSwitch is a switch point expressed as an annual rate.
type RateSwitch struct {
	Rate float64
	Switch
}

// CurvePoint is one point of the equivalent annual cost against the rate.
type CurvePoint struct{ Rate, EquivalentAnnual float64 }

// Comparison is the advice across discount rates.
type Comparison struct {
	Rows []RateRow
	// Switches are every rate in [min, max] of the rows at which the advice
	// changes, in increasing rate, found by DiscountPath.
	Switches []RateSwitch
	Segments []Segment
	// Average is the long-run average (undiscounted) answer; AverageErr
	// says why it is missing when it is nil.
	Average    *AverageResult
	AverageErr error
	// Curve samples the equivalent annual cost of a unit starting in state
	// 0 over the range of rates, with the advice of each segment.
	Curve []CurvePoint
}

// CompareRates solves p at each annual real rate (>= 0; rate 0 uses the
// average criterion) for periods of length period, locates every switch
// point between the smallest and the largest rate, solves the average
// criterion, and samples the equivalent annual cost at curvePoints rates.
// Every phase checks ctx (see DiscountPath for the longest); cancellation
// returns ctx.Err().
func CompareRates(ctx context.Context, p *Problem, period costs.Period, rates []float64, curvePoints int, settings *Settings) (*Comparison, error) {
	if len(rates) == 0 {
		return nil, errors.New("optimize: no rates to compare")
	}
	for _, r := range rates {
		if !(r >= 0) || math.IsInf(r, 0) {
			return nil, fmt.Errorf("optimize: rate %v is not a finite number >= 0", r)
		}
	}
	periodYears := period.Years()
	c := &Comparison{}
	avg, err := SolveAverage(ctx, p, settings)
	var me *MultichainError
	switch {
	case errors.As(err, &me):
		c.AverageErr = err
	case err != nil:
		return nil, err
	default:
		c.Average = avg
	}
	for i, rate := range rates {
		row := RateRow{Rate: rate}
		if rate == 0 {
			if c.Average == nil {
				return nil, c.AverageErr
			}
			row.Discount, row.Average, row.Policy = 1, c.Average, c.Average.Policy
			row.EquivalentAnnual = c.Average.Gain / periodYears
		} else {
			d, err := costs.Rate(rate, period)
			if err != nil {
				return nil, err
			}
			g := d.Factor()
			q := *p
			q.Discount = g
			r, err := Solve(ctx, &q, settings)
			if err != nil {
				return nil, err
			}
			row.Discount, row.Result, row.Policy = g, r, r.Policy
			row.EquivalentAnnual = costs.EquivalentAnnualCost(r.Value[0], rate)
		}
		if i > 0 {
			for s, a := range row.Policy {
				if c.Rows[i-1].Policy[s] != a {
					row.Changed = append(row.Changed, s)
				}
			}
		}
		c.Rows = append(c.Rows, row)
	}
	lo, hi := slices.Min(rates), slices.Max(rates)
	if hi > lo {
		gLo, _ := costs.DiscountFactor(hi, periodYears)
		gHi, _ := costs.DiscountFactor(lo, periodYears)
		segs, sw, err := DiscountPath(ctx, p, gLo, gHi, settings)
		if err != nil {
			return nil, err
		}
		c.Segments = segs
		// Switches come in increasing γ, so decreasing rate.
		for i := len(sw) - 1; i >= 0; i-- {
			rate, err := costs.RateFromFactor(sw[i].Discount, periodYears)
			if err != nil {
				return nil, err
			}
			c.Switches = append(c.Switches, RateSwitch{Rate: rate, Switch: sw[i]})
		}
		if c.Curve, err = curve(ctx, p, periodYears, segs, lo, hi, curvePoints, c.Average); err != nil {
			return nil, err
		}
	}
	return c, nil
}

// curve samples the equivalent annual cost of state 0 at points rates
// evenly spread over [lo, hi], evaluating each segment's policy exactly
// (one LU per point, ctx checked before each).
func curve(ctx context.Context, p *Problem, periodYears float64, segs []Segment, lo, hi float64, points int, avg *AverageResult) ([]CurvePoint, error) {
	var out []CurvePoint
	for k := range max(points, 2) {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		rate := lo + (hi-lo)*float64(k)/float64(max(points, 2)-1)
		if rate == 0 {
			if avg != nil {
				out = append(out, CurvePoint{0, avg.Gain / periodYears})
			}
			continue
		}
		g, err := costs.DiscountFactor(rate, periodYears)
		if err != nil {
			return nil, err
		}
		i := slices.IndexFunc(segs, func(s Segment) bool { return g >= s.Lo && g <= s.Hi })
		if i < 0 {
			continue
		}
		q := *p
		q.Discount = g
		v, err := Evaluate(&q, segs[i].Policy)
		if err != nil {
			return nil, err
		}
		out = append(out, CurvePoint{rate, costs.EquivalentAnnualCost(v[0], rate)})
	}
	return out, nil
}
