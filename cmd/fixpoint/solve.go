package main

import (
	"io"

	"github.com/spf13/cobra"

	"fixpoint/cmd/internal/answer"
	"fixpoint/cmd/internal/modelfile"
	"fixpoint/cmd/internal/settings"
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
	if f.Class.Inspection != nil {
		return a.solveInspection(cmd, f.Class, st)
	}
	r, err := answer.Prepare(f.Class, st.Override, st.Criterion)
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
	adv, err := a.env(cmd).Advise(r, st.Solver, st.Target)
	if err != nil {
		return err
	}
	if err := a.emit(cmd, st.Output, adv); err != nil {
		return err
	}
	return answer.Check(adv.Result)
}

// solveAverage solves the long-run average-cost criterion and writes it.
func (a *app) solveAverage(cmd *cobra.Command, r *answer.Class, st settings.Solve) error {
	adv, err := a.env(cmd).AverageAdvice(r, st.Solver)
	if err != nil {
		return err
	}
	if err := a.emit(cmd, st.Output, adv); err != nil {
		return err
	}
	return answer.AverageCheck(adv.Result)
}

// solveSystem solves a system file and writes the advice.
func (a *app) solveSystem(cmd *cobra.Command, sf *modelfile.System, st settings.Solve) error {
	view, err := a.env(cmd).SystemAdvice(sf, st.Override, st.Solver, answer.JointLimits{Workers: st.Workers, MaxMemoryGiB: st.MaxMemoryGiB, MaxHours: st.MaxHours})
	if err != nil {
		return err
	}
	if err := a.emit(cmd, st.Output, view); err != nil {
		return err
	}
	return answer.SystemCheck(view.Result)
}
