package main

import (
	"fmt"
	"io"
	"os"
	"strconv"
	"strings"

	"github.com/spf13/cobra"

	"github.com/sweep-cfd/sweep/internal/harvest"
	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/results"
	"github.com/sweep-cfd/sweep/internal/store"
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
			r, st, err := openStudy(dir)
			if err != nil {
				return err
			}
			defer st.Close()
			vs, running, err := results.Harvest(cmd.Context(), r, st, results.Options{Progress: harvestProgress(), IncludeRunning: opts.running})
			if err != nil {
				return err
			}
			if len(running) > 0 {
				note := "results/summary.* keep their last finished harvest (--include-running records their preliminary averages)"
				if opts.running {
					note = "their preliminary averages are recorded, marked running"
				}
				fmt.Fprintf(cmd.ErrOrStderr(), "still running: %s; %s\n", strings.Join(running, ", "), note)
			}
			out := cmd.OutOrStdout()
			switch {
			case opts.json:
				return ui.JSON(out, map[string]any{"study": r.Name, "variants": vs})
			case opts.csv:
				b, err := os.ReadFile(dir + "/" + results.Dir + "/summary.csv")
				if err != nil {
					return err
				}
				_, err = out.Write(b)
				return err
			}
			printHarvest(out, r, vs)
			return nil
		},
	}
	cmd.Flags().BoolVar(&opts.json, "json", false, "print the results as JSON")
	cmd.Flags().BoolVar(&opts.csv, "csv", false, "print the results as CSV")
	cmd.Flags().BoolVar(&opts.running, "include-running", false, "record the preliminary averages of variants still running in the summary")
	return cmd
}

// harvested is a study harvested for one or more quantities: what rank,
// report, gci and fit start from. q is the first of qs.
type harvested struct {
	r  *recipe.Recipe
	st *store.Store
	q  *recipe.Quantity
	qs []*recipe.Quantity
	vs []results.Variant
}

// harvestStudy opens the study in dir, picks the quantities of spec (see
// objectives; one unless several) and harvests every variant. The caller
// closes h.st.
func harvestStudy(cmd *cobra.Command, dir, spec string, several bool) (*harvested, error) {
	r, st, err := openStudy(dir)
	if err != nil {
		return nil, err
	}
	qs, err := objectives(r, spec, several)
	if err != nil {
		st.Close()
		return nil, usageError{err}
	}
	vs, _, err := results.Harvest(cmd.Context(), r, st, results.Options{Progress: harvestProgress()})
	if err != nil {
		st.Close()
		return nil, err
	}
	return &harvested{r, st, qs[0], qs, vs}, nil
}

// objectives returns the quantities a --quantity list names ("drag", or
// "drag,downforce" where several are allowed), by default the recipe's
// objective. Each of several must say which values are better.
func objectives(r *recipe.Recipe, spec string, several bool) ([]*recipe.Quantity, error) {
	names := strings.Split(spec, ",")
	if len(names) > 1 && !several {
		return nil, fmt.Errorf("--quantity %q names %d quantities; this command takes one", spec, len(names))
	}
	var qs []*recipe.Quantity
	seen := map[string]bool{}
	for _, n := range names {
		n = strings.TrimSpace(n)
		if len(names) > 1 && n == "" {
			return nil, fmt.Errorf("--quantity %q has an empty name: separate the quantities with single commas", spec)
		}
		q, err := r.Objective(n)
		if err != nil {
			return nil, err
		}
		if seen[q.Name] {
			return nil, fmt.Errorf("--quantity %q names %s twice", spec, q.Name)
		}
		seen[q.Name] = true
		if len(names) > 1 && q.Direction == recipe.None {
			return nil, fmt.Errorf("quantity %q (%s:%d) does not say which values are better: add better = \"lower\" or \"higher\" to it to trade it against the others", q.Name, recipe.FileName, q.Line)
		}
		qs = append(qs, q)
	}
	return qs, nil
}

// openStudy loads a planned study's recipe and opens its database for
// brief transactions (so it works beside a running `sweep run`).
func openStudy(dir string) (*recipe.Recipe, *store.Store, error) {
	r, err := loadRecipe(dir)
	if err != nil {
		return nil, nil, err
	}
	st, err := store.OpenExisting(dir, store.Options{Brief: true})
	if err != nil {
		return nil, nil, err
	}
	return r, st, nil
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
