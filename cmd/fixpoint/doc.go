// Command fixpoint is a maintenance scheduling advisor: it turns the
// condition-state degradation (Markov transition) matrices and costs of a
// class of equipment into a discounted-cost Markov decision process,
// solves it to proven optimality and reports what to do in every
// condition. Its output is advisory; statutory and safety inspections
// follow local regulation, and a competent or licensed inspector decides.
//
// Commands:
//
//	fixpoint solve FILE   the certified advice per condition (table, json, csv)
//	fixpoint check FILE   validate a class config, listing every problem
//	fixpoint brief FILE -o BRIEF.pdf
//	                      the signable PDF brief of a class config, a system
//	                      file or a fleet plan (--prepared-for, --prepared-by;
//	                      --font or Debian's fonts-droid-fallback for CJK names,
//	                      a name no font prints is refused with exit 1)
//	fixpoint init [PATH]  write a commented starter class config
//
// Settings. Run-time settings (method, tol, format, rate, factor,
// max-iterations, output, force) come from, in decreasing precedence:
// command-line flags, FIXPOINT_* environment variables (FIXPOINT_TOL,
// FIXPOINT_MAX_ITERATIONS, ...), an optional settings file given by
// --settings or FIXPOINT_SETTINGS (YAML, TOML or JSON, keys named like the
// flags), and the defaults. Model files are not settings: they are read by
// a strict YAML decoder that keeps names case-sensitive and rejects
// unknown keys.
//
// Exit codes:
//
//	0    success
//	1    bad input: a config or data file is missing or wrong
//	2    usage: unknown command or flag, bad flag or setting value
//	3    the answer was written but is not certified to the tolerance
//	130  interrupted (SIGINT or SIGTERM); no output file is left behind
//
// Output files (-o) are written to a temporary file and renamed into place;
// fixpoint refuses to write over an input and replaces an existing output
// only with --force.
package main
