package main

import (
	"errors"
	"fmt"

	"github.com/spf13/cobra"

	"github.com/sweep-cfd/sweep/internal/study"
	"github.com/sweep-cfd/sweep/internal/ui"
)

type resetOptions struct {
	failed bool
	json   bool
}

func newResetCmd() *cobra.Command {
	var opts resetOptions
	cmd := &cobra.Command{
		Use:   "reset [DIR] --failed",
		Short: "Put failed jobs back in the queue",
		Long: `reset --failed re-queues every failed job with its attempts cleared, so the
next 'sweep run' tries it again (and the stages after it). Finished jobs
are not touched.`,
		Args: maxOneDir,
		RunE: func(cmd *cobra.Command, args []string) error {
			if !opts.failed {
				return usageError{errors.New("say what to reset: --failed")}
			}
			dir := studyDir(args)
			n, err := study.ResetFailed(dir)
			if err != nil {
				return err
			}
			if opts.json {
				return ui.JSON(cmd.OutOrStdout(), map[string]int{"requeued": n})
			}
			fmt.Fprintf(cmd.OutOrStdout(), "re-queued %d failed jobs; run `sweep run %s`\n", n, dir)
			return nil
		},
	}
	cmd.Flags().BoolVar(&opts.failed, "failed", false, "re-queue failed jobs")
	cmd.Flags().BoolVar(&opts.json, "json", false, "print the result as JSON")
	return cmd
}
