package optimize

import "math"

// RelativeGap returns how far a cost x lies above a proven lower bound,
// relative to |x|: (x - lower)/|x|, never negative. A cost below its bound
// can only come from rounding (the bound is proven), so a negative
// difference, a negative zero and x = 0 all give +0; printed with a
// percent format this is "0.000%", never "-0.000%".
func RelativeGap(x, lower float64) float64 {
	d := x - lower
	if !(d > 0) || x == 0 {
		return 0
	}
	return d / math.Abs(x)
}
