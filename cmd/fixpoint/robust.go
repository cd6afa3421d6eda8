package main

import (
	"strings"

	"github.com/spf13/cobra"

	"fixpoint/cmd/internal/modelfile"
	"fixpoint/cmd/internal/settings"
	"fixpoint/optimize"
	"fixpoint/optimize/robust"
	"fixpoint/reports"
)

// robustNotFor refuses the robust settings for a file or criterion they
// do not apply to: flags given on the command line, like every other
// flag, and robust advice asked for by the environment or a settings file.
func (a *app) robustNotFor(on bool, what, why string) error {
	if err := a.src.NotFor(what, why, settings.RobustKeys...); err != nil {
		return err
	}
	if on {
		return usagef("the robust settings (FIXPOINT_ROBUST* or the settings file) do not apply to %s%s", what, why)
	}
	return nil
}

// solveRobust solves a class for robust advice: the ambiguity sets from
// the config's uncertainty block or the --robust-* settings, then the
// analysis (nominal and robust solves, the price of robustness, which
// rows more data would settle) and its view. c is the class as loaded
// (r may carry a discount override).
func (a *app) solveRobust(cmd *cobra.Command, c *modelfile.Class, r *classRun, st settings.Solve) error {
	if st.Solver.Method == optimize.LinearProgram {
		return usagef("method lp does not apply to robust advice (the robust problem is not a linear program); use auto, value or policy")
	}
	if err := a.src.NotFor("robust advice", " (it shows no life figures)", "target"); err != nil {
		return err
	}
	sets, notes, err := robustSets(c, r.Problem, st.Robust)
	if err != nil {
		return err
	}
	for _, n := range notes {
		a.warn(n)
	}
	an, err := robust.Analyze(cmd.Context(), r.Problem, sets, &st.Solver)
	if err != nil {
		return err
	}
	view := &reports.RobustAdvice{Header: header(r.Class), Problem: r.Problem, Analysis: an, Notes: notes,
		Warnings: a.safetyWarnings(r, an.Robust.Policy)}
	if err := a.emit(cmd, st.Output, view); err != nil {
		return err
	}
	return robustUncertified(an)
}

// robustSets builds the ambiguity sets: one radius for every row from
// --robust-radius (the config's block unused), else the config's block
// with --robust-set and --robust-confidence overriding its set and its
// radii. The notes name rows whose observations do not fit them.
func robustSets(c *modelfile.Class, p *optimize.Problem, rs settings.Robust) (*robust.Sets, []string, error) {
	u := c.Uncertainty
	kind := robust.L1
	if u != nil && u.HasSet && !rs.HasRadius {
		kind = u.Set
	}
	if rs.HasSet {
		kind = rs.Set
	}
	if rs.HasRadius {
		s, err := robust.Uniform(p, kind, rs.Radius, nil)
		if err != nil {
			return nil, nil, usagef("setting robust-radius: %s", strings.TrimPrefix(err.Error(), "robust: "))
		}
		return s, nil, nil
	}
	if u == nil {
		return nil, nil, &modelfile.Fault{File: c.Path, Path: "uncertainty", Msg: "missing: robust advice needs an uncertainty block " +
			"(set and radius, or confidence and observations; see fixpoint init) or --robust-radius R"}
	}
	var s *robust.Sets
	var notes []string
	var err error
	switch {
	case rs.HasConfidence || u.HasConfidence:
		conf := u.Confidence
		if rs.HasConfidence {
			conf = rs.Confidence
		}
		if u.Observations == nil {
			return nil, nil, c.UncertaintyFault("observations", "missing: radii at a confidence level come from the observed transitions per row; add them (fixpoint fit --merge writes them)")
		}
		if s, err = robust.FromCounts(p, kind, conf, u.Observations, u.Options()); err != nil {
			return nil, nil, c.LocateUncertainty(err)
		}
		for _, e := range c.NotCounted() {
			notes = append(notes, e.Error())
		}
	case u.HasRadius:
		s, err = robust.Uniform(p, kind, u.Radius, u.Options())
	case u.Radii != nil:
		s, err = robust.PerRow(p, kind, u.Radii, u.Options())
	default:
		return nil, nil, c.UncertaintyFault("", "no radius and no confidence: give one (radius: 0.1, or confidence: 0.9 with the observations), or --robust-confidence P or --robust-radius R")
	}
	if err != nil {
		return nil, nil, c.LocateUncertainty(err)
	}
	return s, notes, nil
}

// robustUncertified returns the exit-3 error when the robust or the
// nominal answer is not certified to its tolerance.
func robustUncertified(an *robust.Analysis) error {
	rob := an.Robust
	err := uncertified(&optimize.Result{Method: rob.Method, Status: rob.Status, Tol: rob.Tol, Iterations: rob.Iterations, Gap: rob.Gap, Rounding: rob.Rounding})
	if err != nil {
		return &uncertifiedError{strings.Replace(err.Error(), "the answer", "the robust answer", 1)}
	}
	if err := uncertified(an.Nominal); err != nil {
		return &uncertifiedError{strings.Replace(err.Error(), "the answer", "the nominal answer (beside the robust one)", 1)}
	}
	return nil
}
