package main

import (
	_ "embed"
	"fmt"
	"os"

	"github.com/spf13/cobra"

	"fixpoint/cmd/internal/modelfile"
	"fixpoint/cmd/internal/outfile"
	"fixpoint/optimize/system"
	"fixpoint/reports"
)

func (a *app) newCheck() *cobra.Command {
	return &cobra.Command{
		Use:   "check FILE",
		Short: "Validate a class config, system file or fleet file and list every problem found",
		Example: `  fixpoint check configs/pumps.yaml
  fixpoint check configs/east-zone.yaml`,
		Args: exactArgs(1, "one class config, system or fleet file"),
		RunE: func(cmd *cobra.Command, args []string) error {
			path := args[0]
			f, err := a.load(cmd, path, modelfile.ClassFile, modelfile.SystemFile, modelfile.FleetFile)
			if err != nil {
				return err
			}
			switch {
			case f.Fleet != nil:
				ff := f.Fleet
				fmt.Fprintf(a.stdout, "%s: ok: fleet %q, %d classes, %d units, %d years of budget, periods of %s\n",
					path, ff.Name, len(ff.Classes), ff.Units, ff.Years, ff.Classes[0].Period)
			case f.System != nil:
				m, err := f.System.Machine()
				if err != nil {
					return err
				}
				n, acts := m.Size()
				bytes, _ := system.Cost(m, 2)
				fmt.Fprintf(a.stdout, "%s: ok: system %q, %d components, %s joint states, %s joint actions, about %s of memory to solve\n",
					path, f.System.Name, len(f.System.Components), reports.Money(n, 0), reports.Money(acts, 0), byteSizeText(bytes))
			default:
				c := f.Class
				disc := "average criterion (no discounting)"
				if !c.Discount.IsZero() {
					disc = fmt.Sprintf("discount factor %.6f per period of %s", c.Discount.Factor(), c.Period)
					if c.Criterion == modelfile.Average {
						disc = "average criterion; " + disc + " for the commands that discount"
					}
				}
				fmt.Fprintf(a.stdout, "%s: ok: %q, %d states, %d actions, %s\n", path, c.Name, len(c.Model.States), len(c.Model.Actions), disc)
			}
			return nil
		},
	}
}

//go:embed starter.yaml
var starter []byte

func (a *app) newInit() *cobra.Command {
	return &cobra.Command{
		Use:   "init [PATH]",
		Short: "Write a commented starter class config (default fixpoint.yaml; - for standard output)",
		Example: `  fixpoint init pumps.yaml
  fixpoint init - | less`,
		Args: func(_ *cobra.Command, args []string) error {
			if len(args) > 1 {
				return usagef("want at most one path, got %d", len(args))
			}
			return nil
		},
		RunE: func(cmd *cobra.Command, args []string) error {
			path := "fixpoint.yaml"
			if len(args) == 1 {
				path = args[0]
			}
			if path == "-" {
				_, err := a.stdout.Write(starter)
				return err
			}
			if _, err := os.Lstat(path); err == nil {
				return usagef("%s exists; init never overwrites a file", path)
			}
			if err := (outfile.Target{Path: path}).WriteBytes(cmd.Context(), starter); err != nil {
				return err
			}
			fmt.Fprintf(a.stdout, "wrote %s: edit it, then run 'fixpoint check %s'\n", path, path)
			return nil
		},
	}
}
