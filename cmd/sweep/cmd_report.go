package main

import (
	"fmt"

	"github.com/spf13/cobra"

	"github.com/sweep-cfd/sweep/internal/study"
)

type reportOptions struct {
	out      string
	baseline string
	by       string
}

func newReportCmd() *cobra.Command {
	var opts reportOptions
	cmd := &cobra.Command{
		Use:   "report [DIR]",
		Short: "Write a self-contained HTML report of the study",
		Long: `report harvests the study and writes one self-contained HTML file (default
DIR/results/report.html): the recipe's summary and the state counts, the
ranking with 95 % intervals and significance groups, each variant's
histories with the discarded transient and the averaging window, the
failures with their log tails, the trade-off of the objectives when there
are several (the quantities that say which values are better, or those
of --quantity), the response surface (contour maps or, for one parameter,
the curve; leave-one-out predictions, sensitivities) when one can be
fitted, or why not, and the grid-convergence study when the recipe marks
a mesh level. Figures are
inline SVG; nothing is fetched from anywhere, so the file reads offline
and travels by e-mail.`,
		Args: maxOneDir,
		RunE: func(cmd *cobra.Command, args []string) error {
			return runReport(cmd, opts, studyDir(args))
		},
	}
	cmd.Flags().StringVarP(&opts.out, "output", "o", "", "the file to write (default DIR/results/report.html)")
	cmd.Flags().StringVar(&opts.baseline, "baseline", "", "compare every variant with this one (a label)")
	cmd.Flags().StringVar(&opts.by, "quantity", "", "the quantity to rank and fit (default: the objective), or several separated by commas: the first is ranked and fitted, and all are weighed in the trade-off section")
	cmd.Flags().StringVar(&opts.by, "by", "", "the same as --quantity")
	_ = cmd.Flags().MarkHidden("by")
	return cmd
}

func runReport(cmd *cobra.Command, opts reportOptions, dir string) error {
	s, err := openStudy(cmd, dir)
	if err != nil {
		return err
	}
	defer s.Close()
	rep, err := s.Report(cmd.Context(), study.ReportOptions{Quantity: opts.by, Baseline: opts.baseline, Out: opts.out, Progress: harvestProgress()})
	if err != nil {
		return err
	}
	fmt.Fprintf(cmd.OutOrStdout(), "wrote %s (%d KB)\n", rep.Path, rep.Bytes/1024)
	return nil
}
