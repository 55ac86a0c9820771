package main

import (
	"errors"
	"fmt"

	"github.com/spf13/cobra"

	"github.com/sweep-cfd/sweep/internal/starter"
)

func newNewCmd() *cobra.Command {
	return &cobra.Command{
		Use:   "new DIR",
		Short: "Write a commented starter study into DIR",
		Long: `new writes a starter study into DIR: a commented recipe (study.toml) and a
template case whose stand-in solver is a short shell script, so that
'sweep plan DIR' and 'sweep run DIR' work at once. Replace the template and
the stage commands with your own case and solver.`,
		Args: func(cmd *cobra.Command, args []string) error {
			if len(args) != 1 {
				return usageError{errors.New("new needs the directory to create, for example: sweep new my-study")}
			}
			return nil
		},
		RunE: func(cmd *cobra.Command, args []string) error {
			if err := starter.Write(args[0]); err != nil {
				return usageError{err}
			}
			fmt.Fprintf(cmd.OutOrStdout(), "wrote a starter study in %s\nnext: sweep plan %s && sweep run %s\n", args[0], args[0], args[0])
			return nil
		},
	}
}
