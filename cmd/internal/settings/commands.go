package settings

import (
	"fmt"
	"math"
	"slices"
	"strings"
	"time"
	"unicode/utf8"

	"github.com/spf13/pflag"

	"fixpoint/cmd/internal/modelfile"
	"fixpoint/condition"
	"fixpoint/optimize"
)

// AddSolver declares --method, --tol and --max-iterations.
func AddSolver(f *pflag.FlagSet) {
	f.String("method", "auto", "solution method: auto, value, policy or lp")
	f.String("tol", fmt.Sprint(optimize.DefaultTol), "target proven gap, absolute, in `currency` units")
	f.String("max-iterations", "0", "cap of `n` sweeps or steps; 0 = the method's default")
}

// Solver reads --method, --tol and --max-iterations.
func (s *Source) Solver() (optimize.Settings, error) {
	m, err := optimize.ParseMethod(s.text("method"))
	if err != nil {
		return optimize.Settings{}, Errorf("%s: unknown method %q; want auto, value, policy or lp", where("method"), clip(s.text("method")))
	}
	tol, err := s.number("tol")
	if err != nil {
		return optimize.Settings{}, err
	}
	if !(tol > 0) {
		return optimize.Settings{}, Errorf("%s: %g is not a tolerance > 0", where("tol"), tol)
	}
	maxIt, err := s.whole("max-iterations")
	if err != nil {
		return optimize.Settings{}, err
	}
	if maxIt < 0 {
		return optimize.Settings{}, Errorf("%s: %d is negative", where("max-iterations"), maxIt)
	}
	return optimize.Settings{Method: m, Tol: tol, MaxIterations: maxIt}, nil
}

// Override is a discount given on the command line instead of the file's.
type Override struct {
	// Rate per year (HasRate) or Factor per period (HasFactor).
	Rate, Factor       float64
	HasRate, HasFactor bool
}

// AddOverride declares --rate and --factor.
func AddOverride(f *pflag.FlagSet) {
	f.String("rate", "", "annual discount `rate` overriding the config (4% or 0.04)")
	f.String("factor", "", "discount `factor` per period overriding the config")
}

// Override reads --rate and --factor.
func (s *Source) Override() (Override, error) {
	var o Override
	var err error
	switch {
	case s.text("rate") != "" && s.text("factor") != "":
		return o, Errorf("give either --rate or --factor, not both")
	case s.text("rate") != "":
		o.Rate, err = s.rate("rate")
		o.HasRate = true
	case s.text("factor") != "":
		o.Factor, err = s.number("factor")
		o.HasFactor = true
	}
	return o, err
}

// Given reports whether the override replaces the file's discount.
func (o Override) Given() bool { return o.HasRate || o.HasFactor }

// Solve holds the settings of solve.
type Solve struct {
	Output    Output
	Solver    optimize.Settings
	Override  Override
	Criterion string // "", discounted or average
	Target    string
	Workers   int
	// MaxMemoryGiB and MaxHours refuse joint models needing more memory
	// or (at most) more time.
	MaxMemoryGiB, MaxHours float64
	Robust                 Robust
}

// AddCriterion declares --criterion.
func AddCriterion(f *pflag.FlagSet) {
	f.String("criterion", "", "`discounted` or average (default: the config's criterion, else discounted)")
}

// AddTarget declares --target.
func AddTarget(f *pflag.FlagSet) {
	f.String("target", "", "`state` whose first passage the life figures measure (default: the worst state)")
}

// The default limits of a joint solve (--max-memory-gib, --max-hours),
// which check also applies.
const (
	DefaultMaxMemoryGiB = 4
	DefaultMaxHours     = 1
)

// AddSystem declares --workers, --max-memory-gib and --max-hours.
func AddSystem(f *pflag.FlagSet) {
	f.String("workers", "0", "`n` goroutines for a system's joint solve; 0 = all cores")
	f.String("max-memory-gib", fmt.Sprint(DefaultMaxMemoryGiB), "refuse joint models needing more than this many `GiB` of memory")
	f.String("max-hours", fmt.Sprint(DefaultMaxHours), "refuse joint models whose solve may take more than this many `hours` (an upper bound on the time)")
}

// Criterion reads --criterion.
func (s *Source) Criterion() (string, error) {
	switch c := s.text("criterion"); c {
	case "", "discounted", "average":
		return c, nil
	default:
		return "", Errorf("%s: unknown criterion %q; want discounted or average", where("criterion"), clip(c))
	}
}

// Solve reads the settings of solve.
func (s *Source) Solve() (st Solve, err error) {
	if st.Output, err = s.Output(Reports()...); err != nil {
		return
	}
	if st.Solver, err = s.Solver(); err != nil {
		return
	}
	if st.Override, err = s.Override(); err != nil {
		return
	}
	if st.Criterion, err = s.Criterion(); err != nil {
		return
	}
	st.Target = s.text("target")
	if st.Workers, err = s.Workers(); err != nil {
		return
	}
	if st.MaxMemoryGiB, err = s.memory(); err != nil {
		return
	}
	if st.MaxHours, err = s.hours(); err != nil {
		return
	}
	st.Robust, err = s.Robust()
	return
}

// memory reads --max-memory-gib.
// hours reads --max-hours.
func (s *Source) hours() (float64, error) {
	h, err := s.number("max-hours")
	if err == nil && (!(h > 0) || h > 1e4) {
		err = Errorf("%s: %g is not a time limit in (0, 10000] hours", where("max-hours"), h)
	}
	return h, err
}

func (s *Source) memory() (float64, error) {
	m, err := s.number("max-memory-gib")
	if err == nil && (!(m > 0) || m > 1<<20) {
		err = Errorf("%s: %g is not a memory limit in (0, 1048576] GiB", where("max-memory-gib"), m)
	}
	return m, err
}

// Workers reads --workers (0 = all cores).
func (s *Source) Workers() (int, error) {
	w, err := s.whole("workers")
	if err == nil && (w < 0 || w > 1024) {
		err = Errorf("%s: %d is not a number of goroutines in [0, 1024]", where("workers"), w)
	}
	return w, err
}

// Compare holds the settings of compare.
type Compare struct {
	Output   Output
	Solver   optimize.Settings
	Rates    Rates
	Override Override
}

// Compare reads the settings of compare.
func (s *Source) Compare() (st Compare, err error) {
	if st.Output, err = s.Output(Reports()...); err != nil {
		return
	}
	if st.Solver, err = s.Solver(); err != nil {
		return
	}
	st.Rates, err = s.Rates()
	return
}

// Sensitivity holds the settings of sensitivity.
type Sensitivity struct {
	Output   Output
	Solver   optimize.Settings
	Override Override
}

// Sensitivity reads the settings of sensitivity.
func (s *Source) Sensitivity() (st Sensitivity, err error) {
	if st.Output, err = s.Output(Reports()...); err != nil {
		return
	}
	if st.Solver, err = s.Solver(); err != nil {
		return
	}
	st.Override, err = s.Override()
	return
}

// Start is the starting population of a forecast: Mix (state=count,...)
// or From (every unit in one state) with Units.
type Start struct {
	Mix, From string
	Units     float64
}

// AddStart declares --mix, --from and --units (default units).
func AddStart(f *pflag.FlagSet, units string) {
	f.String("mix", "", "starting units per condition, e.g. `good=30,fair=50,worn=20` (counts or shares)")
	f.String("from", "", "start every unit in this `state` (with --units)")
	f.String("units", units, "`n` units, all starting in the --from state")
}

// Start reads --mix, --from and --units.
func (s *Source) Start() (Start, error) {
	st := Start{Mix: s.text("mix"), From: s.text("from")}
	if st.Mix != "" && st.From != "" {
		return st, Errorf("give either --mix or --from, not both")
	}
	var err error
	if st.Units, err = s.number("units"); err != nil {
		return st, err
	}
	if !(st.Units > 0) || st.Units > 1e12 {
		return st, Errorf("%s: %g is not a number of units in (0, 1e12]", where("units"), st.Units)
	}
	return st, nil
}

// Counts turns --mix or --from/--units into counts per state of m.
func (st Start) Counts(m *condition.Model) ([]float64, error) {
	n := len(m.States)
	counts := make([]float64, n)
	switch {
	case st.From != "":
		s := m.StateIndex(st.From)
		if s < 0 {
			return nil, Errorf("setting from: unknown state %q%s", st.From, modelfile.DidYouMean(st.From, m.StateNames()))
		}
		counts[s] = st.Units
		return counts, nil
	case st.Mix == "":
		return nil, Errorf("give the starting population with --mix state=count,... or --from STATE")
	}
	seen := make(map[string]bool)
	total := 0.0
	for _, part := range strings.Split(st.Mix, ",") {
		name, val, ok := strings.Cut(strings.TrimSpace(part), "=")
		name = strings.TrimSpace(name)
		if !ok || name == "" {
			return nil, Errorf("setting mix: %q is not state=number", strings.TrimSpace(part))
		}
		s := m.StateIndex(name)
		if s < 0 {
			return nil, Errorf("setting mix: unknown state %q%s", name, modelfile.DidYouMean(name, m.StateNames()))
		}
		if seen[name] {
			return nil, Errorf("setting mix: state %q given twice", name)
		}
		seen[name] = true
		x, err := modelfile.ParseNumber(val)
		if err != nil || x < 0 || x > 1e12 {
			return nil, Errorf("setting mix: %s=%s is not a count or share in [0, 1e12]", name, strings.TrimSpace(val))
		}
		counts[s] = x
		total += x
	}
	if !(total > 0) || math.IsInf(total, 0) {
		return nil, Errorf("setting mix: the population is empty")
	}
	return counts, nil
}

// AddYears declares --years with its default ("" = the command's).
func AddYears(f *pflag.FlagSet, usage string) { f.String("years", "", usage) }

// MaxYears bounds a forecast horizon.
const MaxYears = 500

// Years reads --years; 0 when it is not given.
func (s *Source) Years() (float64, error) {
	if s.text("years") == "" {
		return 0, nil
	}
	y, err := s.number("years")
	if err == nil && (!(y > 0) || y > MaxYears) {
		err = Errorf("%s: %g is not a horizon in (0, %d] years", where("years"), y, MaxYears)
	}
	return y, err
}

// Fleet holds the settings of a fleet plan: the budget per year and the
// horizon overriding the fleet file's (0: the file's), and the gap target.
type Fleet struct {
	Budget    float64
	HasBudget bool
	Years     float64
	Gap       float64
}

// AddFleet declares --budget and --gap (and --years when withYears).
func AddFleet(f *pflag.FlagSet) {
	f.String("budget", "", "budget `amount` per year overriding the fleet file")
	f.String("gap", "0.0001", "target relative gap `g` between the bounds")
}

// Fleet reads --budget, --years and --gap.
func (s *Source) Fleet() (Fleet, error) {
	var st Fleet
	var err error
	if s.text("budget") != "" {
		if st.Budget, err = s.number("budget"); err != nil {
			return st, err
		}
		if !(st.Budget >= 0) || st.Budget > 1e15 {
			return st, Errorf("%s: %g is not a budget in [0, 1e15]", where("budget"), st.Budget)
		}
		st.HasBudget = true
	}
	if st.Years, err = s.Years(); err != nil {
		return st, err
	}
	if st.Gap, err = s.number("gap"); err != nil {
		return st, err
	}
	if !(st.Gap > 0 && st.Gap < 1) {
		return st, Errorf("%s: %g is not in (0, 1)", where("gap"), st.Gap)
	}
	return st, nil
}

// Forecast holds the settings of forecast.
type Forecast struct {
	Output   Output
	Solver   optimize.Settings
	Override Override
	Start    Start
	// Years is the horizon (0: the default).
	Years float64
	// Simulate is the number of Monte-Carlo runs of a fleet (0: none).
	Simulate int
	Seed     uint64
	// Follow is plan or advice.
	Follow   string
	Fleet    Fleet
	Progress string
}

// AddSimulation declares --simulate, --seed, --follow and --progress.
func AddSimulation(f *pflag.FlagSet) {
	f.String("simulate", "0", "fleet files: Monte-Carlo `runs` of the plan (or of the advice with --follow advice)")
	f.String("seed", "1", "seed `n` of the random numbers")
	f.String("follow", "plan", "fleet files: simulate the plan's policy (plan), the whole-unit practice (practice) or the unconstrained advice (advice)")
	f.String("progress", "auto", "progress bar on stderr: auto (a terminal and over a second), always or never")
}

// Forecast reads the settings of forecast.
func (s *Source) Forecast() (st Forecast, err error) {
	if st.Output, err = s.Output(Reports()...); err != nil {
		return
	}
	if st.Solver, err = s.Solver(); err != nil {
		return
	}
	if st.Override, err = s.Override(); err != nil {
		return
	}
	if st.Start, err = s.Start(); err != nil {
		return
	}
	if st.Years, err = s.Years(); err != nil {
		return
	}
	if st.Simulate, err = s.runs(); err != nil {
		return
	}
	if st.Seed, err = s.Seed(); err != nil {
		return
	}
	st.Follow = s.text("follow")
	if !slices.Contains([]string{"plan", "practice", "advice"}, st.Follow) {
		err = Errorf("%s: %q; want plan, practice or advice", where("follow"), clip(st.Follow))
		return
	}
	st.Progress = s.text("progress")
	if !slices.Contains([]string{"auto", "always", "never"}, st.Progress) {
		err = Errorf("%s: %q; want auto, always or never", where("progress"), clip(st.Progress))
		return
	}
	st.Fleet, err = s.Fleet()
	return
}

// Seed reads --seed.
func (s *Source) Seed() (uint64, error) {
	seed, err := s.whole("seed")
	if err == nil && seed < 0 {
		err = Errorf("%s: %d is negative", where("seed"), seed)
	}
	return uint64(seed), err
}

// Plan holds the settings of plan.
type Plan struct {
	Output Output
	Fleet  Fleet
	// Simulate is the number of Monte-Carlo runs of the whole-unit
	// practice (0: none).
	Simulate int
	Seed     uint64
	// Override replaces the classes' discount; Rates, when given, plans
	// at each rate side by side.
	Override Override
	Rates    Rates
}

// Plan reads the settings of plan.
func (s *Source) Plan() (st Plan, err error) {
	if st.Output, err = s.Output(Reports()...); err != nil {
		return
	}
	if st.Simulate, err = s.runs(); err != nil {
		return
	}
	if st.Seed, err = s.Seed(); err != nil {
		return
	}
	if st.Override, err = s.Override(); err != nil {
		return
	}
	if st.Rates, err = s.Rates(); err != nil {
		return
	}
	st.Fleet, err = s.Fleet()
	return
}

// runs reads --simulate: 0 (none) or a number of runs in [2, 1000000].
func (s *Source) runs() (int, error) {
	n, err := s.whole("simulate")
	if err == nil && n != 0 && (n < 2 || n > 1_000_000) {
		err = Errorf("%s: %d is not a number of runs in [2, 1000000] (or 0 for none)", where("simulate"), n)
	}
	return n, err
}

// Brief holds the settings of brief.
type Brief struct {
	Output   Output
	Solver   optimize.Settings
	Override Override
	Target   string
	Start    Start
	// Start given by --mix or --from; else Start.Units in the best state.
	HasStart bool
	Years    float64
	Rates    Rates
	Fleet    Fleet
	Date     time.Time
	// Criterion is "", discounted or average ("" keeps the config's).
	Criterion string
	// Workers, MaxMemoryGiB and MaxHours size the joint solve of a system
	// file.
	Workers                int
	MaxMemoryGiB, MaxHours float64
	// PreparedFor and PreparedBy are printed on page 1 ("" leaves a line
	// to fill in by hand).
	PreparedFor, PreparedBy string
	// Font is a TrueType font file for characters the built-in fonts
	// lack ("" looks for the Droid Sans Fallback font of Debian's
	// fonts-droid-fallback).
	Font string
	// Robust adds the page "How sure are we?" to a class brief.
	Robust Robust
}

// AddImprint declares --prepared-for, --prepared-by and --font.
func AddImprint(f *pflag.FlagSet) {
	f.String("prepared-for", "", "`name` of whom the brief is prepared for, printed on page 1")
	f.String("prepared-by", "", "`name` of who prepared the brief, printed on page 1 and as the PDF's author")
	f.String("font", "", "TrueType `file` (.ttf) for characters the built-in fonts lack, such as Chinese, Japanese or Korean "+
		"(default: Droid Sans Fallback from the Debian package fonts-droid-fallback, when installed)")
}

// MaxPreparedChars bounds --prepared-for and --prepared-by.
const MaxPreparedChars = 200

// AddDate declares --date.
func AddDate(f *pflag.FlagSet) {
	f.String("date", "", "date printed on the brief, `YYYY-MM-DD` (default: SOURCE_DATE_EPOCH or today)")
}

// Brief reads the settings of brief; today is the date used when neither
// --date nor SOURCE_DATE_EPOCH gives one.
func (s *Source) Brief(today time.Time, sourceDateEpoch string) (st Brief, err error) {
	if st.Output, err = s.Output("pdf"); err != nil {
		return
	}
	if st.Output.Path == "" {
		err = Errorf("give the PDF file to write with -o FILE")
		return
	}
	if st.Solver, err = s.Solver(); err != nil {
		return
	}
	if st.Override, err = s.Override(); err != nil {
		return
	}
	st.Target = s.text("target")
	if st.Start, err = s.Start(); err != nil {
		return
	}
	st.HasStart = st.Start.Mix != "" || st.Start.From != ""
	if st.Years, err = s.Years(); err != nil {
		return
	}
	if st.Rates, err = s.Rates(); err != nil {
		return
	}
	if st.Fleet, err = s.Fleet(); err != nil {
		return
	}
	if st.Criterion, err = s.Criterion(); err != nil {
		return
	}
	if st.Workers, err = s.Workers(); err != nil {
		return
	}
	if st.MaxMemoryGiB, err = s.memory(); err != nil {
		return
	}
	if st.MaxHours, err = s.hours(); err != nil {
		return
	}
	for _, k := range []struct {
		key string
		to  *string
	}{{"prepared-for", &st.PreparedFor}, {"prepared-by", &st.PreparedBy}} {
		v := s.text(k.key)
		if utf8.RuneCountInString(v) > MaxPreparedChars || strings.ContainsAny(v, "\n\r\t") {
			err = Errorf("%s: want one line of at most %d characters", where(k.key), MaxPreparedChars)
			return
		}
		*k.to = v
	}
	st.Font = s.text("font")
	if st.Robust, err = s.Robust(); err != nil {
		return
	}
	st.Date, err = s.date(today, sourceDateEpoch)
	return
}

func (s *Source) date(today time.Time, epoch string) (time.Time, error) {
	if v := s.text("date"); v != "" {
		t, err := time.Parse("2006-01-02", v)
		if err != nil {
			return time.Time{}, Errorf("%s: %q is not a date YYYY-MM-DD", where("date"), clip(v))
		}
		return t, nil
	}
	if epoch != "" {
		var sec int64
		if _, err := fmt.Sscan(epoch, &sec); err != nil {
			return time.Time{}, Errorf("SOURCE_DATE_EPOCH: %q is not a number of seconds", clip(epoch))
		}
		return time.Unix(sec, 0).UTC(), nil
	}
	y, m, d := today.UTC().Date()
	return time.Date(y, m, d, 0, 0, 0, 0, time.UTC), nil
}

// Renormalize reads the persistent --renormalize.
func (s *Source) Renormalize() (bool, error) { return s.boolean("renormalize") }
