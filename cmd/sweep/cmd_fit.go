package main

import (
	"errors"
	"fmt"
	"io"
	"strings"

	"github.com/spf13/cobra"

	"github.com/sweep-cfd/sweep/internal/fit"
	"github.com/sweep-cfd/sweep/internal/ui"
)

type fitOptions struct {
	model    string
	quantity string
	terms    string
	table    string
	response string
	maximize bool
	seed     uint64
	json     bool
	csv      bool
}

func newFitCmd() *cobra.Command {
	var opts fitOptions
	cmd := &cobra.Command{
		Use:   "fit [DIR]",
		Short: "Fit a response surface through the averaged results; find the optimum",
		Long: `fit harvests the study (see harvest) and fits a response surface of one
quantity (--quantity; default the objective) over the numeric parameters:
a polynomial by least squares (quadratic by default; linear, interactions,
or any terms with --terms "1, a, b, a*b, a^2") or kriging (Gaussian-process
regression with each run's own uncertainty as its noise). Only converged or
steady variants are used; the others are listed.

It prints the model, its leave-one-out error beside the runs' own
uncertainty (a surface whose error is far above the noise is flagged), the
optimum within the bounds (and the recipe's constraints) with its 95 %
interval, and the parameters' Sobol' sensitivity indices.

fit --table FILE.csv --response COLUMN fits a plain table instead (one
column per parameter plus the response), for results from elsewhere.`,
		Args: maxOneDir,
		RunE: func(cmd *cobra.Command, args []string) error {
			return runFit(cmd, opts, args)
		},
	}
	f := cmd.Flags()
	f.StringVar(&opts.model, "model", "quadratic", "the surface: "+strings.Join(fit.Models, ", "))
	f.StringVar(&opts.quantity, "quantity", "", "the quantity to fit (default: the recipe's objective)")
	f.StringVar(&opts.terms, "terms", "", `polynomial terms, e.g. "1, x, x^2, x^3" (overrides --model)`)
	f.StringVar(&opts.table, "table", "", "fit this CSV table instead of a study")
	f.StringVar(&opts.response, "response", "", "with --table: the response column")
	f.BoolVar(&opts.maximize, "higher-better", false, "with --table: higher responses are better, so the optimum is a maximum (a study uses its quantity's better = ...)")
	f.Uint64Var(&opts.seed, "seed", 1, "seed of the optimiser's starts and the sensitivity samples")
	f.BoolVar(&opts.json, "json", false, "print the fit as JSON")
	f.BoolVar(&opts.csv, "csv", false, "print the terms (polynomial) or the sensitivities as CSV")
	return cmd
}

func runFit(cmd *cobra.Command, opts fitOptions, args []string) error {
	var rep *fit.Report
	if opts.table != "" {
		if len(args) > 0 {
			return usageError{errors.New("give either a study directory or --table, not both")}
		}
		if opts.response == "" {
			return usageError{errors.New("--table needs --response COLUMN, the column to fit")}
		}
		d, err := fit.TableData(opts.table, opts.response)
		if err != nil {
			return usageError{err}
		}
		rep, err = fit.Fit(d, fit.Options{Model: opts.model, Terms: opts.terms, Maximize: opts.maximize, Seed: opts.seed})
		if err != nil {
			return err
		}
		rep.Response = opts.response
	} else {
		h, err := harvestStudy(cmd, studyDir(args), opts.quantity)
		if err != nil {
			return err
		}
		defer h.st.Close()
		r, q, vs := h.r, h.q, h.vs
		d, cols, left, err := fit.StudyData(r, vs, q.Name)
		if err != nil {
			return err
		}
		rep, err = fit.Fit(d, fit.Options{Model: opts.model, Terms: opts.terms, Maximize: !q.LowerIsBetter(),
			Feasible: fit.Feasible(r, cols, vs), Seed: opts.seed})
		if err != nil {
			return fmt.Errorf("fit %s: %w", q.Name, err)
		}
		rep.Response, rep.LeftOut = q.Name, left
	}
	if opts.json {
		return ui.JSON(cmd.OutOrStdout(), rep)
	}
	if opts.csv {
		rows := [][]string{{"term", "coef", "stderr"}}
		for _, t := range rep.Terms {
			rows = append(rows, []string{t.Name, fmt.Sprintf("%.15g", t.Coef), fmt.Sprintf("%.6g", t.StdErr)})
		}
		if len(rep.Terms) == 0 {
			rows = [][]string{{"param", "first", "first_se", "total", "total_se"}}
			for _, x := range rep.Sensitivities {
				rows = append(rows, []string{x.Param, fmt.Sprintf("%.6g", x.First), fmt.Sprintf("%.3g", x.FirstSE), fmt.Sprintf("%.6g", x.Total), fmt.Sprintf("%.3g", x.TotalSE)})
			}
		}
		return ui.CSV(cmd.OutOrStdout(), rows)
	}
	printFit(cmd.OutOrStdout(), rep)
	return nil
}

func printFit(w io.Writer, rep *fit.Report) {
	fmt.Fprintf(w, "%s surface of %s over %s, %d runs\n\n", rep.Model, rep.Response, strings.Join(rep.Params, ", "), rep.Runs)
	if len(rep.Terms) > 0 {
		rows := [][]string{{"term", "coefficient", "std. error"}}
		for _, t := range rep.Terms {
			rows = append(rows, []string{t.Name, fmt.Sprintf("%.6g", t.Coef), fmt.Sprintf("%.3g", t.StdErr)})
		}
		ui.Table(w, rows)
		fmt.Fprintln(w)
	}
	if rep.R2 != nil {
		fmt.Fprintf(w, "R^2 %.4f (adjusted %.4f)\n", *rep.R2, *rep.AdjR2)
	}
	q2 := "-"
	if rep.Q2 != nil {
		q2 = fmt.Sprintf("%.4f", *rep.Q2)
	}
	fmt.Fprintf(w, "leave-one-out error (RMSE) %.4g, Q^2 %s", rep.LOORMSE, q2)
	if rep.Noise > 0 {
		fmt.Fprintf(w, "; the runs' own uncertainty (RMS standard error) %.3g", rep.Noise)
	}
	fmt.Fprintln(w)
	if rep.Flag != "" {
		fmt.Fprintln(w, "WARNING:", rep.Flag)
	}
	if o := rep.Optimum; o != nil {
		fmt.Fprintf(w, "\noptimum: %s = %s (95%% interval of the predicted mean)\n", rep.Response, ui.PlusMinus(o.Value, o.HalfWidth))
		for _, n := range rep.Params {
			fmt.Fprintf(w, "  %s = %.5g\n", n, o.Params[n])
		}
		for _, warn := range o.Warnings {
			fmt.Fprintln(w, "  note:", warn)
		}
	}
	if len(rep.Sensitivities) > 0 {
		fmt.Fprintln(w, "\nsensitivities (Sobol' indices on the surface, over the parameter bounds):")
		rows := [][]string{{"parameter", "main effect", "total effect"}}
		for _, s := range rep.Sensitivities {
			rows = append(rows, []string{s.Param, fmt.Sprintf("%.3f ± %.3f", s.First, s.FirstSE), fmt.Sprintf("%.3f ± %.3f", s.Total, s.TotalSE)})
		}
		ui.Table(w, rows)
	}
	for _, l := range rep.LeftOut {
		fmt.Fprintf(w, "left out: %s: %s\n", l.Label, l.Reason)
	}
	fmt.Fprintln(w, ui.Caution)
}
