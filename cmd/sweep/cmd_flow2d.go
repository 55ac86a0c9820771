package main

import (
	"context"
	"errors"
	"path/filepath"

	"github.com/spf13/cobra"

	"github.com/sweep-cfd/sweep/internal/flow2d"
)

func newFlow2dCmd() *cobra.Command {
	return &cobra.Command{
		Use:   "flow2d CASEFILE",
		Short: "Run the built-in 2D lattice Boltzmann solver on a case file",
		Long: `flow2d runs the built-in 2D incompressible-flow solver (lattice Boltzmann,
D2Q9, two-relaxation-time collision) on CASEFILE, a TOML case description,
and writes drag and lift coefficient histories as plain columns beside it,
as an external solver would. Recipes call it as a stage: run = "sweep flow2d
case.toml". SIGTERM or Ctrl-C ends it cleanly: it writes its last lines and
exits with status 0, so the early-stop feature can end a converged run.

It is a 2D laminar demonstrator for the study workflow and for the tests,
not a design tool for real vehicles.`,
		Args: func(cmd *cobra.Command, args []string) error {
			if len(args) != 1 {
				return usageError{errors.New("flow2d needs one case file, for example: sweep flow2d case.toml")}
			}
			return nil
		},
		RunE: func(cmd *cobra.Command, args []string) error {
			c, err := flow2d.LoadCase(args[0])
			if err != nil {
				return usageError{err}
			}
			// A stop signal is a clean end for the solver, not an
			// interruption of the program: run it on a context of its own
			// that the signal cancels, and report success.
			ctx, cancel := context.WithCancel(context.Background())
			defer cancel()
			go func() {
				<-cmd.Context().Done()
				cancel()
			}()
			_, err = flow2d.Run(ctx, c, filepath.Dir(args[0]), cmd.ErrOrStderr())
			return err
		},
	}
}
