package main

import (
	"context"
	"fmt"
	"io"
	"os"
	"slices"

	"github.com/spf13/cobra"

	"fixpoint/cmd/internal/answer"
	"fixpoint/cmd/internal/modelfile"
	"fixpoint/cmd/internal/outfile"
	"fixpoint/cmd/internal/starters"
	"fixpoint/reports"
)

func (a *app) newCheck() *cobra.Command {
	return &cobra.Command{
		Use:   "check FILE",
		Short: "Validate a class config, system file, fleet file or inspection records and list every problem found",
		Example: `  fixpoint check configs/pumps.yaml
  fixpoint check configs/east-zone.yaml
  fixpoint check configs/pump-inspections.csv`,
		Args: exactArgs(1, "one class config, system, fleet or inspection-records file"),
		RunE: func(cmd *cobra.Command, args []string) error {
			path := args[0]
			f, err := a.load(cmd, path, modelfile.ClassFile, modelfile.SystemFile, modelfile.FleetFile, modelfile.RecordsFile)
			if err != nil {
				return err
			}
			switch {
			case f.Kind == modelfile.RecordsFile:
				fh, err := os.Open(f.Path)
				if err != nil {
					return &modelfile.Fault{File: path, Msg: modelfile.OpenProblem(err)}
				}
				defer fh.Close()
				line, err := answer.RecordsCheck(cmd.Context(), path, io.LimitReader(fh, maxRecordBytes), a.warn)
				if err != nil {
					return err
				}
				fmt.Fprintln(a.stdout, line)
			case f.Fleet != nil:
				ff := f.Fleet
				fmt.Fprintf(a.stdout, "%s: ok: fleet %q, %s, %s, %s of budget, periods of %s\n",
					path, ff.Name, reports.Nouns(len(ff.Classes), "class", "classes"), reports.Nouns(ff.Units, "unit", "units"), reports.Nouns(ff.Years, "year", "years"), ff.Classes[0].Period)
				for i, c := range ff.Classes {
					a.printLines(answer.ServiceCheckLines(c.Model, "class "+ff.Names[i]+": "))
					if err := a.checkInspection(cmd, c.Path, c); err != nil {
						return err
					}
				}
			case f.System != nil:
				m, err := f.System.Machine()
				if err != nil {
					return err
				}
				n, acts := m.Size()
				est, err := answer.SystemSize(f.System, m)
				if err != nil {
					return err
				}
				bytes := est.Bytes
				fmt.Fprintf(a.stdout, "%s: ok: system %q, %d components, %s joint states, %s joint actions, up to %s of memory and %s to solve (upper bounds)\n",
					path, f.System.Name, len(f.System.Components), reports.Money(n, 0), reports.Money(acts, 0), answer.ByteSizeText(bytes), answer.AboutDuration(est.Seconds))
				for _, c := range f.System.Components {
					a.printLines(answer.ServiceCheckLines(c.Model, "component "+c.Name+": "))
				}
			default:
				c := f.Class
				if err := a.env(cmd).ClassCheck(c); err != nil {
					return err
				}
				disc := "average criterion (no discounting)"
				if !c.Discount.IsZero() {
					disc = fmt.Sprintf("discount factor %s per period of %s", answer.FactorText(c.Discount.Factor()), c.Period)
					if c.Criterion == modelfile.Average {
						disc = "average criterion; " + disc + " for the commands that discount"
					}
				}
				fmt.Fprintf(a.stdout, "%s: ok: %q, %d states, %d actions, %s\n", path, c.Name, len(c.Model.States), len(c.Model.Actions), disc)
				a.printLines(answer.ServiceCheckLines(c.Model, ""))
				if err := a.checkInspection(cmd, path, c); err != nil {
					return err
				}
			}
			return nil
		},
	}
}

// printLines writes each line to stdout.
func (a *app) printLines(lines []string) {
	for _, l := range lines {
		fmt.Fprintln(a.stdout, l)
	}
}

func (a *app) newInit() *cobra.Command {
	cmd := &cobra.Command{
		Use:   "init [PATH]",
		Short: "Write a commented starter file: a class config, a system, a fleet with its class and inventory, or records",
		Long: `init writes a commented starter file of the kind given by --kind (default
class) at PATH (default fixpoint.yaml, or fixpoint.csv for records; - for
standard output). A fleet starter comes with a class config and an inventory
beside it (PATH-class.yaml and PATH-inventory.csv). Every number in a starter
is an invented placeholder. init never overwrites a file.`,
		Example: `  fixpoint init pumps.yaml
  fixpoint init --kind system crane.yaml
  fixpoint init --kind fleet depot.yaml && fixpoint plan depot.yaml
  fixpoint init --kind records inspections.csv`,
		Args: func(_ *cobra.Command, args []string) error {
			if len(args) > 1 {
				return usagef("want at most one path, got %d", len(args))
			}
			return nil
		},
		RunE: func(cmd *cobra.Command, args []string) error {
			kind, _ := cmd.Flags().GetString("kind")
			if !slices.Contains(starters.Kinds, kind) {
				return usagef("unknown kind %q; want class, system, fleet or records", kind)
			}
			path := "fixpoint.yaml"
			if kind == "records" {
				path = "fixpoint.csv"
			}
			if len(args) == 1 {
				path = args[0]
			}
			files, err := starters.Files(kind, path)
			if err != nil {
				return err
			}
			if path == "-" {
				if len(files) > 1 {
					return usagef("a %s starter is %d files (the fleet file, its class config and its inventory); give a path, not -", kind, len(files))
				}
				_, err := a.stdout.Write(files[0].Data)
				return err
			}
			for _, f := range files {
				if _, err := os.Lstat(f.Path); err == nil {
					return usagef("%s exists; init never overwrites a file", f.Path)
				}
			}
			ctx := cmd.Context()
			for _, f := range files {
				if err := (outfile.Target{Path: f.Path}).WriteBytes(ctx, f.Data); err != nil {
					return err
				}
				fmt.Fprintf(a.stdout, "wrote %s\n", f.Path)
				// Once one file is in place the rest follow: an interrupt
				// (exit 130: no output) must not leave a partial set.
				ctx = context.WithoutCancel(ctx)
			}
			next := "check " + path
			if kind == "records" {
				next = "fit " + path + " --config CLASS.yaml"
			}
			fmt.Fprintf(a.stdout, "edit it, then run 'fixpoint %s'\n", next)
			return nil
		},
	}
	cmd.Flags().String("kind", "class", "what to write: class, system, fleet (with its class and inventory) or records")
	return cmd
}
