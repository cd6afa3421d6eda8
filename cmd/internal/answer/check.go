package answer

import (
	"fmt"
	"math"
	"strconv"

	"fixpoint/cmd/internal/modelfile"
	"fixpoint/cmd/internal/settings"
	"fixpoint/optimize"
	"fixpoint/optimize/system"
)

// ClassCheck solves a class config under its own criterion and discount
// with solve's default settings and returns what solve would refuse: a
// model whose optimal average cost depends on the start (a fault at
// criterion, exit 1 as in solve), or an answer that cannot be certified
// to the default tolerance (Uncertified, exit 3 as in solve), with the
// file and field named. A class without a discount and under the
// discounted criterion is left to the commands that take --rate.
func (e *Env) ClassCheck(c *modelfile.Class) error {
	if c.Criterion != modelfile.Average && c.Discount.IsZero() {
		return nil
	}
	r, err := Prepare(c, settings.Override{}, "")
	if err != nil {
		return err
	}
	if r.Average {
		res, err := optimize.SolveAverage(e.Ctx, r.Problem, nil)
		if err != nil {
			return SolveFault(c.Path, err)
		}
		if err := AverageCheck(res); err != nil {
			return &Uncertified{fmt.Sprintf("%s: criterion: solve cannot certify this model at the default --tol %g: %s", c.Path, optimize.DefaultTol, err)}
		}
		return nil
	}
	res, err := optimize.Solve(e.Ctx, r.Problem, nil)
	if err != nil {
		return SolveFault(c.Path, err)
	}
	if err := Check(res); err != nil {
		return &Uncertified{fmt.Sprintf("%s: discount: at discount factor %s solve cannot certify this model at the default --tol %g: %s",
			c.Path, FactorText(r.Discount.Factor()), optimize.DefaultTol, err)}
	}
	return nil
}

// SystemSize returns the one estimate of a system's joint solve (see
// JointEstimate) with the default settings, and the fault of a model that
// solve refuses at its default --max-memory-gib and --max-hours.
func SystemSize(sf *modelfile.System, m *system.Machine) (system.Estimate, error) {
	est, err := JointEstimate(sf, m, &system.Settings{})
	if err != nil {
		return est, err
	}
	if err := SizeFault(sf, est, JointLimits{MaxMemoryGiB: settings.DefaultMaxMemoryGiB, MaxHours: settings.DefaultMaxHours}); err != nil {
		f := err.(*modelfile.Fault)
		return est, &modelfile.Fault{File: f.File, Path: f.Path, Msg: fmt.Sprintf("solve and brief refuse this system at their default limits (--max-memory-gib %d, --max-hours %d): %s; "+
			"or raise those limits if this machine can take it", settings.DefaultMaxMemoryGiB, settings.DefaultMaxHours, f.Msg)}
	}
	return est, nil
}

// FactorText formats a discount factor with six decimals, or as many
// more as it takes to show 1-γ to within 1% (0.99999999 is not
// "1.000000").
func FactorText(g float64) string {
	for d := 6; d < 17; d++ {
		s := strconv.FormatFloat(g, 'f', d, 64)
		v, _ := strconv.ParseFloat(s, 64)
		if math.Abs((1-v)-(1-g)) <= 0.01*math.Abs(1-g) {
			return s
		}
	}
	return strconv.FormatFloat(g, 'f', -1, 64)
}
