package settings

import (
	"slices"
	"strings"

	"github.com/spf13/pflag"

	"fixpoint/cmd/internal/modelfile"
)

// Fit holds the settings of fit.
type Fit struct {
	Output Output
	// Config is a class config giving the scale; else States, PeriodYears
	// and Passive.
	Config      string
	States      []string
	PeriodYears float64
	Passive     string
	// Estimator is auto, counting or generator.
	Estimator          string
	DeteriorationOnly  bool
	OneStep            bool
	ImprovementIsError bool
	Bootstrap          int
	Seed               uint64
	Level              float64
	Workers            int
	Merge              bool
	MergeMin           int
}

// AddFit declares the flags of fit.
func AddFit(f *pflag.FlagSet, mergeMin string) {
	f.String("config", "", "class config `file` giving the scale, the period and the actions")
	f.String("states", "", "condition `names`, best first, when there is no --config")
	f.String("period-years", "", "period length in `years`, when there is no --config")
	f.String("passive", "leave", "`name` of the no-work action, when there is no --config")
	f.String("estimator", "auto", "auto, counting or generator")
	f.Bool("deterioration-only", false, "generator: no improvement without recorded work")
	f.Bool("one-step", false, "generator: deterioration one state at a time")
	f.Bool("improvement-as-error", false, "treat an improvement with no recorded work as a misreading (the unit stayed as it was)")
	f.String("bootstrap", "200", "`n` bootstrap replicates over units for the intervals (0 for none)")
	f.String("seed", "1", "seed `n` of the random numbers")
	f.String("level", "0.9", "coverage `p` of the intervals (0.9 or 90%)")
	f.String("workers", "0", "`n` goroutines for the bootstrap; 0 = all cores")
	f.Bool("merge", false, "write the estimated rows into a copy of --config at -o FILE")
	f.String("merge-min", mergeMin, "merge only rows resting on at least `n` transitions")
}

// Fit reads the settings of fit.
func (s *Source) Fit() (st Fit, err error) {
	if st.Output, err = s.Output("table", "json", "yaml"); err != nil {
		return
	}
	st.Config = s.text("config")
	if text := s.text("states"); text != "" {
		for _, name := range strings.Split(text, ",") {
			name = strings.TrimSpace(name)
			if name == "" || slices.Contains(st.States, name) {
				err = Errorf("%s: empty or repeated name in %q", where("states"), clip(text))
				return
			}
			if problem := modelfile.TextProblem(name); problem != "" {
				err = Errorf("%s: %s", where("states"), problem)
				return
			}
			st.States = append(st.States, name)
		}
	}
	switch {
	case st.Config != "" && (st.States != nil || s.text("period-years") != ""):
		err = Errorf("give either --config or --states/--period-years, not both")
		return
	case st.Config == "" && st.States == nil:
		err = Errorf("give the scale with --config FILE or --states a,b,c --period-years N")
		return
	case st.Config == "" && s.text("period-years") == "":
		err = Errorf("give --period-years with --states")
		return
	case st.Config == "":
		if st.PeriodYears, err = s.number("period-years"); err != nil {
			return
		}
		if !(st.PeriodYears > 0) || st.PeriodYears > 100 {
			err = Errorf("%s: %g is not a period in (0, 100] years", where("period-years"), st.PeriodYears)
			return
		}
	}
	st.Passive = s.text("passive")
	st.Estimator = s.text("estimator")
	if !slices.Contains([]string{"auto", "counting", "generator"}, st.Estimator) {
		err = Errorf("%s: unknown estimator %q; want auto, counting or generator", where("estimator"), clip(st.Estimator))
		return
	}
	for _, b := range []struct {
		key string
		dst *bool
	}{{"deterioration-only", &st.DeteriorationOnly}, {"one-step", &st.OneStep}, {"improvement-as-error", &st.ImprovementIsError}, {"merge", &st.Merge}} {
		if *b.dst, err = s.boolean(b.key); err != nil {
			return
		}
	}
	if st.Bootstrap, err = s.whole("bootstrap"); err != nil {
		return
	}
	if st.Bootstrap < 0 || st.Bootstrap > 100000 {
		err = Errorf("%s: %d is not a number of replicates in [0, 100000]", where("bootstrap"), st.Bootstrap)
		return
	}
	if st.Seed, err = s.Seed(); err != nil {
		return
	}
	if st.Level, err = s.number("level"); err != nil {
		return
	}
	if !(st.Level > 0 && st.Level < 1) {
		err = Errorf("%s: %g is not in (0, 1)", where("level"), st.Level)
		return
	}
	if st.Workers, err = s.Workers(); err != nil {
		return
	}
	if st.MergeMin, err = s.whole("merge-min"); err != nil {
		return
	}
	if st.Merge && (st.Config == "" || st.Output.Path == "") {
		err = Errorf("--merge needs --config FILE and -o NEWFILE")
	}
	return
}
