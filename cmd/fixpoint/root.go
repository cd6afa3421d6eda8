package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"slices"
	"strconv"
	"strings"
	"syscall"

	"github.com/spf13/cobra"
	"github.com/spf13/pflag"
	"github.com/spf13/viper"
)

// Exit codes (documented in doc.go and the README).
const (
	exitOK          = 0
	exitInput       = 1
	exitUsage       = 2
	exitUncertified = 3
	exitInterrupted = 130
)

// usageError is a mistake in the command line or the run-time settings.
type usageError struct{ msg string }

func (e *usageError) Error() string { return e.msg }

func usagef(format string, args ...any) error { return &usageError{fmt.Sprintf(format, args...)} }

// uncertifiedError says that an answer was written but its proven gap is
// above the tolerance.
type uncertifiedError struct{ msg string }

func (e *uncertifiedError) Error() string { return e.msg }

// app carries what every command needs: the standard streams and the
// run-time settings of this run.
type app struct {
	stdin          io.Reader
	stdout, stderr io.Writer
	v              *viper.Viper
}

// run builds a fresh command tree, runs it on args and returns the exit
// code. It prints errors once, to stderr.
func run(args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	a := &app{stdin: stdin, stdout: stdout, stderr: stderr, v: viper.New()}
	root := a.newRoot()
	root.SetArgs(args)
	root.SetIn(stdin)
	root.SetOut(stdout)
	root.SetErr(stderr)
	err := root.ExecuteContext(ctx)
	if err == nil {
		return exitOK
	}
	code := exitCode(err)
	switch code {
	case exitInterrupted:
		fmt.Fprintln(stderr, "fixpoint: interrupted; no output file was written")
	case exitUsage:
		fmt.Fprintf(stderr, "fixpoint: %v\nRun 'fixpoint --help' for usage.\n", err)
	default:
		for _, e := range flatten(err) {
			fmt.Fprintf(stderr, "fixpoint: %v\n", e)
		}
	}
	return code
}

func exitCode(err error) int {
	var ue *usageError
	var ce *uncertifiedError
	switch {
	case errors.Is(err, context.Canceled):
		return exitInterrupted
	case errors.As(err, &ue):
		return exitUsage
	case errors.As(err, &ce):
		return exitUncertified
	case strings.HasPrefix(err.Error(), "unknown command"), strings.HasPrefix(err.Error(), "unknown flag"):
		return exitUsage
	}
	return exitInput
}

// flatten splits joined errors so that each fault prints on its own line.
func flatten(err error) []error {
	if j, ok := err.(interface{ Unwrap() []error }); ok {
		var out []error
		for _, e := range j.Unwrap() {
			out = append(out, flatten(e)...)
		}
		return out
	}
	return []error{err}
}

func (a *app) newRoot() *cobra.Command {
	root := &cobra.Command{
		Use:   "fixpoint",
		Short: "Certified maintenance policies from condition-state degradation models",
		Long: `fixpoint turns the condition-state degradation (Markov transition) matrices and the
costs of one class of equipment into a discounted-cost Markov decision process,
solves it to proven optimality, and reports what to do in every condition.

Output is advisory: statutory and safety inspections follow local regulation,
and a competent or licensed inspector's finding overrides the advice.`,
		SilenceErrors: true,
		SilenceUsage:  true,
		PersistentPreRunE: func(cmd *cobra.Command, _ []string) error {
			return a.loadSettings(cmd)
		},
	}
	root.PersistentFlags().String("settings", "", "run-time settings file (YAML, TOML or JSON; env FIXPOINT_SETTINGS)")
	root.PersistentFlags().Bool("renormalize", false, "divide rows that miss 1 only by 3-decimal rounding by their sum (each change is noted)")
	root.SetFlagErrorFunc(func(_ *cobra.Command, err error) error { return &usageError{err.Error()} })
	root.AddCommand(a.newSolve(), a.newCompare(), a.newSensitivity(), a.newForecast(), a.newPlan(), a.newBrief(), a.newFit(), a.newCheck(), a.newInit())
	return root
}

// loadSettings prepares the run's viper instance: FIXPOINT_* environment
// variables, the optional settings file, and the flags of the command
// being run, which win over both. Each command sets its own defaults.
func (a *app) loadSettings(cmd *cobra.Command) error {
	v := a.v
	v.SetEnvPrefix("FIXPOINT")
	v.SetEnvKeyReplacer(strings.NewReplacer("-", "_"))
	v.AutomaticEnv()
	path, _ := cmd.Flags().GetString("settings")
	if !cmd.Flags().Changed("settings") {
		path = os.Getenv("FIXPOINT_SETTINGS")
	}
	if path != "" {
		v.SetConfigFile(path)
		if err := v.ReadInConfig(); err != nil {
			var nf viper.ConfigFileNotFoundError
			if errors.As(err, &nf) || errors.Is(err, os.ErrNotExist) {
				return &inputError{File: path, Msg: "settings file not found"}
			}
			return &inputError{File: path, Msg: "cannot read settings: " + err.Error()}
		}
	}
	var bindErr error
	cmd.Flags().VisitAll(func(f *pflag.Flag) {
		if f.Name == "settings" || f.Name == "help" {
			return
		}
		v.SetDefault(f.Name, f.DefValue)
		if err := v.BindPFlag(f.Name, f); err != nil && bindErr == nil {
			bindErr = err
		}
	})
	if bindErr != nil {
		return bindErr
	}
	if path != "" {
		for _, key := range v.AllKeys() {
			if cmd.Flags().Lookup(key) == nil && !slices.Contains(allSettings, key) {
				return &inputError{File: path, Path: key, Msg: "unknown setting" + didYouMean(key, settingNames(cmd))}
			}
		}
	}
	return nil
}

// allSettings lists every key a settings file may set: the flags of every
// command, so that one settings file can serve them all.
var allSettings = []string{"method", "tol", "format", "rate", "factor", "max-iterations", "output", "force",
	"target", "mix", "from", "units", "years", "date", "criterion", "rates", "inflation",
	"config", "states", "period-years", "passive", "deterioration-only", "one-step", "improvement-as-error",
	"bootstrap", "seed", "level", "workers", "merge", "merge-min", "max-memory-gib", "budget", "gap", "simulate", "follow", "progress", "renormalize"}

func settingNames(cmd *cobra.Command) []string {
	var names []string
	cmd.Flags().VisitAll(func(f *pflag.Flag) {
		if f.Name != "settings" && f.Name != "help" {
			names = append(names, f.Name)
		}
	})
	return names
}

// str, number, integer and boolean read a setting and say where a bad
// value came from.
func (a *app) str(key string) string { return a.v.GetString(key) }

func (a *app) number(key string) (float64, error) {
	s := strings.TrimSpace(a.v.GetString(key))
	x, err := parseNumber(s)
	if err != nil {
		return 0, usagef("setting %s (flag --%s or FIXPOINT_%s): %v", key, key, envName(key), err)
	}
	return x, nil
}

func (a *app) integer(key string) (int, error) {
	s := strings.TrimSpace(a.v.GetString(key))
	i, err := strconv.Atoi(s)
	if err != nil {
		return 0, usagef("setting %s (flag --%s or FIXPOINT_%s): %q is not a whole number", key, key, envName(key), s)
	}
	return i, nil
}

func (a *app) boolean(key string) (bool, error) {
	s := strings.TrimSpace(a.v.GetString(key))
	b, err := strconv.ParseBool(s)
	if err != nil {
		return false, usagef("setting %s (flag --%s or FIXPOINT_%s): %q is not true or false", key, key, envName(key), s)
	}
	return b, nil
}

func envName(key string) string { return strings.ToUpper(strings.ReplaceAll(key, "-", "_")) }

// parseNumber accepts a plain decimal number, optionally in exponent form
// or with a trailing "%" (divided by 100). It refuses what
// strconv.ParseFloat would also accept but no user means: NaN, Inf, hex
// floats and "_" separators.
func parseNumber(s string) (float64, error) {
	pct := strings.HasSuffix(s, "%")
	body := strings.TrimSuffix(s, "%")
	if body == "" || strings.ContainsAny(body, "_xXpPnNiI") {
		return 0, fmt.Errorf("%q is not a number", s)
	}
	x, err := strconv.ParseFloat(body, 64)
	if err != nil {
		return 0, fmt.Errorf("%q is not a number", s)
	}
	if pct {
		x /= 100
	}
	return x, nil
}

// exactArgs is cobra.ExactArgs with a usage error.
func exactArgs(n int, what string) cobra.PositionalArgs {
	return func(_ *cobra.Command, args []string) error {
		if len(args) != n {
			return usagef("want %s, got %d argument(s)", what, len(args))
		}
		return nil
	}
}
