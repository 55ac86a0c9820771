package main

import (
	"fmt"
	"os"

	"github.com/spf13/cobra"

	"github.com/sweep-cfd/sweep/internal/runner"
	"github.com/sweep-cfd/sweep/internal/store"
	"github.com/sweep-cfd/sweep/internal/ui"
)

type runOptions struct {
	backend string
	detach  bool
	cores   int
	json    bool
	quiet   bool
}

func newRunCmd() *cobra.Command {
	var opts runOptions
	cmd := &cobra.Command{
		Use:   "run [DIR]",
		Short: "Run the study's queued jobs on this machine's cores",
		Long: `run starts the queued stage jobs of DIR's variants within a core budget:
stages of a variant run in order, variants run side by side. Each stage's
output goes to variants/<label>/<stage>.log. A failing stage is retried as
the recipe allows, then its variant is marked failed; the others go on.

Ctrl-C stops running jobs and re-queues them. If run itself is killed,
the next run recovers: finished jobs stay finished, unfinished ones run
again. Only one run may work on a study at a time.`,
		Args: maxOneDir,
		RunE: func(cmd *cobra.Command, args []string) error {
			return runRun(cmd, opts, studyDir(args))
		},
	}
	cmd.Flags().IntVar(&opts.cores, "cores", 0, "cores the run may use at once (default: all of this machine's)")
	cmd.Flags().StringVar(&opts.backend, "backend", "", "where stages run: local or slurm (default: the recipe's [backend] kind, else local)")
	cmd.Flags().BoolVar(&opts.detach, "detach", false, "slurm: submit what is ready and return; run again (or status --refresh) to follow")
	cmd.Flags().BoolVar(&opts.json, "json", false, "print the final status as JSON")
	cmd.Flags().BoolVarP(&opts.quiet, "quiet", "q", false, "print only failures and the summary")
	return cmd
}

func runRun(cmd *cobra.Command, opts runOptions, dir string) error {
	if opts.cores < 0 {
		return usageError{fmt.Errorf("--cores must be positive")}
	}
	r, err := loadRecipe(dir)
	if err != nil {
		return err
	}
	lock, err := store.Acquire(dir, "run")
	if err != nil {
		return err
	}
	defer lock.Release()
	backend := r.Backend.Kind
	if opts.backend != "" {
		backend = opts.backend
	}
	prog := ui.NewRunProgress(os.Stderr, opts.quiet)
	var snap *runner.Snapshot
	switch backend {
	case "local":
		if opts.detach {
			return usageError{fmt.Errorf("--detach needs the slurm backend")}
		}
		snap, err = runner.Run(cmd.Context(), r, runner.Options{Cores: opts.cores, Progress: prog})
	case "slurm":
		snap, err = runner.RunSlurm(cmd.Context(), r, runner.Options{Progress: prog}, opts.detach)
	default:
		return usageError{fmt.Errorf("--backend must be local or slurm (got %q)", backend)}
	}
	prog.Finish()
	if snap == nil {
		return err
	}
	out := cmd.OutOrStdout()
	if opts.json {
		st, oerr := store.OpenExisting(dir, store.Options{})
		if oerr != nil {
			return oerr
		}
		rep, serr := runner.Status(st, r.Name)
		st.Close()
		if serr != nil {
			return serr
		}
		if jerr := ui.JSON(out, rep); jerr != nil {
			return jerr
		}
	} else {
		fmt.Fprintf(out, "%d of %d variants done, %d failed, %d pending, in %s\n", snap.Done, snap.Total, snap.Failed, snap.Pending+snap.Running, ui.Duration(snap.Elapsed))
		if snap.Failed > 0 {
			fmt.Fprintf(out, "see `sweep status %s` for the failures; `sweep reset %s --failed` re-queues them\n", dir, dir)
		}
	}
	if err != nil {
		return err
	}
	if snap.Failed > 0 {
		return fmt.Errorf("%d variants failed", snap.Failed)
	}
	return nil
}

func newCancelCmd() *cobra.Command {
	return &cobra.Command{
		Use:   "cancel [DIR]",
		Short: "Cancel the study's jobs in Slurm (scancel) and re-queue them",
		Args:  maxOneDir,
		RunE: func(cmd *cobra.Command, args []string) error {
			dir := studyDir(args)
			lock, err := store.Acquire(dir, "cancel")
			if err != nil {
				return err
			}
			defer lock.Release()
			st, err := store.OpenExisting(dir, store.Options{Brief: true})
			if err != nil {
				return err
			}
			defer st.Close()
			n, err := runner.CancelSlurm(cmd.Context(), st)
			if err != nil {
				return err
			}
			fmt.Fprintf(cmd.OutOrStdout(), "cancelled %d Slurm jobs; they are back in the queue\n", n)
			return nil
		},
	}
}
