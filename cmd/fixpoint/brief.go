package main

import (
	"errors"
	"io"
	"os"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"fixpoint/cmd/internal/answer"
	"fixpoint/cmd/internal/modelfile"
	"fixpoint/cmd/internal/settings"
	"fixpoint/reports"
)

func (a *app) newBrief() *cobra.Command {
	cmd := &cobra.Command{
		Use:   "brief FILE -o BRIEF.pdf",
		Short: "Print the brief of a class config, a system file or a fleet plan as a PDF",
		Long: `brief solves a class config or a system file and writes a printable PDF. Page 1
carries the recommendation in plain words with its answer.Certificate, the advice per
condition (or, for a system, what to do to each component and what to bring
forward when the machine is stopped anyway, and what joint planning saves), the
key assumptions, the config file with its SHA-256, the fixpoint version, the
date, who it was prepared for and by (--prepared-for, --prepared-by), and a
sign-off. A class brief follows with charts of the condition mix, spend and
survival over the years, and ends with the answer.Certificate and the inputs. Every
page carries the caution box. For a fleet file it prints the budget plan.

A class config with criterion: average (or --criterion average) gives the
long-run average-cost brief: the average cost per year and the relative value
of each condition instead of present values.

The forecast charts follow --units units (default 100) starting in the best
state, or the population given by --mix or --from, over --years years
(default 20). The date printed and stamped is --date, or SOURCE_DATE_EPOCH,
or today: the same inputs and date give a byte-identical PDF.

Names in Chinese, Japanese or Korean need a font with those characters: by
default the Droid Sans Fallback font of the Debian package
fonts-droid-fallback, or any TrueType file given with --font. A name with a
character no font prints is refused (exit 1), listing the characters and
where they are.`,
		Example: `  fixpoint brief configs/pumps.yaml -o pumps-brief.pdf
  fixpoint brief configs/pumps.yaml -o brief.pdf --rates 2%,4%,6% --date 2026-12-01
  fixpoint brief configs/pumps.yaml -o brief.pdf --prepared-for "Asset board" --prepared-by "R. Example"
  fixpoint brief configs/crane.yaml -o crane-brief.pdf
  fixpoint brief configs/east-zone.yaml -o fleet-brief.pdf`,
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
	settings.AddRates(f, "annual `rates` to compare on a page of their own (default: the config's discount.compare)")
	settings.AddFleet(f)
	settings.AddSystem(f)
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

// glyphHint adds to a refused brief what to install or give.
func glyphHint(path string, err error) error {
	var ge *reports.GlyphError
	if !errors.As(err, &ge) {
		return err
	}
	return &modelfile.Fault{File: path, Msg: strings.TrimPrefix(ge.Error(), "reports: ") +
		"; install the Debian package fonts-droid-fallback (Chinese, Japanese, Korean) or give a TrueType font that has them with --font"}
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
	out := a.target(st.Output)
	if err := out.Check(); err != nil {
		return err
	}
	write := func(w interface{ WritePDF(io.Writer) error }) error {
		return glyphHint(path, out.Write(cmd.Context(), a.stdout, func(wr io.Writer) error { return w.WritePDF(wr) }))
	}
	if f.Fleet != nil {
		if err := a.src.NotFor("a fleet file", " (they shape a class or system brief)",
			"method", "tol", "max-iterations", "rate", "factor", "criterion", "target", "mix", "from", "units", "rates", "inflation",
			"workers", "max-memory-gib", "prepared-for", "prepared-by", "font"); err != nil {
			return err
		}
		ff := f.Fleet
		fl, p, err := a.env(cmd).FleetPlan(ff, st.Fleet)
		if err != nil {
			return err
		}
		view := &reports.PlanReport{Header: a.env(cmd).FleetHeader(ff), Fleet: fl, Plan: p, Warnings: reports.PlanWarnings(fl, p, st.Fleet.Gap, ff.Currency)}
		return write(&reports.FleetBrief{Plan: view, Date: st.Date})
	}
	fonts, err := a.fonts(st.Font)
	if err != nil {
		return err
	}
	im := reports.Imprint{Date: st.Date, PreparedFor: st.PreparedFor, PreparedBy: st.PreparedBy, Fonts: fonts}
	if f.System != nil {
		if err := a.src.NotFor("a system file", " (its joint model is solved by value iteration, under the discounted criterion, with no forecast pages)",
			"method", "criterion", "target", "mix", "from", "units", "years", "rates", "inflation", "budget", "gap"); err != nil {
			return err
		}
		view, err := a.env(cmd).SystemAdvice(f.System, st.Override, st.Solver, answer.JointLimits{Workers: st.Workers, MaxMemoryGiB: st.MaxMemoryGiB, MaxHours: st.MaxHours, Report: false})
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
	a.inspectionUnused(cmd, f.Class)
	r, err := answer.Prepare(f.Class, st.Override, st.Criterion)
	if err != nil {
		return err
	}
	if r.Average {
		if err := a.src.NotFor("the average criterion", " (it has no discounting)", "rate", "factor", "target", "rates", "inflation"); err != nil {
			return err
		}
	}
	b, err := a.env(cmd).ClassBrief(r, st, im)
	if err != nil {
		return err
	}
	if err := write(b); err != nil {
		return err
	}
	if r.Average {
		return answer.AverageCheck(b.Average.Result)
	}
	return answer.Check(b.Advice.Result)
}
