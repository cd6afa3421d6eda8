package main

import (
	"errors"
	"io"
	"os"
	"strings"
	"time"
	"unicode"

	"github.com/spf13/cobra"
	"golang.org/x/text/unicode/norm"

	"fixpoint/cmd/internal/answer"
	"fixpoint/cmd/internal/modelfile"
	"fixpoint/cmd/internal/settings"
	"fixpoint/optimize"
	"fixpoint/reports"
)

func (a *app) newBrief() *cobra.Command {
	cmd := &cobra.Command{
		Use:   "brief FILE -o BRIEF.pdf",
		Short: "Print the brief of a class config, a system file or a fleet plan as a PDF",
		Long: `brief solves a class config, a system file or a fleet file and writes a
printable PDF. Page 1 is the page to sign: the recommendation in plain words
with its certificate, a table (the advice per condition; for a system what to
do to each component, what to bring forward when the machine is stopped
anyway and what joint planning saves; for a fleet the work list of the first
period with its cost by class), the key assumptions, the config file with its
SHA-256, the fixpoint version, the date, who it was prepared for and by
(--prepared-for, --prepared-by), and a sign-off. What does not fit continues on
page 2, never the sign-off. Every page carries the caution box.

A class brief follows with charts of the condition mix, spend and survival
over the years, a page comparing discount rates (discount.compare or --rates),
the page "How sure are we?" with --robust or the --robust-* settings (as for
solve: the advice for the worst transition matrices the data allow, beside
the nominal advice page 1 shows), and the certificate with the inputs. A class
with criterion: average (or --criterion average) gives the long-run
average-cost brief. A class with an inspection block gives the joint advice
(at each inspection the action and when to inspect again, with the statutory
rule) on page 1, the page "When to look again", and charts of the expected
inspections and spend per calendar year.

A fleet brief gives the problem solved with its proven bounds and what the
budget costs on page 1; then the planned spend per calendar year against the
budget, the deferred units and the condition mix of each class, the inspection
calendar of classes with an inspection block, the page "Budget plan by
discount rate" with --rates (bounds, present value and, per year at each
rate, the planned spend, mandatory work, units deferred and budget price of
plan --rates, the years where the plan changes marked), and the files read with their
SHA-256. --budget, --gap, --years and --rate apply as for plan.

The forecast charts follow --units units (default 100) starting in the best
state, or the population given by --mix or --from, over --years years
(default 20). The date printed and stamped is --date, or SOURCE_DATE_EPOCH,
or today: the same inputs and date give a byte-identical PDF.

Names in Chinese, Japanese or Korean need a font with those characters: by
default the Droid Sans Fallback font of the Debian package
fonts-droid-fallback, or any TrueType file given with --font. A name with a
character no font prints is refused (exit 1), listing the characters and
where they are. Names in right-to-left or complex-shaping scripts (Arabic,
Hebrew, Devanagari, Thai, ...) are refused whatever the font: the PDF library
neither reorders nor shapes them.`,
		Example: `  fixpoint brief configs/pumps.yaml -o pumps-brief.pdf
  fixpoint brief configs/pumps.yaml -o brief.pdf --rates 2%,4%,6% --date 2026-12-01
  fixpoint brief configs/pumps.yaml -o brief.pdf --prepared-for "Asset board" --prepared-by "R. Example"
  fixpoint brief configs/crane.yaml -o crane-brief.pdf
  fixpoint brief configs/pumps.yaml -o brief.pdf --robust-radius 0.1
  fixpoint brief configs/relief-valves.yaml -o relief-brief.pdf
  fixpoint brief configs/east-zone.yaml -o fleet-brief.pdf --rates 3%,5%,7% --prepared-by "R. Example"`,
		Args: exactArgs(1, "one class config, system file or fleet file"),
		RunE: func(cmd *cobra.Command, args []string) error { return a.brief(cmd, args[0]) },
	}
	f := cmd.Flags()
	settings.AddSolver(f)
	settings.AddOverride(f)
	settings.AddCriterion(f)
	settings.AddTarget(f)
	settings.AddStart(f, "100")
	settings.AddYears(f, "horizon of the charts in `years` (default 20; for a fleet, the fleet file's)")
	settings.AddRates(f, "annual `rates` to compare on a page of their own (class: default the config's discount.compare; fleet: the plan at each rate)")
	settings.AddFleet(f)
	settings.AddSystem(f)
	settings.AddRobust(f)
	settings.AddImprint(f)
	settings.AddDate(f)
	f.StringP("output", "o", "", "the PDF `file` to write (required)")
	f.Bool("force", false, "replace the output file if it exists")
	f.String("format", "pdf", "output format: pdf")
	return cmd
}

// fallbackFonts are the places the Droid Sans Fallback font is looked
// for: Debian's fonts-droid-fallback (the first covers Hangul too).
var fallbackFonts = []string{
	"/usr/share/fonts-droid-fallback/truetype/DroidSansFallback.ttf",
	"/usr/share/fonts/truetype/droid/DroidSansFallbackFull.ttf",
}

// fonts reads the fallback font: the file given, or the first of
// fallbackFonts that exists (none is not an error: a brief that needs one
// is refused with the characters it cannot print).
func (a *app) fonts(path string) ([]reports.Font, error) {
	paths, given := fallbackFonts, path != ""
	if given {
		paths = []string{path}
	}
	for _, p := range paths {
		data, err := os.ReadFile(p)
		if err != nil {
			if given {
				return nil, &modelfile.Fault{File: p, Msg: "font: " + modelfile.OpenProblem(err)}
			}
			continue
		}
		a.inputs = append(a.inputs, p)
		name := p[strings.LastIndexByte(p, '/')+1:]
		return []reports.Font{{Name: name, Regular: data}}, nil
	}
	return nil, nil
}

// glyphHint adds to a refused brief a remedy that would work: for
// characters no font prints, the font package that covers Chinese,
// Japanese and Korean only where those are missing and it is not already
// in use, else a TrueType font given with --font, or renaming; for
// right-to-left and complex-shaping scripts, renaming (no font helps).
// fonts is the fallback in use (nil: none found), given whether it came
// from --font.
func glyphHint(path string, fonts []reports.Font, given bool, err error) error {
	var se *reports.ScriptError
	if errors.As(err, &se) {
		return &modelfile.Fault{File: path, Msg: strings.TrimPrefix(se.Error(), "reports: ") +
			"; no --font changes this: write these names in a script printed left to right without shaping (Latin, Greek, Cyrillic, Chinese, Japanese, Korean) " +
			"for the brief, or use the table, CSV, JSON or xlsx outputs of solve, compare and plan, which carry the names as text"}
	}
	var ge *reports.GlyphError
	if !errors.As(err, &ge) {
		return err
	}
	cjk := false
	for _, f := range ge.Faults {
		for _, r := range f.Chars {
			cjk = cjk || unicode.In(r, unicode.Han, unicode.Hiragana, unicode.Katakana, unicode.Hangul) || (r >= 0x3000 && r <= 0x303F) || (r >= 0xFF00 && r <= 0xFFEF)
		}
	}
	var hint string
	switch {
	case len(fonts) > 0 && given:
		hint = "the font " + fonts[0].Name + " given with --font lacks them (it replaces the default fallback): give a TrueType font (.ttf) with outlines for them with --font"
		if cjk {
			hint += ", or leave out --font to use the Droid Sans Fallback font of the Debian package fonts-droid-fallback, which covers Chinese, Japanese and Korean"
		}
	case len(fonts) > 0:
		hint = "neither the built-in Go fonts nor " + fonts[0].Name + " (Debian package fonts-droid-fallback) has them: give a TrueType font (.ttf) with outlines for them with --font"
	case cjk:
		hint = "install the Debian package fonts-droid-fallback (its Droid Sans Fallback font covers Chinese, Japanese and Korean) or give a TrueType font (.ttf) that has them with --font"
	default:
		hint = "the Debian package fonts-droid-fallback covers only Chinese, Japanese and Korean, not these: give a TrueType font (.ttf) with outlines for them with --font"
	}
	return &modelfile.Fault{File: path, Msg: strings.TrimPrefix(ge.Error(), "reports: ") + "; " + hint + ", or rename the fields"}
}

func (a *app) brief(cmd *cobra.Command, path string) error {
	st, err := a.src.Brief(time.Now(), os.Getenv("SOURCE_DATE_EPOCH"))
	if err != nil {
		return err
	}
	f, err := a.load(cmd, path, modelfile.ClassFile, modelfile.SystemFile, modelfile.FleetFile)
	if err != nil {
		return err
	}
	fonts, err := a.fonts(st.Font) // before the output check: a font read is an input
	if err != nil {
		return err
	}
	out := a.target(st.Output)
	if err := out.Check(); err != nil {
		return err
	}
	write := func(w interface{ WritePDF(io.Writer) error }) error {
		return glyphHint(path, fonts, st.Font != "", out.Write(cmd.Context(), a.stdout, func(wr io.Writer) error { return w.WritePDF(wr) }))
	}
	im := reports.Imprint{Date: st.Date, PreparedFor: norm.NFC.String(st.PreparedFor), PreparedBy: norm.NFC.String(st.PreparedBy), Fonts: fonts, Layout: a.layout}
	switch {
	case f.Fleet != nil:
		if err := a.src.NotFor("a fleet file", " (they shape a class or system brief)",
			"method", "tol", "max-iterations", "criterion", "target", "mix", "from", "units", "workers", "max-memory-gib", "max-hours"); err != nil {
			return err
		}
		if err := a.robustNotFor(st.Robust.On, "a fleet file", " (robust advice is for class configs)"); err != nil {
			return err
		}
		if len(st.Rates.List) == 0 {
			if err := a.src.NotFor("a fleet brief without --rates", " (it makes --rates nominal)", "inflation"); err != nil {
				return err
			}
		}
		b, err := a.env(cmd).FleetBrief(f.Fleet, st, im)
		if err != nil {
			return err
		}
		return write(b)
	case f.System != nil:
		if err := a.src.NotFor("a system file", " (its joint model is solved by value iteration, under the discounted criterion, with no forecast pages)",
			"method", "criterion", "target", "mix", "from", "units", "years", "rates", "inflation", "budget", "gap"); err != nil {
			return err
		}
		if err := a.robustNotFor(st.Robust.On, "a system file", " (robust advice is for class configs)"); err != nil {
			return err
		}
		view, err := a.env(cmd).SystemAdvice(f.System, st.Override, st.Solver, answer.JointLimits{Workers: st.Workers, MaxMemoryGiB: st.MaxMemoryGiB, MaxHours: st.MaxHours})
		if err != nil {
			return err
		}
		if err := write(&reports.SystemBrief{Advice: view, Imprint: im}); err != nil {
			return err
		}
		return answer.SystemCheck(view.Result)
	}
	if err := a.src.NotFor("a class config", " (they apply to fleet or system files)", "budget", "gap", "workers", "max-memory-gib", "max-hours"); err != nil {
		return err
	}
	if f.Class.Inspection != nil {
		return a.briefInspection(cmd, f.Class, st, im, write)
	}
	r, err := answer.Prepare(f.Class, st.Override, st.Criterion)
	if err != nil {
		return err
	}
	if r.Average {
		if err := a.src.NotFor("the average criterion", " (it has no discounting)", "rate", "factor", "target", "rates", "inflation"); err != nil {
			return err
		}
		if err := a.robustNotFor(st.Robust.On, "the average criterion", " (robust advice is for the discounted criterion)"); err != nil {
			return err
		}
	}
	if !r.Average && len(st.Rates.List) == 0 && len(r.Compare) == 0 {
		if err := a.src.NotFor("a class without discount.compare when --rates is not given", " (it makes the compared rates nominal)", "inflation"); err != nil {
			return err
		}
	}
	if st.Robust.On && st.Solver.Method == optimize.LinearProgram {
		return usagef("method lp does not apply to robust advice (the robust problem is not a linear program); use auto, value or policy")
	}
	b, err := a.env(cmd).ClassBrief(f.Class, r, st, im)
	if err != nil {
		return err
	}
	if err := write(b); err != nil {
		return err
	}
	if r.Average {
		return answer.AverageCheck(b.Average.Result)
	}
	if err := answer.Check(b.Advice.Result); err != nil || b.Robust == nil {
		return err
	}
	return answer.RobustCheck(b.Robust.Analysis)
}

// briefInspection writes the brief of a class with an inspection block:
// the joint advice (action and next inspection) on page 1 and the page
// "When to look again".
func (a *app) briefInspection(cmd *cobra.Command, c *modelfile.Class, st settings.Brief, im reports.Imprint, write func(interface{ WritePDF(io.Writer) error }) error) error {
	why := " (the joint advice of an inspection block is solved under the discounted criterion, with no life figures, no rate comparison and no robust form)"
	if err := a.src.NotFor("a class with an inspection block", why, append(answer.InspectionNotFor, "rates", "inflation")...); err != nil {
		return err
	}
	if err := a.robustNotFor(st.Robust.On, "a class with an inspection block", why); err != nil {
		return err
	}
	if len(c.Compare) > 0 {
		a.note(c.Path + ": brief does not compare discount rates for a class with an inspection block (discount.compare is not used)")
	}
	b, err := a.env(cmd).InspectionBrief(c, st, im)
	if err != nil {
		return err
	}
	if err := write(b); err != nil {
		return err
	}
	return answer.InspectionCheck(b.Advice.Result)
}
