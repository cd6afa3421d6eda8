package answer

import (
	"fixpoint/cmd/internal/modelfile"
	"fixpoint/cmd/internal/settings"
	"fixpoint/optimize"
	"fixpoint/optimize/robust"
	"fixpoint/reports"
	"strings"
)

// RobustSets builds the ambiguity sets: one radius for every row from
// --robust-radius (the config's block unused), else the config's block
// with --robust-set and --robust-confidence overriding its set and its
// radii. The notes name rows whose observations do not fit them.
func RobustSets(c *modelfile.Class, p *optimize.Problem, rs settings.Robust) (*robust.Sets, []string, error) {
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
			return nil, nil, settings.Errorf("setting robust-radius: %s", strings.TrimPrefix(err.Error(), "robust: "))
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

// RobustCheck returns the exit-3 error when the robust or the
// nominal answer is not certified to its tolerance.
func RobustCheck(an *robust.Analysis) error {
	rob := an.Robust
	err := Check(&optimize.Result{Method: rob.Method, Status: rob.Status, Tol: rob.Tol, Iterations: rob.Iterations, Gap: rob.Gap, Rounding: rob.Rounding})
	if err != nil {
		return &Uncertified{strings.Replace(err.Error(), "the answer", "the robust answer", 1)}
	}
	if err := Check(an.Nominal); err != nil {
		return &Uncertified{strings.Replace(err.Error(), "the answer", "the nominal answer (beside the robust one)", 1)}
	}
	return nil
}

// RobustAdvice builds the ambiguity sets of a class (c as loaded; r may
// carry a discount override) and analyses them: the nominal and robust
// solves, the price of robustness, which rows more data would settle.
func (e *Env) RobustAdvice(c *modelfile.Class, r *Class, rs settings.Robust, s optimize.Settings) (*reports.RobustAdvice, error) {
	sets, notes, err := RobustSets(c, r.Problem, rs)
	if err != nil {
		return nil, err
	}
	for _, n := range notes {
		e.Warn(n)
	}
	an, err := robust.Analyze(e.Ctx, r.Problem, sets, &s)
	if err != nil {
		return nil, SolveFault(c.Path, err)
	}
	return &reports.RobustAdvice{Header: e.Header(r.Class), Problem: r.Problem, Analysis: an, Notes: notes,
		Warnings: e.SafetyWarnings(r, an.Robust.Policy)}, nil
}
