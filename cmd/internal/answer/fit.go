package answer

import (
	"context"
	"errors"
	"fmt"
	"io"
	"runtime"
	"strings"
	"time"

	"fixpoint/cmd/internal/modelfile"
	"fixpoint/cmd/internal/settings"
	"fixpoint/condition"
	"fixpoint/reports"

	"golang.org/x/text/unicode/norm"
)

// EstimateError reports a failed estimate; when the records could not
// support it, the data problems found follow, one per line.
func EstimateError(path string, err error, warn []condition.Warning) error {
	msg := strings.TrimPrefix(err.Error(), "condition: estimate: ")
	var short *condition.InsufficientDataError
	if !errors.As(err, &short) {
		return &modelfile.Fault{File: path, Msg: msg}
	}
	warn = append(warn, short.Warnings...)
	if len(warn) == 0 {
		return &modelfile.Fault{File: path, Msg: msg + "; the file has no inspection records"}
	}
	errs := []error{&modelfile.Fault{File: path, Msg: fmt.Sprintf("%s; the data problems found (%d):", msg, len(warn))}}
	for _, w := range warn {
		errs = append(errs, &modelfile.Fault{File: path, Line: w.Line, Msg: w.Message})
	}
	return errors.Join(errs...)
}

// FitOptions are the estimator options of the fit settings for a scale
// of states with a period and a passive action.
func FitOptions(st settings.Fit, states []string, period float64, passive int) condition.FitOptions {
	o := condition.FitOptions{States: len(states), PeriodYears: period, Passive: passive}
	if st.Estimator == "generator" {
		o.Method = condition.Generator
	}
	switch {
	case st.OneStep:
		o.Structure = condition.OneStep
	case st.DeteriorationOnly:
		o.Structure = condition.DeteriorationOnly
	}
	workers := st.Workers
	if workers == 0 {
		workers = runtime.NumCPU()
	}
	o.Bootstrap, o.Seed, o.Level, o.Workers = st.Bootstrap, st.Seed, st.Level, max(1, min(workers, 64))
	return o
}

// RecordsCheck reads an inspection-records CSV without a condition scale
// and says in one line what it holds, for check; its data problems go to
// warn. A file with no usable record is a fault listing them.
func RecordsCheck(ctx context.Context, path string, r io.Reader, warn func(string)) (string, error) {
	sv, ws, err := condition.SurveyRecordsContext(ctx, norm.NFC.Reader(r)) // names in NFC, as fit reads them
	if errors.Is(err, context.Canceled) {
		return "", err
	}
	if err != nil {
		return "", &modelfile.Fault{File: path, Msg: strings.TrimPrefix(err.Error(), "condition: records: ")}
	}
	if err := ctx.Err(); err != nil {
		return "", err
	}
	if sv.Records == 0 {
		return "", EstimateError(path, &condition.InsufficientDataError{Msg: "no usable records"}, ws)
	}
	for _, w := range ws {
		if w.Line > 0 {
			warn(fmt.Sprintf("%s:%d: %s", path, w.Line, w.Message))
		} else {
			warn(path + ": " + w.Message)
		}
	}
	day := func(d int) string { return time.Unix(int64(d)*86400, 0).UTC().Format("2006-01-02") }
	work := "none recorded"
	if len(sv.Actions) > 0 {
		work = strings.Join(sv.Actions, ", ")
	}
	return fmt.Sprintf("%s: ok: inspection records, %s of %s from %s to %s; conditions named: %s; work: %s (fit them against a class config with fixpoint fit %s --config CLASS.yaml)",
		path, reports.Nouns(sv.Records, "record", "records"), reports.Nouns(sv.Units, "unit", "units"), day(sv.First), day(sv.Last),
		strings.Join(sv.Conditions, ", "), work, path), nil
}
