package main

import (
	_ "embed"
	"fmt"
	"os"

	"github.com/spf13/cobra"

	"fixpoint/reports"
)

func (a *app) newCheck() *cobra.Command {
	return &cobra.Command{
		Use:   "check FILE",
		Short: "Validate a class config and list every problem found",
		Args:  exactArgs(1, "one class config file"),
		RunE: func(cmd *cobra.Command, args []string) error {
			c, p, err := a.loadProblem(args[0])
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
