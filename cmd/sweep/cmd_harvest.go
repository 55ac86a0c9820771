package main

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/spf13/cobra"

	"github.com/sweep-cfd/sweep/internal/harvest"
	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/results"
	"github.com/sweep-cfd/sweep/internal/study"
	"github.com/sweep-cfd/sweep/internal/ui"
)

type harvestOptions struct {
	json    bool
	csv     bool
	running bool
}

func newHarvestCmd() *cobra.Command {
	var opts harvestOptions
	cmd := &cobra.Command{
		Use:   "harvest [DIR]",
		Short: "Average every variant's histories, with confidence intervals and verdicts",
		Long: `harvest reads the force or coefficient histories of every variant that has
run (or runs now), as the recipe's [[quantity]] tables describe, removes the
initial transient, averages the rest with a 95 % confidence interval (over
whole cycles for a periodic history such as vortex shedding; from batch
means sized by the autocorrelation otherwise), and gives a verdict:

  converged      the half-width is within the tolerance
  steady         the history settled to a constant (the interval is a bound)
  not_converged  an honest interval, wider than the tolerance: run longer
  too_short      too little after the transient to judge: run longer
  drifting       the average still moves: run longer, or set start
  running        the run has not ended (preliminary figures)
  no_data        the run ended without a history to average
  failed         the solver run failed (or diverged: NaN in its history)

The summary is kept in the study database and written to
results/summary.json and results/summary.csv. While a run goes on, the
variants it still runs keep their last finished results there (and are
listed), unless --include-running records their preliminary averages.`,
		Args: maxOneDir,
		RunE: func(cmd *cobra.Command, args []string) error {
			dir := studyDir(args)
			s, err := openStudy(cmd, dir)
			if err != nil {
				return err
			}
			defer s.Close()
			h, err := s.Harvest(cmd.Context(), study.HarvestOptions{Progress: harvestProgress(), IncludeRunning: opts.running})
			if err != nil {
				return err
			}
			if len(h.Running) > 0 {
				note := "results/summary.* keep their last finished harvest (--include-running records their preliminary averages)"
				if opts.running {
					note = "their preliminary averages are recorded, marked running"
				}
				fmt.Fprintf(cmd.ErrOrStderr(), "still running: %s; %s\n", strings.Join(h.Running, ", "), note)
			}
			out := cmd.OutOrStdout()
			switch {
			case opts.json:
				return ui.JSON(out, map[string]any{"study": s.Recipe.Name, "variants": h.Variants})
			case opts.csv:
				b, err := os.ReadFile(filepath.Join(dir, results.Dir, "summary.csv"))
				if err != nil {
					return err
				}
				_, err = out.Write(b)
				return err
			}
			printHarvest(out, s.Recipe, h.Variants)
			return nil
		},
	}
	cmd.Flags().BoolVar(&opts.json, "json", false, "print the results as JSON")
	cmd.Flags().BoolVar(&opts.csv, "csv", false, "print the results as CSV")
	cmd.Flags().BoolVar(&opts.running, "include-running", false, "record the preliminary averages of variants still running in the summary")
	return cmd
}

// openStudy opens the planned study in dir and says on standard error
// what opening it changed (a database migrated to the current format).
func openStudy(cmd *cobra.Command, dir string) (*study.Study, error) {
	s, err := study.Open(dir)
	if err != nil {
		return nil, err
	}
	if n := s.Note(); n != "" {
		fmt.Fprintln(cmd.ErrOrStderr(), "note:", n)
	}
	return s, nil
}

func printHarvest(w io.Writer, r *recipe.Recipe, vs []results.Variant) {
	head := []string{"variant"}
	for _, p := range r.Params {
		head = append(head, p.Name)
	}
	for _, q := range r.Quantities {
		head = append(head, q.Name+" (95% CI)", "samples", "verdict")
	}
	rows := [][]string{head}
	for _, v := range vs {
		row := []string{v.Label}
		for _, val := range v.Values {
			row = append(row, val.String())
		}
		for _, q := range r.Quantities {
			res, ok := v.Results[q.Name]
			if !ok {
				row = append(row, "-", "-", string(v.State))
				continue
			}
			row = append(row, ui.PlusMinus(res.Mean, res.HalfWidth), samplesNote(res), verdictNote(res))
		}
		rows = append(rows, row)
	}
	ui.Table(w, rows)
	fmt.Fprintf(w, "\nwritten: %s/summary.json, %s/summary.csv\n", results.Dir, results.Dir)
	fmt.Fprintln(w, ui.Caution)
}

// samplesNote says what an average stands on: its samples and either the
// whole cycles it covers or its effective (independent) samples.
func samplesNote(r harvest.Result) string {
	switch {
	case r.Samples == 0:
		return "-"
	case r.Method == "cycles":
		return fmt.Sprintf("%d (%d cycles)", r.Samples, r.Periods)
	case r.EffectiveSamples > 0:
		return fmt.Sprintf("%d (%.0f eff.)", r.Samples, r.EffectiveSamples)
	}
	return strconv.Itoa(r.Samples)
}

// verdictNote is the verdict, with the further run time it asks for.
func verdictNote(r harvest.Result) string {
	s := string(r.Verdict)
	switch r.Verdict {
	case harvest.NotConverged, harvest.TooShort, harvest.Drifting:
		switch {
		case r.ExtraCapped:
			s += " (needs over 100 times its window)"
		case r.ExtraTime > 0:
			s += fmt.Sprintf(" (run about %s longer)", ui.Number(r.ExtraTime))
		}
	case harvest.Failed, harvest.NoData:
		s += ": " + r.Message
	}
	return s
}
