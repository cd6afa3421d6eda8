package answer

import (
	"fixpoint/cmd/internal/modelfile"
	"fixpoint/cmd/internal/settings"
	"fixpoint/costs"
	"fixpoint/optimize"
	"fixpoint/reports"
	"fmt"
	"math"
)

// Class is a class config ready to solve: the discount after any
// override, the criterion and the Problem.
type Class struct {
	*modelfile.Class
	Average bool
	Problem *optimize.Problem
}

// Prepare applies the discount override and the criterion (criterion ""
// keeps the config's) to a class and builds its Problem. A discounted
// solve without a discount is a fault of the file.
func Prepare(c *modelfile.Class, o settings.Override, criterion string) (*Class, error) {
	r := &Class{Class: c, Average: c.Criterion == modelfile.Average}
	switch criterion {
	case "average":
		r.Average = true
	case "discounted":
		r.Average = false
	}
	if o.Given() {
		d, err := Override(c.Period, o)
		if err != nil {
			return nil, err
		}
		h := c.Header
		h.Discount = d
		r.Class = &modelfile.Class{Header: h, Model: c.Model, Costs: c.Costs, CostScalar: c.CostScalar}
	}
	if !r.Average && r.Discount.IsZero() {
		return nil, &modelfile.Fault{File: c.Path, Path: "discount",
			Msg: "the discounted criterion needs a discount rate or factor (in the config, or --rate / --factor)"}
	}
	p, err := optimize.Build(c.Model, c.Costs, r.Discount.Factor())
	if err != nil {
		return nil, &modelfile.Fault{File: c.Path, Msg: err.Error()}
	}
	r.Problem = p
	return r, nil
}

// Header is the reports header of a class.
func (e *Env) Header(c *modelfile.Class) reports.Header {
	h := reports.Header{Model: c.Name, Currency: c.Currency, Period: c.Period, Discount: c.Discount,
		States: c.Model.StateNames(), Unsafe: c.Unsafe(), Source: c.Path, SHA256: c.SHA256, Version: e.Version}
	for _, act := range c.Model.Actions {
		if act.OutOfService {
			h.OutOfService = append(h.OutOfService, act.Name)
		}
	}
	return h
}

// Override turns --rate or --factor into a discount for periods p.
func Override(p costs.Period, o settings.Override) (costs.Discount, error) {
	if o.HasRate {
		d, err := costs.Rate(o.Rate, p)
		if err != nil {
			return d, settings.Errorf("setting rate: %v", modelfile.Plain(err))
		}
		return d, nil
	}
	d, err := costs.Factor(o.Factor, p)
	if err != nil {
		return d, settings.Errorf("setting factor: %v", modelfile.Plain(err))
	}
	return d, nil
}

// maxLifeYears caps the survival curves of the life figures.
const maxLifeYears = 100

// life computes the life figures of the advice, with first passage to
// target (default: the worst state) and survival curves until both the
// advice's and the passive chain's fall below 0.1%, or maxLifeYears.
func life(r *Class, res *optimize.Result, targetName string) (*optimize.Life, error) {
	m := r.Model
	n := len(m.States)
	target := optimize.WorstTarget(n)
	if targetName != "" {
		s := m.StateIndex(targetName)
		if s < 0 {
			return nil, settings.Errorf("setting target: unknown state %q%s", targetName, modelfile.DidYouMean(targetName, m.StateNames()))
		}
		target = make([]bool, n)
		target[s] = true
	}
	limit := int(math.Ceil(maxLifeYears / m.PeriodYears))
	horizon := m.PolicyChain(res.Policy).SurvivalHorizon(target, 1e-3, limit)
	if m.Passive() >= 0 {
		horizon = max(horizon, m.PassiveChain().SurvivalHorizon(target, 1e-3, limit))
	}
	return optimize.LifeFigures(m, r.Costs, res, r.Discount, target, max(horizon, 10))
}

// Advise solves a class (discounted criterion) and wraps the result for
// presentation.
func (e *Env) Advise(r *Class, s optimize.Settings, target string) (*reports.Advice, error) {
	res, err := optimize.Solve(e.Ctx, r.Problem, &s)
	if err != nil {
		return nil, SolveFault(r.Path, err)
	}
	l, err := life(r, res, target)
	if err != nil {
		return nil, err
	}
	warnings := e.SafetyWarnings(r, res.Policy)
	for _, err := range []error{l.PolicyErr, l.PassiveErr} {
		if err != nil {
			w := "Life figures: " + modelfile.Plain(err) + "; those figures are shown as n/a."
			e.Warn(w)
			warnings = append(warnings, w)
		}
	}
	return &reports.Advice{Header: e.Header(r.Class), Passive: r.Model.Passive(), Problem: r.Problem, Result: res, Life: l,
		Warnings: warnings}, nil
}

// SafetyWarnings warns, on stderr and in the returned lines for the
// outputs, when under the advice a unit that enters an unsafe state is
// expected to stay in unsafe states for more than one period; and, on
// stderr, where the advice takes units out of service (the outputs say
// that themselves).
func (e *Env) SafetyWarnings(r *Class, policy []int) []string {
	warnings, outOfService := classSafety(r.Model, policy)
	for _, w := range append(outOfService, warnings...) {
		e.Warn(w)
	}
	return warnings
}

// Check returns the exit-3 error for a result whose gap is above
// its tolerance, with the remedy that fits why, and nil for a certified
// one.
func Check(r *optimize.Result) error {
	return Certificate{r.Status, r.Shortfall, r.Gap, r.Tol, r.Rounding, r.Method, r.Iterations, r.Pivots}.Err()
}

// Certificate is what any certified solve says about itself.
type Certificate struct {
	Status             optimize.Status
	Shortfall          optimize.Shortfall
	Gap, Tol, Rounding float64
	Method             optimize.Method
	Iterations, Pivots int
}

// Err is the exit-3 error of a certificate that is short, with the remedy
// that fits why; a solver that does not say why is taken to have hit
// the rounding floor when its gap is within four rounding allowances,
// its iteration cap otherwise.
func (c Certificate) Err() error {
	if c.Status == optimize.Certified {
		return nil
	}
	why := c.Shortfall
	if why == optimize.NoShortfall {
		why = optimize.IterationCap
		if c.Gap < 4*c.Rounding {
			why = optimize.RoundingFloor
		}
	}
	head := fmt.Sprintf("the answer is not certified: proven gap %.3g is above the tolerance %.3g", c.Gap, c.Tol)
	switch why {
	case optimize.RoundingFloor:
		return &Uncertified{fmt.Sprintf("%s, and %.3g of it is the allowance for floating-point rounding at these values and this discount factor; "+
			"a tolerance below about %.3g cannot be proven in float64: loosen --tol, or state the costs in larger units", head, c.Rounding, 2*c.Rounding)}
	case optimize.MethodAccuracy:
		return &Uncertified{head + ": the simplex method's own tolerance leaves the gap above --tol: use --method policy"}
	case optimize.TieLoss:
		return &Uncertified{head + ": the tie tolerance costs more than the tolerance allows; lower the tie tolerance"}
	}
	n, unit := c.Iterations, "steps"
	switch c.Method {
	case optimize.ValueIteration:
		unit = "sweeps"
	case optimize.LinearProgram:
		n, unit = c.Pivots, "pivots"
	}
	remedy := "raise --max-iterations"
	if c.Method != optimize.PolicyIteration {
		remedy += " or use --method policy"
	}
	return &Uncertified{fmt.Sprintf("%s: the solver stopped at its cap of %d %s; %s", head, n, unit, remedy)}
}
