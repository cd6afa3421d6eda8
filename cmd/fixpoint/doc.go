// Command fixpoint is a maintenance scheduling advisor: it turns the
// condition-state degradation (Markov transition) matrices and costs of
// equipment into a Markov decision process, solves it to proven
// optimality and reports what to do in every condition. Its output is
// advisory; statutory and safety inspections follow local regulation, and
// a competent or licensed inspector decides.
//
// Commands, and the kinds of file each takes:
//
//	fixpoint solve FILE        class, system  the certified advice per condition (table, json, csv, xlsx);
//	                                          --robust: advice for the worst matrices the data allow (class)
//	fixpoint check FILE        class, system, fleet  validate, listing every problem
//	fixpoint compare FILE      class          the advice across discount rates, every switch point
//	fixpoint sensitivity FILE  class          how far each cost can move before the advice changes
//	fixpoint forecast FILE     class, fleet   expected mix and spend; a fleet's Monte-Carlo (--simulate)
//	fixpoint plan FILE         fleet          the budget-constrained plan with proven bounds
//	fixpoint brief FILE -o PDF class, system, fleet  the signable brief (--prepared-for, --prepared-by;
//	                                          --font or Debian's fonts-droid-fallback for CJK names;
//	                                          a name no font prints is refused with exit 1);
//	                                          --robust adds "How sure are we?" (class), --rates
//	                                          a page of the advice or the budget plan by rate
//	fixpoint fit FILE          records CSV    transition rows estimated from inspection records
//	fixpoint init [PATH]       -              a commented starter of every kind (--kind)
//	fixpoint completion SHELL  -              a shell completion script (cobra's)
//
// A file of a kind a command does not take is refused in one line that
// names the commands that take it.
//
// Inspection intervals. A class config with an inspection block decides
// the next inspection with the action (inspect.go): solve prints per
// condition the action and the interval, the cost of each fixed interval
// and the hidden-failure figures (--criterion and --target do not apply);
// forecast counts inspections per calendar year; plan reports each such
// class's inspection calendar beside the budget plan, which itself assumes
// the condition known every period; brief shows the joint advice on page
// 1 and adds the page "When to look again"; check says the block is
// valid; compare and sensitivity note that they do not use it. Every
// output says that the statutory interval and a competent person's scheme
// of examination take precedence over the advised interval.
//
// Layers. main is wiring only: cmd/internal/modelfile reads model files
// (class, system, fleet) once, strictly, with located faults;
// cmd/internal/settings reads one typed settings struct per command;
// cmd/internal/answer turns a model file and settings into the report
// views (solving, certificates and their exit-3 errors);
// cmd/internal/starters holds the starter files of init;
// cmd/internal/outfile writes outputs safely; cmd/internal/progress draws
// the progress bar.
//
// Settings. Run-time settings come from, in decreasing precedence:
// command-line flags, FIXPOINT_* environment variables (FIXPOINT_TOL,
// FIXPOINT_MAX_ITERATIONS, ...), an optional settings file given by
// --settings or FIXPOINT_SETTINGS (YAML, TOML or JSON; keys named like the
// flags; a key means the same in every command that has it; an unknown key
// is a usage error), and the defaults. A flag given on the command line
// that does not apply to the file given is a usage error. Model files are
// not settings: they are read by a strict YAML decoder that keeps names
// case-sensitive and rejects unknown keys.
//
// Names. Tables and briefs, written for people, say "condition"; JSON and
// CSV, written for programs, say "state"; JSON keys do not change between
// releases without a note in the README.
//
// Exit codes:
//
//	0    success
//	1    bad input: a config or data file is missing or wrong
//	2    usage: unknown command or flag, bad flag or setting value, an output path refused
//	3    the answer was written but is not certified to the tolerance
//	130  interrupted (SIGINT or SIGTERM); no output file is left behind
//	     (a signal once an output is in place is ignored: the run has
//	     finished and ends with its own code)
//
// check exits as solve would with the default settings: 1 for a system
// above the default --max-memory-gib or --max-hours and for a criterion:
// average whose optimal cost depends on the start, 3 for a class whose
// answer cannot be certified to the default --tol.
//
// Workbooks (--format xlsx, or -o FILE.xlsx) are written by solve,
// compare, sensitivity, forecast (also a fleet's --simulate) and plan
// (also --rates), to a file only.
//
// Output files (-o) are written through a temporary file in the same
// directory and renamed into place; fixpoint never writes a file it read
// in the run, replaces an existing output only with --force (keeping its
// permissions), writes devices and pipes directly, and infers the format
// from the file's extension unless --format says otherwise.
package main
