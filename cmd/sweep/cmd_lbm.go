package main

import (
	"context"
	"errors"
	"path/filepath"

	"github.com/spf13/cobra"

	"github.com/sweep-cfd/sweep/internal/lbm"
)

func newLbmCmd() *cobra.Command {
	return &cobra.Command{
		Use:   "lbm CASEFILE",
		Short: "Run the built-in 2D lattice Boltzmann solver on a case file",
		Long: `lbm runs the built-in 2D incompressible-flow solver (lattice Boltzmann,
D2Q9, two-relaxation-time collision) on CASEFILE, a TOML case description,
and writes drag and lift coefficient histories as plain columns beside it,
as an external solver would. Recipes call it as a stage: run = "sweep lbm
case.toml". SIGTERM or Ctrl-C ends it cleanly: it writes its last lines and
exits with status 0, so a [stage.settle] stop can end a converged run.

It is a 2D laminar demonstrator for the study workflow and for the tests,
not a design tool for real vehicles.`,
		Args: func(cmd *cobra.Command, args []string) error {
			if len(args) != 1 {
				return usageError{errors.New("lbm needs one case file, for example: sweep lbm case.toml")}
			}
			return nil
		},
		RunE: func(cmd *cobra.Command, args []string) error {
			c, err := lbm.LoadCase(args[0])
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
			_, err = lbm.Run(ctx, c, filepath.Dir(args[0]), cmd.ErrOrStderr())
			return err
		},
	}
}
