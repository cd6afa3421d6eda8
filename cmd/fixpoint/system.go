package main

import (
	"fmt"
	"math"

	"github.com/spf13/cobra"

	"fixpoint/optimize"
	"fixpoint/optimize/system"
	"fixpoint/reports"
)

// sizeGuard estimates memory and time of a joint solve and refuses
// systems whose memory exceeds the limit, with the numbers and how to
// shrink the model.
func (a *app) sizeGuard(sf *systemFile, sys *system.Machine, set *system.Settings) error {
	limit, err := a.number("max-memory-gib")
	if err != nil {
		return err
	}
	est, err := sys.Estimate(set)
	if err != nil {
		return &inputError{File: sf.Path, Msg: err.Error()}
	}
	n, acts, bytes := est.States, est.Actions, est.Bytes
	if bytes <= limit*(1<<30) && n <= 5e7 && acts <= 1e6 {
		return nil
	}
	hours := est.Seconds / 3600
	return &inputError{File: sf.Path, Path: "components", Msg: fmt.Sprintf(
		"the joint model is too large: %s joint states and %s joint actions need about %s of memory (limit %s GiB, --max-memory-gib) and about %.1f hours per certified solve; "+
			"shrink it: fewer components in one system (solve weakly coupled ones apart), coarser condition scales (merge neighbouring states), or fewer actions per component",
		reports.Money(n, 0), reports.Money(acts, 0), byteSizeText(bytes), reports.Fixed(limit, 0), hours)}
}

// solveSystem solves a system file: the components alone, then jointly,
// and writes the advice.
func (a *app) solveSystem(cmd *cobra.Command, sf *systemFile, s *optimize.Settings, format string, out output) error {
	if err := a.discountOverride(&sf.fileHeader); err != nil {
		return err
	}
	sys, err := sf.system()
	if err != nil {
		return err
	}
	workers, err := a.integer("workers")
	if err != nil {
		return err
	}
	if err := a.sizeGuard(sf, sys, &system.Settings{Tol: s.Tol, MaxSweeps: s.MaxIterations, Workers: workers}); err != nil {
		return err
	}
	sep, err := sys.Separate(cmd.Context())
	if err != nil {
		return err
	}
	warm, err := sys.SeparateStart(cmd.Context(), sep)
	if err != nil {
		return err
	}
	r, err := system.Solve(cmd.Context(), sys, &system.Settings{Tol: s.Tol, MaxSweeps: s.MaxIterations, Workers: workers, Start: warm})
	if err != nil {
		return err
	}
	pols := make([][]int, len(sep))
	for i, res := range sep {
		pols[i] = res.Policy
	}
	ev, err := sys.EvaluateProduct(cmd.Context(), pols, warm, s.Tol)
	if err != nil {
		return err
	}
	alone, groups := sys.Rules(r.Policy)
	rate := sys.Discount.RatePerYear()
	view := &reports.SystemAdvice{Model: sf.Name, Currency: sf.Currency, PeriodYears: sf.PeriodYears, Rate: rate,
		HasRate: !math.IsNaN(rate), System: sys, Result: r, Separate: ev, Alone: alone, Groups: groups}
	err = a.emit(cmd, out, format, view)
	if err != nil {
		return err
	}
	if r.Status != optimize.Certified {
		return &uncertifiedError{fmt.Sprintf("the answer is not certified: proven gap %.3g is above the tolerance %.3g after %d sweeps; raise --max-iterations or loosen --tol",
			r.Gap, r.Tol, r.Sweeps)}
	}
	return nil
}
