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

Exit status 3 means the answer was written but its proven gap is above --tol.`,
		Example: `  fixpoint solve configs/pumps.yaml
  fixpoint solve configs/pumps.yaml --rate 3.5% --format json -o advice.json
  fixpoint solve configs/crane.yaml --workers 2`,
		Args: exactArgs(1, "one class config or system file"),
		RunE: func(cmd *cobra.Command, args []string) error { return a.solve(cmd, args[0]) },
	}
	f := cmd.Flags()
	settings.AddSolver(f)
	settings.AddOverride(f)
	settings.AddCriterion(f)
	settings.AddTarget(f)
	settings.AddSystem(f)
	settings.AddOutput(f, "table", "json", "csv")
	return cmd
}

// report is what every tabular result offers.
type report interface {
	WriteTable(io.Writer) error
	WriteJSON(io.Writer) error
	WriteCSV(io.Writer) error
}

// emit writes r in the format of o.
func (a *app) emit(cmd *cobra.Command, o settings.Output, r report) error {
	return a.target(o).Write(cmd.Context(), a.stdout, func(w io.Writer) error {
		switch o.Format {
		case "json":
			return r.WriteJSON(w)
		case "csv":
			return r.WriteCSV(w)
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
		return a.solveSystem(cmd, f.System, st)
	}
	if err := a.src.NotFor("a class config", " (they size the joint model of a system file)", "workers", "max-memory-gib"); err != nil {
		return err
	}
	r, err := prepare(f.Class, st.Override, st.Criterion)
	if err != nil {
		return err
	}
	if r.Average {
		if err := a.src.NotFor("the average criterion", " (it has no discounting)", "rate", "factor", "target"); err != nil {
			return err
		}
		return a.solveAverage(cmd, r, st)
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

// systemOpsPerSecond is a conservative rate of the structured sweep's
// arithmetic on one core of the development machine, used only to
// estimate solve times for the size guard (measured by
// BenchmarkSolveSystem).
const systemOpsPerSecond = 3e8

// sizeGuard estimates memory and time of a joint solve and refuses
// machines whose memory exceeds the limit, with the numbers and how to
// shrink the model.
func sizeGuard(sf *modelfile.System, m *system.Machine, workers int, limitGiB float64) error {
	n, acts := m.Size()
	bytes, ops := system.Cost(m, workers)
	if bytes <= limitGiB*(1<<30) && n <= 5e7 && acts <= 1e6 {
		return nil
	}
	// Time at 100 sweeps, a typical count with a warm start.
	hours := 100 * ops / systemOpsPerSecond / float64(max(workers, 1)) / 3600
	return &modelfile.Fault{File: sf.Path, Path: "components", Msg: fmt.Sprintf(
		"the joint model is too large: %s joint states and %s joint actions need about %s of memory (limit %s GiB, --max-memory-gib) and about %.1f hours per certified solve; "+
			"shrink it: fewer components in one system (solve weakly coupled ones apart), coarser condition scales (merge neighbouring states), or fewer actions per component",
		reports.Money(n, 0), reports.Money(acts, 0), byteSizeText(bytes), reports.Fixed(limitGiB, 0), hours)}
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
func (a *app) systemAdvice(cmd *cobra.Command, sf *modelfile.System, o settings.Override, s optimize.Settings, workers int, maxMemoryGiB float64) (*reports.SystemAdvice, error) {
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
	if err := sizeGuard(sf, m, workers, maxMemoryGiB); err != nil {
		return nil, err
	}
	ctx := cmd.Context()
	sep, err := m.Separate(ctx)
	if err != nil {
		return nil, err
	}
	warm := m.SeparateStart(sep)
	r, err := system.Solve(ctx, m, &system.Settings{Tol: s.Tol, MaxSweeps: s.MaxIterations, Workers: workers, Start: warm})
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
	view, err := a.systemAdvice(cmd, sf, st.Override, st.Solver, st.Workers, st.MaxMemoryGiB)
	if err != nil {
		return err
	}
	if err := a.emit(cmd, st.Output, view); err != nil {
		return err
	}
	return systemUncertified(view.Result)
}
