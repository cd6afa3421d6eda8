package main

import (
	_ "embed"
	"fmt"
	"os"

	"github.com/spf13/cobra"

	"fixpoint/optimize/system"
	"fixpoint/reports"
)

func (a *app) newCheck() *cobra.Command {
	return &cobra.Command{
		Use:   "check FILE",
		Short: "Validate a class config and list every problem found",
		Args:  exactArgs(1, "one class config file"),
		RunE: func(cmd *cobra.Command, args []string) error {
			m, err := a.loadModel(args[0])
			if err != nil {
				return err
			}
			if ff := m.Fleet; ff != nil {
				fmt.Fprintf(a.stdout, "%s: ok: fleet %q, %d classes, %d units, %d years of budget\n",
					args[0], ff.Name, len(ff.Classes), ff.Units, ff.Years)
				return nil
			}
			if sf := m.System; sf != nil {
				sys, err := sf.system()
				if err != nil {
					return err
				}
				n, acts := sys.Size()
				est, err := sys.Estimate(&system.Settings{Workers: 2})
				if err != nil {
					return err
				}
				bytes := est.Bytes
				fmt.Fprintf(a.stdout, "%s: ok: system %q, %d components, %s joint states, %s joint actions, about %s of memory to solve\n",
					args[0], sf.Name, len(sf.Components), reports.Money(n, 0), reports.Money(acts, 0), byteSizeText(bytes))
				return nil
			}
			c := m.Class
			p, err := a.classProblem(c)
			if err != nil {
				return err
			}
			fmt.Fprintf(a.stdout, "%s: ok: %q, %d states, %d actions, discount factor %.6f per period of %s\n",
				args[0], c.Name, len(p.States), len(p.Actions), p.Discount, reports.Years(c.Model.PeriodYears))
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
			if err := writeFileAtomic(cmd.Context(), path, starter, false); err != nil {
				return err
			}
			fmt.Fprintf(a.stdout, "wrote %s: edit it, then run 'fixpoint check %s'\n", path, path)
			return nil
		},
	}
}
