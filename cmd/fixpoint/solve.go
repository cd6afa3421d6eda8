package main

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"

	"github.com/spf13/cobra"

	"fixpoint/costs"
	"fixpoint/optimize"
	"fixpoint/reports"
)

var formats = []string{"table", "json", "csv"}

func (a *app) newSolve() *cobra.Command {
	cmd := &cobra.Command{
		Use:   "solve FILE",
		Short: "Solve a class config: the certified best action in every condition",
		Long: `solve reads a class config, builds the discounted-cost Markov decision process
and solves it to proven optimality. It prints, for every condition, the advised
action, its expected present-value cost, proven lower and upper bounds on the
optimal cost, the runner-up action and its margin, then the threshold rule and
the certificate.

Exit status 3 means the answer was written but its proven gap is above --tol.`,
		Args: exactArgs(1, "one class config file"),
		RunE: func(cmd *cobra.Command, args []string) error { return a.solve(cmd, args[0]) },
	}
	addSolverFlags(cmd)
	cmd.Flags().String("workers", "0", "goroutines for a system's joint solve; 0 = all cores (`n`)")
	cmd.Flags().String("max-memory-gib", "4", "refuse joint models needing more memory than this (`GiB`)")
	cmd.Flags().String("criterion", "", "`discounted` or average (default: the config's criterion, else discounted)")
	cmd.Flags().String("target", "", "`state` whose first passage the life figures measure (default: the worst state)")
	addOutputFlags(cmd)
	return cmd
}

// addOutputFlags adds --format, --output and --force.
func addOutputFlags(cmd *cobra.Command) {
	f := cmd.Flags()
	f.String("format", "table", "output format: table, json or csv")
	f.StringP("output", "o", "", "write to this `file` instead of standard output")
	f.Bool("force", false, "replace the output file if it exists")
}

// outputSettings reads --format (one of allowed), --output and --force.
func (a *app) outputSettings(allowed []string, inputs ...string) (string, output, error) {
	format := a.str("format")
	if !slices.Contains(allowed, format) {
		return "", output{}, usagef("unknown format %q; want one of %v", format, allowed)
	}
	force, err := a.boolean("force")
	if err != nil {
		return "", output{}, err
	}
	o := output{path: a.str("output"), force: force, inputs: inputs}
	return format, o, o.check()
}

// solverSettings reads --method, --tol and --max-iterations.
func (a *app) solverSettings() (*optimize.Settings, error) {
	m, err := optimize.ParseMethod(a.str("method"))
	if err != nil {
		return nil, usagef("setting method: unknown method %q; want auto, value, policy or lp", a.str("method"))
	}
	tol, err := a.number("tol")
	if err != nil {
		return nil, err
	}
	if !(tol > 0) {
		return nil, usagef("setting tol: %g is not a tolerance > 0", tol)
	}
	maxIt, err := a.integer("max-iterations")
	if err != nil {
		return nil, err
	}
	if maxIt < 0 {
		return nil, usagef("setting max-iterations: %d is negative", maxIt)
	}
	return &optimize.Settings{Method: m, Tol: tol, MaxIterations: maxIt}, nil
}

// discountOverride applies --rate or --factor to the file's discount, if
// given.
func (a *app) discountOverride(c *fileHeader) error {
	rate, factor := a.str("rate"), a.str("factor")
	switch {
	case rate != "" && factor != "":
		return usagef("give either --rate or --factor, not both")
	case rate != "":
		r, err := a.number("rate")
		if err != nil {
			return err
		}
		g, err := costs.DiscountFactor(r, c.PeriodYears)
		if err != nil || !(g < 1) {
			return usagef("setting rate: %g is not a discount rate above 0", r)
		}
		c.Rate, c.HasRate, c.HasFactor = r, true, false
	case factor != "":
		g, err := a.number("factor")
		if err != nil {
			return err
		}
		if !(g > 0 && g < 1) {
			return usagef("setting factor: %g is not in (0, 1)", g)
		}
		c.Factor, c.HasFactor, c.HasRate = g, true, false
	}
	return nil
}

// loadProblem reads a class config, applies the discount override and
// builds its Problem.
func (a *app) loadProblem(path string) (*classFile, *optimize.Problem, error) {
	c, err := a.loadClass(path)
	if err != nil {
		return nil, nil, err
	}
	p, err := a.classProblem(c)
	return c, p, err
}

// classProblem applies the discount override to a class and builds its
// Problem.
func (a *app) classProblem(c *classFile) (*optimize.Problem, error) {
	path := c.Path
	if err := a.discountOverride(&c.fileHeader); err != nil {
		return nil, err
	}
	g := 0.0 // the average criterion needs none
	if c.HasRate || c.HasFactor {
		var err error
		if g, err = c.DiscountFactor(); err != nil {
			return nil, &inputError{File: path, Path: "discount", Msg: err.Error()}
		}
	}
	p, err := optimize.Build(c.Model, c.Costs, g)
	if err != nil {
		return nil, &inputError{File: path, Msg: err.Error()}
	}
	return p, nil
}

func (c *classFile) unsafe() []bool {
	u := make([]bool, len(c.Model.States))
	for s, st := range c.Model.States {
		u[s] = st.Unsafe
	}
	return u
}

// advise solves a class and wraps the result for presentation.
func (a *app) advise(cmd *cobra.Command, s *optimize.Settings, c *classFile, p *optimize.Problem) (*reports.Advice, error) {
	r, err := optimize.Solve(cmd.Context(), p, s)
	if err != nil {
		return nil, err
	}
	life, err := a.life(c, r)
	if err != nil {
		return nil, err
	}
	return &reports.Advice{
		Model: c.Name, Currency: c.Currency, PeriodYears: c.Model.PeriodYears,
		Rate: c.Rate, HasRate: c.HasRate, Unsafe: c.unsafe(), Passive: c.Model.Passive(),
		Problem: p, Result: r, Life: life,
	}, nil
}

// maxLifeYears caps the survival curves of the life figures.
const maxLifeYears = 100

// life computes the life figures of the advice, with first passage to
// --target (default: the worst state) and survival curves until both fall
// below 0.1% or maxLifeYears.
func (a *app) life(c *classFile, r *optimize.Result) (*optimize.Life, error) {
	m := c.Model
	n := len(m.States)
	target := optimize.WorstTarget(n)
	if name := a.str("target"); name != "" {
		s := m.StateIndex(name)
		if s < 0 {
			return nil, usagef("setting target: unknown state %q%s", name, didYouMean(name, m.StateNames()))
		}
		target = make([]bool, n)
		target[s] = true
	}
	limit := int(math.Ceil(maxLifeYears / m.PeriodYears))
	horizon := m.PolicyChain(r.Policy).SurvivalHorizon(target, 1e-3, limit)
	if m.Passive() >= 0 {
		horizon = m.PassiveChain().SurvivalHorizon(target, 1e-3, limit)
	}
	d, err := c.discount()
	if err != nil {
		return nil, &inputError{File: c.Path, Path: "discount", Msg: err.Error()}
	}
	return optimize.LifeFigures(m, c.Costs, r, d, target, max(horizon, 10))
}

func (a *app) solve(cmd *cobra.Command, path string) error {
	format, out, err := a.outputSettings(formats, path)
	if err != nil {
		return err
	}
	settings, err := a.solverSettings()
	if err != nil {
		return err
	}
	m, err := a.loadModel(path)
	if err != nil {
		return err
	}
	if m.System != nil {
		return a.solveSystem(cmd, m.System, settings, format, out)
	}
	c := m.Class
	p, err := a.classProblem(c)
	if err != nil {
		return err
	}
	average, err := a.averageCriterion(c)
	if err != nil {
		return err
	}
	if average {
		return a.solveAverage(cmd, settings, c, p, format, out)
	}
	adv, err := a.advise(cmd, settings, c, p)
	if err != nil {
		return err
	}
	err = a.emit(cmd, out, format, adv)
	if err != nil {
		return err
	}
	return uncertified(adv.Result)
}

// uncertified returns the exit-3 error for a result whose gap is above
// its tolerance, and nil for a certified one.
func uncertified(r *optimize.Result) error {
	if r.Status == optimize.Certified {
		return nil
	}
	if r.Gap < 4*r.Rounding {
		return &uncertifiedError{fmt.Sprintf(
			"the answer is not certified: proven gap %.3g is above the tolerance %.3g, and %.3g of it is the allowance for floating-point rounding at these values and this discount factor; a tolerance below that cannot be proven in float64: loosen --tol",
			r.Gap, r.Tol, r.Rounding)}
	}
	return &uncertifiedError{fmt.Sprintf(
		"the answer is not certified: proven gap %.3g is above the tolerance %.3g after %d iterations; raise --max-iterations, loosen --tol or use --method policy",
		r.Gap, r.Tol, r.Iterations)}
}

// averageCriterion resolves --criterion against the config and checks that
// a discounted solve has a discount.
func (a *app) averageCriterion(c *classFile) (bool, error) {
	average := c.Average
	switch v := a.str("criterion"); v {
	case "":
	case "average":
		average = true
	case "discounted":
		average = false
	default:
		return false, usagef("setting criterion: unknown criterion %q; want discounted or average", v)
	}
	if !average && !c.HasRate && !c.HasFactor {
		return false, &inputError{File: c.Path, Path: "discount",
			Msg: "the discounted criterion needs a discount rate or factor (in the config, or --rate / --factor)"}
	}
	return average, nil
}

// solveAverage solves the long-run average-cost criterion and writes it.
func (a *app) solveAverage(cmd *cobra.Command, s *optimize.Settings, c *classFile, p *optimize.Problem, format string, out output) error {
	r, err := optimize.SolveAverage(cmd.Context(), p, s)
	var me *optimize.MultichainError
	if errors.As(err, &me) {
		return &inputError{File: c.Path, Path: "criterion", Msg: strings.TrimPrefix(err.Error(), "optimize: ")}
	}
	if err != nil {
		return err
	}
	adv := &reports.AverageAdvice{Model: c.Name, Currency: c.Currency, PeriodYears: c.Model.PeriodYears,
		Unsafe: c.unsafe(), Problem: p, Result: r}
	err = a.emit(cmd, out, format, adv)
	if err != nil {
		return err
	}
	if r.Status != optimize.Certified {
		return &uncertifiedError{fmt.Sprintf("the answer is not certified: the gain is proven only within [%.6g, %.6g], wider than the tolerance %.3g",
			r.GainLower, r.GainUpper, r.Tol)}
	}
	return nil
}
