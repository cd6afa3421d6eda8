package answer

import (
	"errors"
	"fixpoint/cmd/internal/modelfile"
	"fixpoint/cmd/internal/settings"
	"fixpoint/condition"
	"fmt"
	"runtime"
	"strings"
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
