package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"strconv"
	"strings"

	"github.com/spf13/cobra"
	"golang.org/x/text/unicode/norm"

	"fixpoint/cmd/internal/answer"
	"fixpoint/cmd/internal/modelfile"
	"fixpoint/cmd/internal/settings"
	"fixpoint/condition"
	"fixpoint/reports"
)

// roughRow is the number of transitions below which a fitted row is
// flagged as resting on too little data (common practice, no source).
const roughRow = 30

// maxRecordBytes bounds an inspection-records file.
const maxRecordBytes = 512 << 20

func (a *app) newFit() *cobra.Command {
	cmd := &cobra.Command{
		Use:   "fit RECORDS.csv (--config FILE | --states a,b,c --period-years N)",
		Short: "Estimate transition matrices from inspection records",
		Long: `fit reads inspection records (CSV with a header unit,date,condition and an
optional action column: the work done since the previous inspection; empty =
none) and estimates the one-period transition rows of the passive action and of
every recorded action, with bootstrap intervals, effective sample sizes, a
goodness-of-fit test and a report of every data problem with its line.

--estimator counting counts transitions (maximum likelihood when inspections
are one period apart; intervals more than 10% away are reported and left out);
--estimator generator fits a continuous-time generator Q by maximum likelihood
on the panel and reports P = exp(Q·period); auto picks counting when every
interval is within 10% of the period.

--format yaml prints transitions: blocks ready to paste into a class config;
--merge writes the estimated rows into a copy of --config at -o FILE (never
over the input). With the counting estimator both also write the number of
transitions behind each row (uncertainty.observations), from which
solve --robust-confidence sizes each row's ambiguity set.`,
		Example: `  fixpoint fit configs/pump-inspections.csv --config configs/pumps.yaml
  fixpoint fit records.csv --states good,fair,poor,failed --period-years 1 --format json
  fixpoint fit configs/pump-inspections.csv --config configs/pumps.yaml --merge -o pumps-fitted.yaml`,
		Args: exactArgs(1, "one inspection-records CSV file"),
		RunE: func(cmd *cobra.Command, args []string) error { return a.fit(cmd, args[0]) },
	}
	f := cmd.Flags()
	settings.AddFit(f, strconv.Itoa(roughRow))
	settings.AddOutput(f, "table", "json", "yaml")
	return cmd
}

// fitScale returns the states, unsafe flags, period and actions to fit,
// from --config or from --states and --period-years.
func (a *app) fitScale(cmd *cobra.Command, st settings.Fit) (c *modelfile.Class, states []string, unsafe []bool, period float64, actions []string, passive int, err error) {
	if st.Config != "" {
		f, err := a.loadAs(cmd, st.Config, "--config wants a class config (the condition scale, actions and period to fit the records to)", modelfile.ClassFile)
		if err != nil {
			return nil, nil, nil, 0, nil, 0, err
		}
		c = f.Class
		passive = c.Model.Passive()
		return c, c.Model.StateNames(), c.Unsafe(), c.Model.PeriodYears, c.Model.ActionNames(), passive, nil
	}
	return nil, st.States, nil, st.PeriodYears, []string{st.Passive}, 0, nil
}

func (a *app) fit(cmd *cobra.Command, path string) error {
	st, err := a.src.Fit()
	if err != nil {
		return err
	}
	out := st.Output
	if st.Merge {
		out.Path = "" // -o is the merged config; the report goes to stdout
	}
	c, states, unsafe, period, actions, passive, err := a.fitScale(cmd, st)
	if err != nil {
		return err
	}
	// Text that is not a model goes to the records reader, which says
	// what is wrong with its header.
	records, err := a.load(cmd, path, modelfile.RecordsFile, modelfile.OtherFile)
	if err != nil {
		return err
	}
	merged := a.target(settings.Output{Path: st.Output.Path, Force: st.Output.Force, Misnamed: st.Output.Misnamed})
	if err := merged.Check(); err != nil {
		return err
	}
	opts := answer.FitOptions(st, states, period, passive)
	fh, err := os.Open(records.Path)
	if err != nil {
		return &modelfile.Fault{File: path, Msg: modelfile.OpenProblem(err)}
	}
	defer fh.Close()
	// Condition names in the records are compared in NFC, as the config's.
	recs, warn, err := condition.ReadRecordsContext(cmd.Context(), norm.NFC.Reader(io.LimitReader(fh, maxRecordBytes)), states)
	if errors.Is(err, context.Canceled) {
		return err
	}
	if err != nil {
		return &modelfile.Fault{File: path, Msg: strings.TrimPrefix(err.Error(), "condition: records: ")}
	}
	panel, actions, pw, err := condition.BuildPanelContext(cmd.Context(), recs, condition.PanelOptions{Actions: actions, Passive: passive,
		NewActions: c == nil, ImprovementIsError: st.ImprovementIsError || opts.Structure != condition.AnyChange})
	if err != nil {
		return err
	}
	warn = append(warn, pw...)
	if c == nil {
		// Action names taken from the records reach every output.
		for _, name := range actions {
			if problem := modelfile.TextProblem(name); problem != "" {
				return &modelfile.Fault{File: path, Path: "action", Msg: strings.Replace(problem, "name", "action name", 1)}
			}
		}
	}
	opts.Actions = actions
	if st.Estimator == "auto" {
		opts.Method = condition.Counting
		if !panel.IntervalsRegular(period) {
			opts.Method = condition.Generator
		}
	}
	est, err := condition.Estimate(cmd.Context(), panel, opts)
	if errors.Is(err, context.Canceled) {
		return err
	}
	if err != nil {
		return answer.EstimateError(path, err, warn)
	}
	est.Warnings = append(warn, est.Warnings...)
	rep := &reports.FitReport{Source: path, States: states, Unsafe: unsafe, Passive: passive, Fit: est,
		Bootstrap: opts.Bootstrap, Seed: opts.Seed, Level: opts.Level, Rough: roughRow}
	if c != nil {
		rep.Model = c.Model
	}
	for ai, rows := range est.Rows {
		for s, r := range rows {
			if r != nil && r.N < roughRow {
				est.Warnings = append(est.Warnings, condition.Warning{Message: fmt.Sprintf("row %s of action %s rests on %d transitions (fewer than %d); treat it as a rough guide",
					states[s], actions[ai], r.N, roughRow)})
			}
		}
	}
	render := func(w io.Writer) error {
		switch out.Format {
		case "json":
			return rep.WriteJSON(w)
		case "yaml":
			return rep.WriteYAML(w)
		}
		return rep.WriteTable(w)
	}
	if st.Merge {
		data, notes, err := modelfile.MergeFitted(c, rep, st.MergeMin)
		if err != nil {
			return err
		}
		for _, n := range notes {
			est.Warnings = append(est.Warnings, condition.Warning{Message: n})
		}
		if err := merged.WriteBytes(cmd.Context(), data); err != nil {
			return err
		}
		fmt.Fprintf(a.stderr, "fixpoint: wrote the merged config %s\n", st.Output.Path)
		// The merged config is in place: the run has finished, and an
		// interrupt no longer stops the report (exit 130 means no output).
		return a.target(out).Write(context.WithoutCancel(cmd.Context()), a.stdout, render)
	}
	return a.target(out).Write(cmd.Context(), a.stdout, render)
}
