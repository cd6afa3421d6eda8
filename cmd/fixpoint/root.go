package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"slices"
	"strings"
	"syscall"

	"github.com/spf13/cobra"
	"github.com/spf13/pflag"

	"fixpoint/cmd/internal/answer"
	"fixpoint/cmd/internal/modelfile"
	"fixpoint/cmd/internal/outfile"
	"fixpoint/cmd/internal/settings"
	"fixpoint/reports"
)

// Exit codes (documented in doc.go and the README).
const (
	exitOK          = 0
	exitInput       = 1
	exitUsage       = 2
	exitUncertified = 3
	exitInterrupted = 130
)

func usagef(format string, args ...any) error { return settings.Errorf(format, args...) }

// app carries what every command needs: the standard streams and the
// run-time settings of the command being run.
type app struct {
	stdin          io.Reader
	stdout, stderr io.Writer
	src            *settings.Source
	// known lists every setting key (the flags of every command).
	known []string
	// inputs are the files read in the run, protected from being written.
	inputs []string
	// layout, when not nil, receives the blocks of a brief as laid out
	// (for the layout tests).
	layout *reports.Layout
}

// finished catches SIGINT and SIGTERM from the start of the first run
// until the process exits, and is never read. The stop of
// signal.NotifyContext restores their default action, which kills the
// process with status 130: a signal in the moment between a run's end (its
// output committed) and os.Exit would report an interrupt although the
// output is complete. With this channel registered the signal is caught
// and the run's own exit code stands (README, exit codes).
var finished = make(chan os.Signal, 1)

// run builds a fresh command tree, runs it on args and returns the exit
// code. It prints errors once, to stderr. SIGINT and SIGTERM cancel the
// command's context; once the command has returned they change nothing.
func run(args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	signal.Notify(finished, os.Interrupt, syscall.SIGTERM)
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	return (&app{stdin: stdin, stdout: stdout, stderr: stderr}).run(ctx, args)
}

// run runs the command tree of a on args; see the function run.
func (a *app) run(ctx context.Context, args []string) int {
	stderr := a.stderr
	root := a.newRoot()
	root.SetArgs(args)
	root.SetIn(a.stdin)
	root.SetOut(a.stdout)
	root.SetErr(a.stderr)
	err := root.ExecuteContext(ctx)
	err = a.src.Locate(err) // a.src is set while the command runs
	if err == nil {
		return exitOK
	}
	code := exitCode(err)
	switch code {
	case exitInterrupted:
		fmt.Fprintln(stderr, "fixpoint: interrupted; no output file was written")
	case exitUsage:
		fmt.Fprintf(stderr, "fixpoint: %s\nRun 'fixpoint --help' for usage.\n", reports.Printable(err.Error()))
	default:
		for _, e := range flatten(err) {
			fmt.Fprintf(stderr, "fixpoint: %s\n", reports.Printable(e.Error()))
		}
	}
	return code
}

func exitCode(err error) int {
	var se *settings.Error
	var oe *outfile.Error
	var ce *answer.Uncertified
	switch {
	case errors.Is(err, context.Canceled):
		return exitInterrupted
	case errors.As(err, &se), errors.As(err, &oe):
		return exitUsage
	case errors.As(err, &ce):
		return exitUncertified
	case strings.HasPrefix(err.Error(), "unknown command"), strings.HasPrefix(err.Error(), "unknown flag"),
		strings.HasPrefix(err.Error(), "unknown shorthand flag"):
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
costs of equipment into a discounted-cost Markov decision process, solves it to
proven optimality, and reports what to do in every condition.

Output is advisory: statutory and safety inspections follow local regulation,
and a competent or licensed inspector's finding overrides the advice.`,
		Example: `  fixpoint init pumps.yaml && fixpoint check pumps.yaml
  fixpoint solve configs/pumps.yaml
  fixpoint brief configs/pumps.yaml -o pumps-brief.pdf
  fixpoint plan configs/east-zone.yaml --rates 3%,5%,7%
  fixpoint --version`,
		Version:       version(),
		SilenceErrors: true,
		SilenceUsage:  true,
		PersistentPreRunE: func(cmd *cobra.Command, _ []string) error {
			src, err := settings.Open(cmd.Flags(), a.known)
			if err != nil {
				return err
			}
			a.src = src
			src.Warn = a.warn
			if src.File != "" {
				a.inputs = append(a.inputs, src.File)
			}
			return nil
		},
	}
	root.PersistentFlags().String("settings", "", "run-time settings `file` (YAML, TOML or JSON; env FIXPOINT_SETTINGS)")
	root.PersistentFlags().Bool("renormalize", false, "divide rows that miss 1 only by 3-decimal rounding by their sum (each change is noted)")
	root.SetVersionTemplate("fixpoint {{.Version}}\n")
	root.SetFlagErrorFunc(func(_ *cobra.Command, err error) error { return usagef("%v", err) })
	root.AddCommand(a.newSolve(), a.newCompare(), a.newSensitivity(), a.newForecast(), a.newPlan(), a.newBrief(),
		a.newFit(), a.newCheck(), a.newInit())
	root.InitDefaultCompletionCmd()
	for _, c := range root.Commands() {
		if c.Name() == "completion" {
			c.Example = `  fixpoint completion bash > ~/.local/share/bash-completion/completions/fixpoint
  fixpoint completion zsh > "${fpath[1]}/_fixpoint"
  fixpoint completion fish > ~/.config/fish/completions/fixpoint.fish`
			for _, sh := range c.Commands() {
				sh.Example = "  source <(fixpoint completion " + sh.Name() + ")"
			}
		}
	}
	a.known = settingKeys(root)
	return root
}

// settingKeys lists the flags of every command: the keys a settings file
// may hold.
func settingKeys(root *cobra.Command) []string {
	var keys []string
	add := func(f *pflag.Flag) {
		if f.Name != "settings" && f.Name != "help" && !slices.Contains(keys, f.Name) {
			keys = append(keys, f.Name)
		}
	}
	root.PersistentFlags().VisitAll(add)
	for _, c := range root.Commands() {
		c.Flags().VisitAll(add)
	}
	slices.Sort(keys)
	return keys
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

// takers says, for each kind of file, which commands take it.
var takers = map[modelfile.Kind]string{
	modelfile.ClassFile:     "solve, check, compare, sensitivity, forecast and brief take class configs",
	modelfile.SystemFile:    "solve, check and brief take system files",
	modelfile.FleetFile:     "plan, check, brief and forecast --simulate take fleet files",
	modelfile.RecordsFile:   "fit and check take inspection-records CSV files",
	modelfile.InventoryFile: "an inventory is read through the fleet file that names it (plan, check, brief, forecast --simulate)",
	modelfile.SettingsFile:  "a settings file is given with --settings FILE",
	modelfile.EmptyFile:     "write a model with fixpoint init",
	modelfile.BinaryFile:    "fixpoint reads YAML model files and CSV records",
	modelfile.OtherFile:     "a model file is a YAML mapping with version: 1 (fixpoint init writes one of each kind)",
}

// load reads a model file for the command name, which takes the kinds
// want; any other kind is refused in one line naming who takes it.
func (a *app) load(cmd *cobra.Command, path string, want ...modelfile.Kind) (*modelfile.File, error) {
	return a.loadAs(cmd, path, "", want...)
}

// loadAs is load for a file given as an option (role, e.g. "--config
// wants a class config (...)"): a file of another kind is refused by
// saying what the option wants, not which commands take the file.
func (a *app) loadAs(cmd *cobra.Command, path, role string, want ...modelfile.Kind) (*modelfile.File, error) {
	renorm, err := a.src.Renormalize()
	if err != nil {
		return nil, err
	}
	f, err := modelfile.Load(cmd.Context(), path, modelfile.Options{Renormalize: renorm})
	if err != nil {
		return nil, err
	}
	for _, n := range f.Notes {
		a.note(n)
	}
	for _, w := range f.Warnings {
		a.warn(w)
	}
	a.inputs = append(a.inputs, f.Inputs...)
	if !slices.Contains(want, f.Kind) {
		what := "this is " + f.Kind.Article()
		switch f.Kind {
		case modelfile.EmptyFile:
			what = "the file is empty"
		case modelfile.BinaryFile:
			what = "this is not a text file"
		}
		if role != "" {
			return nil, &modelfile.Fault{File: path, Msg: fmt.Sprintf("%s, not %s: %s", what, want[0].Article(), role)}
		}
		return nil, &modelfile.Fault{File: path, Msg: fmt.Sprintf("%s, which %s does not take; %s", what, cmd.Name(), takers[f.Kind])}
	}
	return f, nil
}

// env is what the answers of a command need from the run.
func (a *app) env(cmd *cobra.Command) *answer.Env {
	return &answer.Env{Ctx: cmd.Context(), Warn: a.warn, Note: a.note, Version: version()}
}

// target returns where a command writes o, protecting every input.
func (a *app) target(o settings.Output) outfile.Target {
	return outfile.Target{Path: o.Path, Force: o.Force, Inputs: a.inputs, Notes: a.note, Refuse: o.Misnamed}
}

// note prints a note on stderr; warn a warning.
func (a *app) note(msg string) {
	io.WriteString(a.stderr, "fixpoint: note: "+reports.Printable(msg)+"\n")
}
func (a *app) warn(msg string) {
	io.WriteString(a.stderr, "fixpoint: warning: "+reports.Printable(msg)+"\n")
}
