package main

import (
	"fmt"
	"io"
	"strings"

	"github.com/spf13/cobra"

	"github.com/sweep-cfd/sweep/internal/recovery"
	"github.com/sweep-cfd/sweep/internal/store"
	"github.com/sweep-cfd/sweep/internal/ui"
)

func newRecoverCmd() *cobra.Command {
	var asJSON bool
	cmd := &cobra.Command{
		Use:   "recover [DIR]",
		Short: "Check the study database and rebuild it if it is damaged",
		Long: `recover reads the study database from end to end. If it is sound, nothing
changes. If it is damaged (emptied, truncated, overwritten, a bad copy),
the damaged file is kept aside as .sweep/study.db.damaged-<time>, and the
state is rebuilt: from the consistent copy (.sweep/study.db.bak) that
every plan and run keeps, when that copy is sound, brought up to date from
the variant directories; otherwise from the directories alone. Only what
can be proven is kept: each variant from the identity file planning wrote
into its directory, each stage as done only if its log records a run that
finished. Everything else is queued to run again. Refused while a run is
active.`,
		Args: maxOneDir,
		RunE: func(cmd *cobra.Command, args []string) error {
			dir := studyDir(args)
			r, err := loadRecipe(dir)
			if err != nil {
				return err
			}
			lock, err := store.Acquire(dir, "recover")
			if err != nil {
				return err
			}
			defer lock.Release()
			res, err := recovery.Recover(r)
			if err != nil {
				return err
			}
			if asJSON {
				return ui.JSON(cmd.OutOrStdout(), res)
			}
			printRecovery(cmd.OutOrStdout(), dir, res)
			return nil
		},
	}
	cmd.Flags().BoolVar(&asJSON, "json", false, "print what was found and kept as JSON")
	return cmd
}

func printRecovery(w io.Writer, dir string, res *recovery.Result) {
	if res.Sound {
		fmt.Fprintf(w, "the study database is sound (%d variants, %d stage jobs); nothing to recover\n", res.Counts.Variants, res.Counts.Jobs)
		return
	}
	fmt.Fprintf(w, "the study database was damaged: %s\n", res.Why)
	if res.KeptAside != "" {
		fmt.Fprintf(w, "kept the damaged file as %s\n", res.KeptAside)
	}
	fmt.Fprintf(w, "rebuilt from %s: %d variants", res.Source, res.Variants)
	if res.Added > 0 {
		fmt.Fprintf(w, " (%d planned after the copy, read from their directories)", res.Added)
	}
	fmt.Fprintln(w)
	fmt.Fprintf(w, "stage jobs: %d done", res.Done)
	if res.Proven > 0 {
		fmt.Fprintf(w, " (%d proven by their logs since the copy)", res.Proven)
	}
	fmt.Fprintf(w, ", %d failed, %d to run", res.Failed, res.Pending)
	if res.Requeued > 0 {
		fmt.Fprintf(w, " (%d were running when the copy was made)", res.Requeued)
	}
	fmt.Fprintln(w)
	if len(res.NoIdentity) > 0 {
		fmt.Fprintf(w, "left out, no usable identity file: %s\n", strings.Join(res.NoIdentity, ", "))
	}
	fmt.Fprintf(w, "averages are harvested again from the histories; next: sweep run %s\n", dir)
}
