package answer

import (
	"context"
	"errors"
	"fixpoint/cmd/internal/modelfile"
	"fixpoint/cmd/internal/settings"
	"fixpoint/optimize"
	"fixpoint/optimize/system"
	"fixpoint/reports"
	"fmt"
	"strings"
)

// AverageAdvice solves the long-run average-cost criterion of a class and
// wraps it for presentation; a multichain model is a fault of the file.
func (e *Env) AverageAdvice(r *Class, s optimize.Settings) (*reports.AverageAdvice, error) {
	res, err := optimize.SolveAverage(e.Ctx, r.Problem, &s)
	if err != nil {
		return nil, SolveFault(r.Path, err)
	}
	return &reports.AverageAdvice{Header: e.Header(r.Class), Problem: r.Problem, Result: res, Warnings: e.SafetyWarnings(r, res.Policy)}, nil
}

// SolveFault locates the error of a class solve in its file: a model
// whose optimal long-run average cost depends on the start is a fault of
// its criterion, any other problem of the model a fault of the file
// (each of joined errors on its own). Cancellation passes unchanged.
func SolveFault(path string, err error) error {
	if err == nil || errors.Is(err, context.Canceled) || errors.Is(err, context.DeadlineExceeded) {
		return err
	}
	if j, ok := err.(interface{ Unwrap() []error }); ok {
		var out []error
		for _, e := range j.Unwrap() {
			out = append(out, SolveFault(path, e))
		}
		return errors.Join(out...)
	}
	var f *modelfile.Fault
	if errors.As(err, &f) {
		return err
	}
	var me *optimize.MultichainError
	if errors.As(err, &me) {
		return &modelfile.Fault{File: path, Path: "criterion", Msg: modelfile.Plain(err)}
	}
	return &modelfile.Fault{File: path, Msg: modelfile.Plain(err)}
}

// AverageCheck returns the exit-3 error of an average-criterion
// answer whose gain is not proven to the tolerance, and nil otherwise.
func AverageCheck(res *optimize.AverageResult) error {
	if res.Status == optimize.Certified {
		return nil
	}
	return &Uncertified{fmt.Sprintf("the answer is not certified: the gain is proven only within [%.6g, %.6g], wider than the tolerance %.3g",
		res.GainLower, res.GainUpper, res.Tol)}
}

// reportBytesPerState bounds the memory a system's JSON or CSV report
// takes per joint state while it is rendered (measured about 460 bytes;
// common practice, no source, to keep a margin).
const reportBytesPerState = 600

// JointLimits are the sizes a joint solve may take: its workers (0: all
// cores), memory and time limits.
type JointLimits struct {
	Workers                int
	MaxMemoryGiB, MaxHours float64
}

// JointEstimate is the one estimate of a joint solve's memory and time
// that check, solve and brief state and the size guard compares with the
// limits: an upper bound whatever the output format, so it always counts
// the memory of a report of every joint state (JSON, CSV).
func JointEstimate(sf *modelfile.System, m *system.Machine, s *system.Settings) (system.Estimate, error) {
	est, err := m.Estimate(s)
	if err != nil {
		return est, &modelfile.Fault{File: sf.Path, Msg: modelfile.Plain(err)}
	}
	est.Bytes += reportBytesPerState * est.States
	return est, nil
}

// SizeFault is the fault of a joint model whose estimate is above the
// limits, with the numbers and how to shrink the model; nil when it fits.
func SizeFault(sf *modelfile.System, est system.Estimate, st JointLimits) error {
	if est.Check(st.MaxMemoryGiB*(1<<30), st.MaxHours*3600) == nil {
		return nil
	}
	var over []string
	if est.Bytes > st.MaxMemoryGiB*(1<<30) {
		over = append(over, fmt.Sprintf("the memory limit of %s GiB (--max-memory-gib)", reports.Money(st.MaxMemoryGiB, 0)))
	}
	if est.Seconds > st.MaxHours*3600 {
		over = append(over, fmt.Sprintf("the time limit of %s hours (--max-hours)", reports.Fixed(st.MaxHours, 1)))
	}
	return &modelfile.Fault{File: sf.Path, Path: "components", Msg: fmt.Sprintf(
		"the joint model is too large: %s joint states and %s joint actions need up to %s of memory and up to %s (at most %d sweeps on %d workers), over %s; "+
			"shrink it: fewer components in one system (solve weakly coupled ones apart), coarser condition scales (merge neighbouring states), or fewer actions per component",
		reports.Money(est.States, 0), reports.Money(est.Actions, 0), ByteSizeText(est.Bytes), DurationText(est.Seconds), est.Sweeps, est.Workers, strings.Join(over, " and "))}
}

// sizeGuard estimates memory and time of a joint solve and refuses
// machines above the limits; it prints the estimate before a solve that
// may take more than ten seconds.
func (e *Env) sizeGuard(sf *modelfile.System, m *system.Machine, s *system.Settings, st JointLimits) error {
	est, err := JointEstimate(sf, m, s)
	if err != nil {
		return err
	}
	if err := SizeFault(sf, est, st); err != nil {
		return err
	}
	if est.Seconds > 10 {
		e.Note(fmt.Sprintf("the joint model has %s states and %s actions: up to %s of memory and up to %d sweeps, %s at most (an upper bound: real solves took 3 to 16 times fewer sweeps)",
			reports.Money(est.States, 0), reports.Money(est.Actions, 0), ByteSizeText(est.Bytes), est.Sweeps, AboutDuration(est.Seconds)))
	}
	return nil
}

// DurationText formats seconds: "40 s", "12.5 min", "3.2 h", "under a
// second"; AboutDuration prefixes "about" where it reads well.
func DurationText(s float64) string {
	switch {
	case s >= 3600:
		return fmt.Sprintf("%.1f h", s/3600)
	case s >= 60:
		return fmt.Sprintf("%.1f min", s/60)
	}
	if s < 1 {
		return "under a second"
	}
	return fmt.Sprintf("%.0f s", s)
}

func AboutDuration(s float64) string {
	if s < 1 {
		return DurationText(s)
	}
	return "about " + DurationText(s)
}

// ByteSizeText formats a byte count for messages: "1.5 GiB".
func ByteSizeText(b float64) string {
	switch {
	case b >= 1<<30:
		return fmt.Sprintf("%.1f GiB", b/(1<<30))
	case b >= 1<<20:
		return fmt.Sprintf("%.1f MiB", b/(1<<20))
	}
	return fmt.Sprintf("%.0f KiB", b/(1<<10))
}

// SystemAdvice solves a system file (with the discount override, if
// any): the components alone, then jointly, then the separate policies in
// the joint model; it wraps the answer for presentation.
func (e *Env) SystemAdvice(sf *modelfile.System, o settings.Override, s optimize.Settings, lim JointLimits) (*reports.SystemAdvice, error) {
	if o.Given() {
		d, err := Override(sf.Period, o)
		if err != nil {
			return nil, err
		}
		h := sf.Header
		h.Discount = d
		sf = &modelfile.System{Header: h, Shutdown: sf.Shutdown, Down: sf.Down, DownOnUnsafe: sf.DownOnUnsafe, Components: sf.Components}
	}
	m, err := sf.Machine()
	if err != nil {
		return nil, err
	}
	settings := &system.Settings{Tol: s.Tol, MaxSweeps: s.MaxIterations, Workers: lim.Workers}
	if err := e.sizeGuard(sf, m, settings, lim); err != nil {
		return nil, err
	}
	ctx := e.Ctx
	sep, err := m.Separate(ctx)
	if err != nil {
		return nil, err
	}
	warm, err := m.SeparateStart(ctx, sep)
	if err != nil {
		return nil, err
	}
	settings.Start = warm
	r, err := system.Solve(ctx, m, settings)
	if err != nil {
		return nil, err
	}
	pols := make([][]int, len(sep))
	for i, res := range sep {
		pols[i] = res.Policy
	}
	ev, err := m.EvaluateProduct(ctx, pols, warm, s.Tol)
	if err != nil {
		return nil, err
	}
	alone, groups := m.Rules(r.Policy)
	used, err := m.ComponentActions(ctx, r.Policy)
	if err != nil {
		return nil, err
	}
	var notes []string
	for i, c := range m.Components {
		notes = append(notes, partNotes(c.Model, used[i], "the joint advice", "component "+c.Name, "component "+c.Name)...)
	}
	for _, n := range notes {
		e.Warn(n)
	}
	h := reports.Header{Model: sf.Name, Currency: sf.Currency, Period: sf.Period, Discount: m.Discount, Source: sf.Path, SHA256: sf.SHA256, Version: e.Version}
	return &reports.SystemAdvice{Header: h, System: m, Result: r, Separate: ev, Alone: alone, Groups: groups, Notes: notes}, nil
}

// SystemCheck returns the exit-3 error of a joint answer whose gap
// is above its tolerance, and nil otherwise.
func SystemCheck(r *system.Result) error {
	if r.Status == optimize.Certified {
		return nil
	}
	if r.Shortfall == optimize.RoundingFloor {
		return Certificate{Status: r.Status, Shortfall: r.Shortfall, Gap: r.Gap, Tol: r.Tol, Rounding: r.Rounding}.Err()
	}
	return &Uncertified{fmt.Sprintf("the answer is not certified: proven gap %.3g is above the tolerance %.3g: the solver stopped at its cap of %d sweeps; raise --max-iterations or loosen --tol",
		r.Gap, r.Tol, r.Sweeps-1)} // the last sweep is the certificate's
}
