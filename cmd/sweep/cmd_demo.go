package main

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"

	"github.com/spf13/cobra"

	"github.com/sweep-cfd/sweep/internal/study"
	"github.com/sweep-cfd/sweep/internal/ui"
	"github.com/sweep-cfd/sweep/recipes"
)

func newDemoCmd() *cobra.Command {
	var cores int
	cmd := &cobra.Command{
		Use:   "demo [DIR]",
		Short: "Write, plan and run the built-in demo study (default DIR: sweep-demo)",
		Long: `demo writes the built-in demo study into DIR (default ./sweep-demo), plans
it, runs it on this machine's cores harvests the drag histories and prints the variants ranked by their
averaged drag, with 95 % intervals and significance groups.
The study: a 2D box-shaped body near a moving ground, whose nose-corner
radius and tail taper angle vary over 9 variants, each a run of the
built-in 2D solver, each stopped as soon as its drag average has
converged (about two minutes in all on two cores). Run it again
to resume or to see the results; everything it does can be done step by
step with plan, run and status.`,
		Args: maxOneDir,
		RunE: func(cmd *cobra.Command, args []string) error {
			dir := "sweep-demo"
			if len(args) == 1 {
				dir = filepath.Clean(args[0])
			}
			return runDemo(cmd, dir, cores)
		},
	}
	cmd.Flags().IntVar(&cores, "cores", 0, "cores the run may use at once (default: all)")
	return cmd
}

func runDemo(cmd *cobra.Command, dir string, cores int) error {
	out := cmd.OutOrStdout()
	if _, err := os.Stat(filepath.Join(dir, "study.toml")); errors.Is(err, os.ErrNotExist) {
		if err := recipes.Write("box-demo", dir); err != nil {
			return usageError{err}
		}
		fmt.Fprintf(out, "wrote the demo study in %s\n", dir)
	} else {
		fmt.Fprintf(out, "using the study already in %s\n", dir)
	}
	res, err := study.Plan(cmd.Context(), dir, study.PlanOptions{})
	if err != nil {
		return err
	}
	fmt.Fprintf(out, "planned %d variants (%d new)\n", res.Added+res.Kept, res.Added)
	prog := ui.NewRunProgress(os.Stderr, false)
	snap, err := study.Run(cmd.Context(), dir, study.RunOptions{Backend: "local", Cores: cores, Progress: prog})
	prog.Finish()
	if err != nil {
		return err
	}
	fmt.Fprintln(out)
	if err := runRank(cmd, rankOptions{}, dir); err != nil {
		return err
	}
	fmt.Fprintf(out, "\nThe study lives in %s: study.toml is the recipe, variants/<label>/ holds each case, its\nhistory and its log; results/summary.csv the averages. Next: sweep rank %s --baseline v001\n", dir, dir)
	if snap.Failed > 0 {
		return fmt.Errorf("%d variants failed", snap.Failed)
	}
	return nil
}
