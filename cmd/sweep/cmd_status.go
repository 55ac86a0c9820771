package main

import (
	"fmt"
	"io"
	"os"
	"strings"

	"github.com/spf13/cobra"

	"github.com/sweep-cfd/sweep/internal/study"
	"github.com/sweep-cfd/sweep/internal/ui"
)

type statusOptions struct {
	json    bool
	csv     bool
	refresh bool
}

func newStatusCmd() *cobra.Command {
	var opts statusOptions
	cmd := &cobra.Command{
		Use:   "status [DIR]",
		Short: "Show each variant's parameters and state",
		Long: `status prints one line per variant: its label, parameters and state
(pending, running, done, failed), with the reason for failures. It can be
used while a run is going on. --json prints an object with "counts" (done,
failed, pending, running) and "variants" (id, label, state, params, ...).`,
		Args: maxOneDir,
		RunE: func(cmd *cobra.Command, args []string) error {
			dir := studyDir(args)
			if opts.refresh {
				if err := study.RefreshSlurm(cmd.Context(), dir); err != nil {
					return err
				}
			}
			return runStatus(cmd.OutOrStdout(), opts, dir)
		},
	}
	cmd.Flags().BoolVar(&opts.json, "json", false, "print the status as JSON")
	cmd.Flags().BoolVar(&opts.csv, "csv", false, "print the status as CSV")
	cmd.Flags().BoolVar(&opts.refresh, "refresh", false, "slurm: ask Slurm about the study's jobs first (and submit what is ready)")
	return cmd
}

func runStatus(w io.Writer, opts statusOptions, dir string) error {
	rep, migrated, err := study.StatusOf(dir)
	if err != nil {
		return err
	}
	if n := study.MigrationNote(dir, migrated); n != "" {
		fmt.Fprintln(os.Stderr, "note:", n)
	}
	if opts.json {
		return ui.JSON(w, rep)
	}
	header := []string{"variant"}
	header = append(header, rep.Params...)
	header = append(header, "state", "stage", "note")
	rows := [][]string{header}
	for _, v := range rep.Variants {
		line := []string{v.Label}
		for _, val := range v.Values {
			line = append(line, val.String())
		}
		state := string(v.State)
		if v.Orphaned {
			state = "running?"
		}
		note := v.Reason
		if v.Name != "" {
			note = strings.TrimSpace(v.Name + "  " + note)
		}
		line = append(line, state, dash(v.Stage), note)
		rows = append(rows, line)
	}
	if opts.csv {
		return ui.CSV(w, rows)
	}
	ui.Table(w, rows)
	c := rep.Counts
	fmt.Fprintf(w, "\n%d variants: %d done, %d running, %d failed, %d pending\n", len(rep.Variants), c.Done, c.Running, c.Failed, c.Pending)
	orphaned := 0
	for _, v := range rep.Variants {
		if v.Orphaned {
			orphaned++
		}
	}
	switch {
	case orphaned > 0:
		fmt.Fprintf(w, "no run and no executor is active: the %d jobs marked running? lost their processes (a reboot?); `sweep run %s` re-queues them\n", orphaned, dir)
	case c.Running > 0 && !rep.RunActive && rep.ExecutorAlive:
		fmt.Fprintf(w, "no run is attached, but the study's executor still runs its stages; `sweep run %s` takes them over without interrupting them\n", dir)
	}
	return nil
}

// refreshSlurm takes one look at the study's Slurm jobs (a detached run).
