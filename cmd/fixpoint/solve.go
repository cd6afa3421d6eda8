package main

import (
	"errors"
	"fmt"
	"io"
	"strings"

	"github.com/spf13/cobra"

	"fixpoint/cmd/internal/modelfile"
	"fixpoint/cmd/internal/settings"
	"fixpoint/optimize"
	"fixpoint/optimize/system"
	"fixpoint/reports"
)

func (a *app) newSolve() *cobra.Command {
	cmd := &cobra.Command{
		Use:   "solve FILE",
		Short: "Solve a class config or a system file: the certified best action in every condition",
		Long: `solve reads a class config (or a system file of components sharing a shutdown),
builds the Markov decision process and solves it to proven optimality. It
prints, for every condition, the advised action, its expected present-value
cost, proven lower and upper bounds on the optimal cost, the runner-up action
and its margin, then the threshold rule and the certificate.

With an inspection block in the class config, solve decides the next inspection
with the action: per condition "overhaul, then inspect again in 6 months", the
cost of each allowed fixed interval against that advice, and how long hidden
failures stay in service. The statutory interval and a competent person's
scheme of examination take precedence over the advised interval.

--robust gives, for a class config, the advice that is best for the worst
transition matrices its uncertainty block allows (--robust-set, --robust-confidence
override the block; --robust-radius R puts one radius on every row), with the
nominal advice beside it, the price of robustness, the confidence statement and
which rows more data would settle.

Exit status 3 means the answer was written but its proven gap is above --tol.`,
		Example: `  fixpoint solve configs/pumps.yaml
  fixpoint solve configs/pumps.yaml --rate 3.5% --format json -o advice.json
  fixpoint solve configs/crane.yaml --workers 2
  fixpoint solve configs/pumps.yaml --robust-radius 0.1`,
		Args: exactArgs(1, "one class config or system file"),
		RunE: func(cmd *cobra.Command, args []string) error { return a.solve(cmd, args[0]) },
	}
	f := cmd.Flags()
	settings.AddSolver(f)
	settings.AddOverride(f)
	settings.AddCriterion(f)
	settings.AddTarget(f)
	settings.AddSystem(f)
	settings.AddRobust(f)
	settings.AddOutput(f, settings.Reports()...)
	return cmd
}

// report is what every tabular result offers.
type report interface {
	WriteTable(io.Writer) error
	WriteJSON(io.Writer) error
	WriteCSV(io.Writer) error
}

// workbook is a report that is also written as a spreadsheet workbook.
type workbook interface{ WriteXLSX(io.Writer) error }

// emit writes r in the format of o (xlsx only to a file: settings.Output
// refuses it without one).
func (a *app) emit(cmd *cobra.Command, o settings.Output, r report) error {
	wb, isWorkbook := r.(workbook)
	if o.Format == "xlsx" && !isWorkbook {
		return usagef("this result has no workbook; use --format table, json or csv")
	}
	return a.target(o).Write(cmd.Context(), a.stdout, func(w io.Writer) error {
		switch o.Format {
		case "json":
			return r.WriteJSON(w)
		case "csv":
			return r.WriteCSV(w)
		case "xlsx":
			return wb.WriteXLSX(w)
		}
		return r.WriteTable(w)
	})
}

func (a *app) solve(cmd *cobra.Command, path string) error {
	st, err := a.src.Solve()
	if err != nil {
		return err
	}
	f, err := a.load(cmd, path, modelfile.ClassFile, modelfile.SystemFile)
	if err != nil {
		return err
	}
	if err := a.target(st.Output).Check(); err != nil {
		return err
	}
	if f.System != nil {
		if err := a.src.NotFor("a system file", " (its joint model is solved by value iteration, under the discounted criterion)",
			"method", "criterion", "target"); err != nil {
			return err
		}
		if err := a.robustNotFor(st.Robust.On, "a system file", " (robust advice is for class configs: see the README)"); err != nil {
			return err
		}
		return a.solveSystem(cmd, f.System, st)
	}
	if err := a.src.NotFor("a class config", " (they size the joint model of a system file)", "workers", "max-memory-gib", "max-hours"); err != nil {
		return err
	}
	if st.Output.Format == "xlsx" && (f.Class.Inspection != nil || st.Robust.On) {
		return usagef("inspection and robust advice have no workbook yet; use --format table, json or csv")
	}
	if f.Class.Inspection != nil {
		return a.solveInspection(cmd, f.Class, st)
	}
	r, err := prepare(f.Class, st.Override, st.Criterion)
	if err != nil {
		return err
	}
	if r.Average {
		if err := a.src.NotFor("the average criterion", " (it has no discounting)", "rate", "factor", "target"); err != nil {
			return err
		}
		if err := a.robustNotFor(st.Robust.On, "the average criterion", " (robust advice is for the discounted criterion)"); err != nil {
			return err
		}
		return a.solveAverage(cmd, r, st)
	}
	if st.Robust.On {
		return a.solveRobust(cmd, f.Class, r, st)
	}
	adv, err := a.advise(cmd, r, st.Solver, st.Target)
	if err != nil {
		return err
	}
	if err := a.emit(cmd, st.Output, adv); err != nil {
		return err
	}
	return uncertified(adv.Result)
}

// averageAdvice solves the long-run average-cost criterion of a class and
// wraps it for presentation; a multichain model is a fault of the file.
func (a *app) averageAdvice(cmd *cobra.Command, r *classRun, s optimize.Settings) (*reports.AverageAdvice, error) {
	res, err := optimize.SolveAverage(cmd.Context(), r.Problem, &s)
	var me *optimize.MultichainError
	if errors.As(err, &me) {
		return nil, &modelfile.Fault{File: r.Path, Path: "criterion", Msg: strings.TrimPrefix(err.Error(), "optimize: ")}
	}
	if err != nil {
		return nil, err
	}
	return &reports.AverageAdvice{Header: header(r.Class), Problem: r.Problem, Result: res, Warnings: a.safetyWarnings(r, res.Policy)}, nil
}

// averageUncertified returns the exit-3 error of an average-criterion
// answer whose gain is not proven to the tolerance, and nil otherwise.
func averageUncertified(res *optimize.AverageResult) error {
	if res.Status == optimize.Certified {
		return nil
	}
	return &uncertifiedError{fmt.Sprintf("the answer is not certified: the gain is proven only within [%.6g, %.6g], wider than the tolerance %.3g",
		res.GainLower, res.GainUpper, res.Tol)}
}

// solveAverage solves the long-run average-cost criterion and writes it.
func (a *app) solveAverage(cmd *cobra.Command, r *classRun, st settings.Solve) error {
	adv, err := a.averageAdvice(cmd, r, st.Solver)
	if err != nil {
		return err
	}
	if err := a.emit(cmd, st.Output, adv); err != nil {
		return err
	}
	return averageUncertified(adv.Result)
}

// reportBytesPerState bounds the memory a system's JSON or CSV report
// takes per joint state while it is rendered (measured about 460 bytes;
// common practice, no source, to keep a margin).
const reportBytesPerState = 600

// jointLimits are the sizes a joint solve may take: its workers (0: all
// cores), memory and time limits, and whether a report of every joint
// state follows (JSON, CSV).
type jointLimits struct {
	workers                int
	MaxMemoryGiB, MaxHours float64
	report                 bool
}

// sizeGuard estimates memory and time of a joint solve and refuses
// machines above the limits, with the numbers and how to shrink the model;
// it prints the estimate before a solve that may take more than ten
// seconds.
func (a *app) sizeGuard(sf *modelfile.System, m *system.Machine, s *system.Settings, st jointLimits) error {
	est, err := m.Estimate(s)
	if err != nil {
		return &modelfile.Fault{File: sf.Path, Msg: modelfile.Plain(err)}
	}
	if st.report {
		est.Bytes += reportBytesPerState * est.States
	}
	if err := est.Check(st.MaxMemoryGiB*(1<<30), st.MaxHours*3600); err != nil {
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
			reports.Money(est.States, 0), reports.Money(est.Actions, 0), byteSizeText(est.Bytes), durationText(est.Seconds), est.Sweeps, est.Workers, strings.Join(over, " and "))}
	}
	if est.Seconds > 10 {
		a.note(fmt.Sprintf("the joint model has %s states and %s actions: up to %s of memory and up to %d sweeps, about %s at most (an upper bound: real solves took 3 to 16 times fewer sweeps)",
			reports.Money(est.States, 0), reports.Money(est.Actions, 0), byteSizeText(est.Bytes), est.Sweeps, durationText(est.Seconds)))
	}
	return nil
}

// durationText formats seconds: "40 s", "12.5 min", "3.2 h".
func durationText(s float64) string {
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

// byteSizeText formats a byte count for messages: "1.5 GiB".
func byteSizeText(b float64) string {
	switch {
	case b >= 1<<30:
		return fmt.Sprintf("%.1f GiB", b/(1<<30))
	case b >= 1<<20:
		return fmt.Sprintf("%.1f MiB", b/(1<<20))
	}
	return fmt.Sprintf("%.0f KiB", b/(1<<10))
}

// systemAdvice solves a system file (with the discount override, if
// any): the components alone, then jointly, then the separate policies in
// the joint model; it wraps the answer for presentation.
func (a *app) systemAdvice(cmd *cobra.Command, sf *modelfile.System, o settings.Override, s optimize.Settings, lim jointLimits) (*reports.SystemAdvice, error) {
	if o.Given() {
		d, err := override(sf.Period, o)
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
	settings := &system.Settings{Tol: s.Tol, MaxSweeps: s.MaxIterations, Workers: lim.workers}
	if err := a.sizeGuard(sf, m, settings, lim); err != nil {
		return nil, err
	}
	ctx := cmd.Context()
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
	h := reports.Header{Model: sf.Name, Currency: sf.Currency, Period: sf.Period, Discount: m.Discount, Source: sf.Path, SHA256: sf.SHA256, Version: version()}
	return &reports.SystemAdvice{Header: h, System: m, Result: r, Separate: ev, Alone: alone, Groups: groups}, nil
}

// systemUncertified returns the exit-3 error of a joint answer whose gap
// is above its tolerance, and nil otherwise.
func systemUncertified(r *system.Result) error {
	if r.Status == optimize.Certified {
		return nil
	}
	return &uncertifiedError{fmt.Sprintf("the answer is not certified: proven gap %.3g is above the tolerance %.3g after %d sweeps; raise --max-iterations or loosen --tol",
		r.Gap, r.Tol, r.Sweeps)}
}

// solveSystem solves a system file and writes the advice.
func (a *app) solveSystem(cmd *cobra.Command, sf *modelfile.System, st settings.Solve) error {
	view, err := a.systemAdvice(cmd, sf, st.Override, st.Solver, jointLimits{st.Workers, st.MaxMemoryGiB, st.MaxHours, st.Output.Format != "table"})
	if err != nil {
		return err
	}
	if err := a.emit(cmd, st.Output, view); err != nil {
		return err
	}
	return systemUncertified(view.Result)
}
