package main

import (
	"fmt"
	"io"
	"os"
	"strconv"

	"github.com/spf13/cobra"

	"github.com/sweep-cfd/sweep/internal/harvest"
	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/results"
	"github.com/sweep-cfd/sweep/internal/store"
	"github.com/sweep-cfd/sweep/internal/ui"
)

type harvestOptions struct {
	json bool
	csv  bool
}

func newHarvestCmd() *cobra.Command {
	var opts harvestOptions
	cmd := &cobra.Command{
		Use:   "harvest [DIR]",
		Short: "Average every variant's histories, with confidence intervals and verdicts",
		Long: `harvest reads the force or coefficient histories of every variant that has
run (or runs now), as the recipe's [[quantity]] tables describe, removes the
initial transient (MSER-5), averages the rest with a 95 % confidence
interval that accounts for autocorrelation, and gives a verdict: converged,
not_converged (with the extra time needed), steady, or failed.

The summary is kept in the study database and written to
results/summary.json and results/summary.csv.`,
		Args: maxOneDir,
		RunE: func(cmd *cobra.Command, args []string) error {
			dir := studyDir(args)
			r, st, err := openStudy(dir)
			if err != nil {
				return err
			}
			defer st.Close()
			vs, err := results.Harvest(cmd.Context(), r, st, harvestProgress())
			if err != nil {
				return err
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
	return cmd
}

// harvested is a study harvested for one quantity: what rank, report,
// gci and fit start from.
type harvested struct {
	r  *recipe.Recipe
	st *store.Store
	q  *recipe.Quantity
	vs []results.Variant
}

// harvestStudy opens the study in dir, picks the quantity (default: the
// objective) and harvests every variant. The caller closes h.st.
func harvestStudy(cmd *cobra.Command, dir, quantity string) (*harvested, error) {
	r, st, err := openStudy(dir)
	if err != nil {
		return nil, err
	}
	q, err := r.Objective(quantity)
	if err != nil {
		st.Close()
		return nil, usageError{err}
	}
	vs, err := results.Harvest(cmd.Context(), r, st, harvestProgress())
	if err != nil {
		st.Close()
		return nil, err
	}
	return &harvested{r, st, q, vs}, nil
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
			if res.Verdict == "failed" {
				row = append(row, "-", strconv.Itoa(res.Samples), "failed: "+res.Message)
				continue
			}
			row = append(row, ui.PlusMinus(res.Mean, res.HalfWidth), fmt.Sprintf("%d (%.0f eff.)", res.Samples, res.EffectiveSamples), verdictNote(res.Verdict, res.ExtraTime))
		}
		rows = append(rows, row)
	}
	ui.Table(w, rows)
	fmt.Fprintf(w, "\nwritten: %s/summary.json, %s/summary.csv\n", results.Dir, results.Dir)
	fmt.Fprintln(w, ui.Caution)
}

func verdictNote(v harvest.Verdict, extra float64) string {
	s := string(v)
	if s == "not_converged" && extra > 0 {
		s += fmt.Sprintf(" (run ~%.3g longer)", extra)
	}
	return s
}
