package main

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"runtime"
	"slices"
	"strconv"
	"strings"

	"github.com/spf13/cobra"
	"go.yaml.in/yaml/v3"

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

--method counting counts transitions (maximum likelihood when inspections are
one period apart; intervals more than 10% away are reported and left out);
--method generator fits a continuous-time generator Q by maximum likelihood on
the panel and reports P = exp(Q·period); auto picks counting when every interval
is within 10% of the period.

--format yaml prints transitions: blocks ready to paste into a class config;
--merge writes the estimated rows into a copy of --config at -o FILE (never
over the input).`,
		Args: exactArgs(1, "one inspection-records CSV file"),
		RunE: func(cmd *cobra.Command, args []string) error { return a.fit(cmd, args[0]) },
	}
	f := cmd.Flags()
	f.String("config", "", "class config `file` giving the scale, the period and the actions")
	f.String("states", "", "condition `names`, best first, when there is no --config")
	f.String("period-years", "", "period length in `years`, when there is no --config")
	f.String("passive", "leave", "`name` of the no-work action, when there is no --config")
	f.String("method", "auto", "auto, counting or generator")
	f.Bool("deterioration-only", false, "generator: no improvement without recorded work")
	f.Bool("one-step", false, "generator: deterioration one state at a time")
	f.Bool("improvement-as-error", false, "treat an improvement with no recorded work as a misreading (the unit stayed as it was)")
	f.String("bootstrap", "200", "bootstrap replicates over units for the intervals (`n`, 0 for none)")
	f.String("seed", "1", "seed of the bootstrap (`n`)")
	f.String("level", "0.9", "coverage of the intervals (`p`)")
	f.String("workers", strconv.Itoa(runtime.NumCPU()), "goroutines for the bootstrap (`n`)")
	f.Bool("merge", false, "write the estimated rows into a copy of --config at -o FILE")
	f.String("merge-min", strconv.Itoa(roughRow), "merge only rows resting on at least `n` transitions")
	f.String("format", "table", "output format: table, json or yaml")
	f.StringP("output", "o", "", "write to this `file` (with --merge: the merged config)")
	f.Bool("force", false, "replace the output file if it exists")
	return cmd
}

// fitScale returns the states, unsafe flags, period and actions to fit,
// from --config or from --states and --period-years.
func (a *app) fitScale() (c *classFile, states []string, unsafe []bool, period float64, actions []string, passive int, err error) {
	if path := a.str("config"); path != "" {
		if a.str("states") != "" || a.str("period-years") != "" {
			return nil, nil, nil, 0, nil, 0, usagef("give either --config or --states/--period-years, not both")
		}
		if c, err = a.loadClass(path); err != nil {
			return nil, nil, nil, 0, nil, 0, err
		}
		passive = c.Model.Passive()
		if passive < 0 {
			return nil, nil, nil, 0, nil, 0, &inputError{File: path, Path: "actions", Msg: "no action is passive: records without work have no action to count for"}
		}
		return c, c.Model.StateNames(), c.unsafe(), c.Model.PeriodYears, c.Model.ActionNames(), passive, nil
	}
	if a.str("states") == "" {
		return nil, nil, nil, 0, nil, 0, usagef("give the scale with --config FILE or --states a,b,c --period-years N")
	}
	for _, s := range strings.Split(a.str("states"), ",") {
		s = strings.TrimSpace(s)
		if s == "" || slices.Contains(states, s) {
			return nil, nil, nil, 0, nil, 0, usagef("setting states: empty or repeated name in %q", a.str("states"))
		}
		states = append(states, s)
	}
	if a.str("period-years") == "" {
		return nil, nil, nil, 0, nil, 0, usagef("give --period-years with --states")
	}
	if period, err = a.number("period-years"); err != nil {
		return nil, nil, nil, 0, nil, 0, err
	}
	if !(period > 0) || period > 100 {
		return nil, nil, nil, 0, nil, 0, usagef("setting period-years: %g is not a period in (0, 100] years", period)
	}
	return nil, states, nil, period, []string{a.str("passive")}, 0, nil
}

func (a *app) fit(cmd *cobra.Command, path string) error {
	format := a.str("format")
	if !slices.Contains([]string{"table", "json", "yaml"}, format) {
		return usagef("unknown format %q; want table, json or yaml", format)
	}
	force, err := a.boolean("force")
	if err != nil {
		return err
	}
	merge, err := a.boolean("merge")
	if err != nil {
		return err
	}
	inputs := []string{path}
	if a.str("config") != "" {
		inputs = append(inputs, a.str("config"))
	}
	out := output{path: a.str("output"), force: force, inputs: inputs}
	if merge && (a.str("config") == "" || out.path == "" || out.path == "-") {
		return usagef("--merge needs --config FILE and -o NEWFILE")
	}
	if err := out.check(); err != nil {
		return err
	}
	c, states, unsafe, period, actions, passive, err := a.fitScale()
	if err != nil {
		return err
	}
	opts, err := a.fitOptions(states, period, passive)
	if err != nil {
		return err
	}
	f, err := os.Open(path)
	if err != nil {
		return &inputError{File: path, Msg: openProblem(err)}
	}
	defer f.Close()
	recs, warn, err := condition.ReadRecords(io.LimitReader(f, maxRecordBytes), states)
	if err != nil {
		return &inputError{File: path, Msg: strings.TrimPrefix(err.Error(), "condition: records: ")}
	}
	improveErr, err := a.boolean("improvement-as-error")
	if err != nil {
		return err
	}
	panel, actions, pw := condition.BuildPanel(recs, condition.PanelOptions{Actions: actions, Passive: passive,
		NewActions: c == nil, ImprovementIsError: improveErr || opts.Structure != condition.AnyChange})
	warn = append(warn, pw...)
	opts.Actions = actions
	if a.str("method") == "auto" {
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
		return estimateError(path, err, warn)
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
		switch format {
		case "json":
			return rep.WriteJSON(w)
		case "yaml":
			return rep.WriteYAML(w)
		}
		return rep.WriteTable(w)
	}
	if merge {
		minN, err := a.integer("merge-min")
		if err != nil {
			return err
		}
		merged, notes, err := mergeRows(c, rep, minN)
		if err != nil {
			return err
		}
		for _, n := range notes {
			est.Warnings = append(est.Warnings, condition.Warning{Message: n})
		}
		if err := writeFileAtomic(cmd.Context(), out.path, merged, force); err != nil {
			return err
		}
		fmt.Fprintf(a.stderr, "fixpoint: wrote the merged config %s\n", out.path)
		return (output{}).write(cmd.Context(), a.stdout, render)
	}
	return out.write(cmd.Context(), a.stdout, render)
}

// estimateError reports a failed estimate; when the records could not
// support it, the data problems found follow, one per line.
func estimateError(path string, err error, warn []condition.Warning) error {
	msg := strings.TrimPrefix(err.Error(), "condition: estimate: ")
	var short *condition.InsufficientDataError
	if !errors.As(err, &short) {
		return &inputError{File: path, Msg: msg}
	}
	warn = append(warn, short.Warnings...)
	if len(warn) == 0 {
		return &inputError{File: path, Msg: msg + "; the file has no inspection records"}
	}
	errs := []error{&inputError{File: path, Msg: fmt.Sprintf("%s; the data problems found (%d):", msg, len(warn))}}
	for _, w := range warn {
		errs = append(errs, &inputError{File: path, Line: w.Line, Msg: w.Message})
	}
	return errors.Join(errs...)
}

func (a *app) fitOptions(states []string, period float64, passive int) (condition.FitOptions, error) {
	o := condition.FitOptions{States: len(states), PeriodYears: period, Passive: passive}
	switch m := a.str("method"); m {
	case "auto", "counting":
	case "generator":
		o.Method = condition.Generator
	default:
		return o, usagef("setting method: unknown method %q; want auto, counting or generator", m)
	}
	det, err := a.boolean("deterioration-only")
	if err != nil {
		return o, err
	}
	one, err := a.boolean("one-step")
	if err != nil {
		return o, err
	}
	switch {
	case one:
		o.Structure = condition.OneStep
	case det:
		o.Structure = condition.DeteriorationOnly
	}
	boot, err := a.integer("bootstrap")
	if err != nil {
		return o, err
	}
	if boot < 0 || boot > 100000 {
		return o, usagef("setting bootstrap: %d is not a number of replicates in [0, 100000]", boot)
	}
	seed, err := a.integer("seed")
	if err != nil {
		return o, err
	}
	level, err := a.number("level")
	if err != nil {
		return o, err
	}
	if !(level > 0 && level < 1) {
		return o, usagef("setting level: %g is not in (0, 1)", level)
	}
	workers, err := a.integer("workers")
	if err != nil {
		return o, err
	}
	o.Bootstrap, o.Seed, o.Level, o.Workers = boot, uint64(seed), level, max(1, min(workers, 64))
	return o, nil
}

// mergeRows writes the estimated rows into a copy of the class config's
// YAML, keeping its comments: a map-form row is replaced or its state's
// entry set, a matrix-form row replaced. Rows on fewer than minN
// transitions, rows where the config does not admit the action, and
// passive rows of unsafe states are not merged (notes say so). The result
// is validated before it is returned.
func mergeRows(c *classFile, rep *reports.FitReport, minN int) ([]byte, []string, error) {
	data, err := os.ReadFile(c.Path)
	if err != nil {
		return nil, nil, &inputError{File: c.Path, Msg: openProblem(err)}
	}
	var root yaml.Node
	if err := yaml.Unmarshal(data, &root); err != nil {
		return nil, nil, &inputError{File: c.Path, Msg: err.Error()}
	}
	doc := root.Content[0]
	actionsNode := lookup(doc, "actions")
	var notes []string
	for a, rows := range rep.Fit.Rows {
		ai := c.Model.ActionIndex(rep.Fit.Actions[a])
		if ai < 0 || actionsNode == nil || ai >= len(actionsNode.Content) {
			continue
		}
		act := actionsNode.Content[ai]
		for s, r := range rows {
			if r == nil {
				continue
			}
			name := rep.States[s]
			switch {
			case r.N < minN:
				notes = append(notes, fmt.Sprintf("merge: row %s of action %s rests on %d transitions (fewer than %d); the config's row is kept", name, rep.Fit.Actions[a], r.N, minN))
				continue
			case !rep.Writable(a, s):
				notes = append(notes, fmt.Sprintf("merge: passive row for unsafe state %s not written", name))
				continue
			case !c.Model.Actions[ai].Admissible(s):
				notes = append(notes, fmt.Sprintf("merge: the config does not admit %s in %s; that row is not written", rep.Fit.Actions[a], name))
				continue
			}
			comment := "fitted: " + rep.RowComment(a, s)
			if t := lookup(act, "transitions"); t != nil {
				setKey(t, name, flowMap(rep, r.P, comment))
			} else if m := lookup(act, "matrix"); m != nil && s < len(m.Content) {
				m.Content[s] = flowSeq(r.P, comment)
			}
		}
	}
	root.HeadComment = strings.TrimSpace(root.HeadComment + "\n# Transition rows merged by fixpoint fit from " + rep.Source + "; check them before use.")
	var buf bytes.Buffer
	enc := yaml.NewEncoder(&buf)
	enc.SetIndent(2)
	if err := enc.Encode(&root); err != nil {
		return nil, nil, err
	}
	if _, err := decodeClass("merged config", bytes.NewReader(buf.Bytes())); err != nil {
		return nil, nil, fmt.Errorf("the merged config would not be valid (%v); nothing written", err)
	}
	return buf.Bytes(), notes, nil
}

func lookup(m *yaml.Node, key string) *yaml.Node {
	if m == nil || m.Kind != yaml.MappingNode {
		return nil
	}
	for i := 0; i+1 < len(m.Content); i += 2 {
		if m.Content[i].Value == key {
			return m.Content[i+1]
		}
	}
	return nil
}

func setKey(m *yaml.Node, key string, v *yaml.Node) {
	for i := 0; i+1 < len(m.Content); i += 2 {
		if m.Content[i].Value == key {
			m.Content[i+1] = v
			return
		}
	}
	m.Content = append(m.Content, &yaml.Node{Kind: yaml.ScalarNode, Tag: "!!str", Value: key}, v)
}

func flowMap(rep *reports.FitReport, p []float64, comment string) *yaml.Node {
	n := &yaml.Node{Kind: yaml.MappingNode, Style: yaml.FlowStyle, LineComment: comment}
	for j, x := range reports.Rounded(p) {
		if x != 0 {
			n.Content = append(n.Content,
				&yaml.Node{Kind: yaml.ScalarNode, Tag: "!!str", Value: rep.States[j]},
				&yaml.Node{Kind: yaml.ScalarNode, Value: strconv.FormatFloat(x, 'f', -1, 64)})
		}
	}
	return n
}

func flowSeq(p []float64, comment string) *yaml.Node {
	n := &yaml.Node{Kind: yaml.SequenceNode, Style: yaml.FlowStyle, LineComment: comment}
	for _, x := range reports.Rounded(p) {
		n.Content = append(n.Content, &yaml.Node{Kind: yaml.ScalarNode, Value: strconv.FormatFloat(x, 'f', -1, 64)})
	}
	return n
}
