package main

import (
	"errors"
	"fmt"
	"io"
	"math"
	"slices"
	"sort"
	"strconv"
	"strings"

	"github.com/spf13/cobra"

	"github.com/sweep-cfd/sweep/internal/fit"
	"github.com/sweep-cfd/sweep/internal/results"
	"github.com/sweep-cfd/sweep/internal/study"
	"github.com/sweep-cfd/sweep/internal/ui"
)

type fitOptions struct {
	model    string
	quantity string
	terms    string
	table    string
	response string
	params   string
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
quantity (--quantity; default the objective) over the numeric parameters
(in log10 of those declared log = true). By default it fits every model
the runs can support (linear, interactions, quadratic polynomials by
weighted least squares, and kriging, a Gaussian-process regression with
each run's own uncertainty as its noise) and keeps the simplest whose
leave-one-out error is within the runs' own noise of the smallest, saying
so; --model or --terms "1, a, b, a*b, a^2" forces one. Only converged or
steady variants are used; the others are listed.

It prints the model, its leave-one-out error beside the runs' own
uncertainty (a surface whose error is far above the noise is flagged), the
optimum within the bounds (and the recipe's constraints) with its 95 %
interval, compared with the best measured run, the parameters' Sobol'
sensitivity indices, and for one parameter the fitted curve.

fit --table FILE.csv --response COLUMN fits a table instead: one row per
run, one column per parameter plus the response; columns of words are left
out unless named with --params (which refuses them: a surface needs
numbers). The program's own results/summary.csv is read as it is: its
parameters, the response by its quantity's name (drag for drag_mean) and
each run's standard error.`,
		Args: maxOneDir,
		RunE: func(cmd *cobra.Command, args []string) error {
			return runFit(cmd, opts, args)
		},
	}
	f := cmd.Flags()
	f.StringVar(&opts.model, "model", "auto", "the surface: auto (chosen by leave-one-out error), or "+strings.Join(fit.Models, ", "))
	f.StringVar(&opts.quantity, "quantity", "", "the quantity to fit (default: the recipe's objective)")
	f.StringVar(&opts.terms, "terms", "", `polynomial terms, e.g. "1, x, x^2, x^3" (overrides --model)`)
	f.StringVar(&opts.table, "table", "", "fit this CSV table instead of a study")
	f.StringVar(&opts.response, "response", "", "with --table: the response column (for the program's results/summary.csv, a quantity's name)")
	f.StringVar(&opts.params, "params", "", "with --table: the parameter columns, separated by commas (default: every numeric column besides the response)")
	f.BoolVar(&opts.maximize, "higher-better", false, "with --table: higher responses are better, so the optimum is a maximum (a study uses its quantity's better = ...)")
	f.Uint64Var(&opts.seed, "seed", 1, "seed of the optimiser's starts and the sensitivity samples")
	f.BoolVar(&opts.json, "json", false, "print the fit as JSON")
	f.BoolVar(&opts.csv, "csv", false, "print the terms (polynomial) or the sensitivities as CSV")
	return cmd
}

func runFit(cmd *cobra.Command, opts fitOptions, args []string) error {
	var rep *fit.Report
	out := cmd.OutOrStdout()
	if opts.table != "" {
		if len(args) > 0 {
			return usageError{errors.New("give either a study directory or --table, not both")}
		}
		if opts.response == "" {
			return usageError{errors.New("--table needs --response COLUMN, the column to fit")}
		}
		var params []string
		if opts.params != "" {
			params = strings.Split(opts.params, ",")
		}
		var err error
		rep, err = study.FitTable(opts.table, study.TableOptions{Response: opts.response, Params: params, Model: opts.model, Terms: opts.terms, Maximize: opts.maximize, Seed: opts.seed})
		if err != nil {
			return err
		}
	} else {
		s, err := openStudy(cmd, studyDir(args))
		if err != nil {
			return err
		}
		defer s.Close()
		f, err := s.Fit(cmd.Context(), study.FitOptions{Quantity: opts.quantity, Model: opts.model, Terms: opts.terms, Seed: opts.seed, Progress: harvestProgress()})
		if err != nil {
			return err
		}
		if f.Front != nil {
			switch {
			case opts.json:
				return ui.JSON(out, f.Front)
			case opts.csv:
				return ui.CSV(out, frontTable(f.Front, true))
			}
			printFront(out, f.Front, *f.Trade)
			return nil
		}
		rep = f.Report
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
	scale := ""
	if len(rep.LogParams) > 0 {
		scale = " (in log10 of " + strings.Join(rep.LogParams, ", ") + ")"
	}
	fmt.Fprintf(w, "%s surface of %s over %s%s, %d runs\n", rep.Model, rep.Response, strings.Join(rep.Params, ", "), scale, rep.Runs)
	fmt.Fprintf(w, "model %s\n\n", rep.Choice)
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
	if len(rep.Curve) > 0 {
		fmt.Fprintf(w, "\n%s against %s (95%% interval of the fitted mean; * marks a run):\n", rep.Response, rep.Params[0])
		rows := [][]string{{rep.Params[0], rep.Response, ""}}
		for i, c := range rep.Curve {
			if i%5 != 0 {
				continue
			}
			rows = append(rows, []string{ui.Number(c.X), ui.PlusMinus(c.Mean, c.HalfWidth), ""})
		}
		for i, x := range rep.Data.X {
			se := math.NaN()
			if rep.Data.SE != nil {
				se = 1.959964 * rep.Data.SE[i]
			}
			rows = append(rows, []string{ui.Number(x[0]), ui.PlusMinus(rep.Data.Y[i], se), "* run"})
		}
		sort.SliceStable(rows[1:], func(a, b int) bool {
			xa, _ := strconv.ParseFloat(rows[1+a][0], 64)
			xb, _ := strconv.ParseFloat(rows[1+b][0], 64)
			return xa < xb
		})
		ui.Table(w, rows)
	}
	if o := rep.Optimum; o != nil {
		what := "the surface's optimum; 95% interval of the predicted mean"
		if o.Source != "surface" {
			what = o.Source + ", measured; 95% interval of its average"
		}
		fmt.Fprintf(w, "\noptimum: %s = %s (%s)\n", rep.Response, ui.PlusMinus(o.Value, o.HalfWidth), what)
		for _, n := range rep.Params {
			fmt.Fprintf(w, "  %s = %.5g\n", n, o.Params[n])
		}
		if b := rep.Best; b != nil && o.Source == "surface" {
			label := ""
			if b.Label != "" {
				label = " (" + b.Label + ")"
			}
			var at []string
			for _, n := range rep.Params {
				at = append(at, fmt.Sprintf("%s = %.5g", n, b.Params[n]))
			}
			fmt.Fprintf(w, "  best measured run%s: %s at %s\n", label, ui.PlusMinus(b.Value, b.HalfWidth), strings.Join(at, ", "))
		}
		for _, l := range o.Limits {
			fmt.Fprintf(w, "  %s = %s (%s; chance within %.0f%%)\n", l.Quantity, ui.PlusMinus(l.Mean, l.HalfWidth), l.Limit, 100*l.Chance)
			if o.Source == "surface" && l.Chance < 0.95 {
				fmt.Fprintf(w, "  note: %s is predicted close to its limit (%s): the optimum sits on the limit, so a run there keeps it only about %.0f%% of the time; confirm it with a run, or tighten the limit by the interval for a safe margin\n", l.Quantity, l.Limit, 100*l.Chance)
			}
		}
		for _, warn := range o.Warnings {
			fmt.Fprintln(w, "  note:", warn)
		}
	}
	for _, n := range rep.Notes {
		fmt.Fprintln(w, "note:", n)
	}
	for _, lf := range rep.LimitFits {
		fmt.Fprintf(w, "limited quantity %s: %s surface, leave-one-out error %.3g against the runs' own uncertainty %.3g\n", lf.Response, lf.Model, lf.LOORMSE, lf.Noise)
		if lf.Flag != "" {
			fmt.Fprintln(w, "  WARNING:", lf.Flag)
		}
	}
	if len(rep.Sensitivities) > 0 {
		fmt.Fprintln(w, "\nsensitivities (Sobol' indices on the surface, over the parameter bounds; ± one standard error):")
		rows := [][]string{{"parameter", "main effect", "total effect", ""}}
		for _, s := range rep.Sensitivities {
			rows = append(rows, []string{s.Param, fmt.Sprintf("%.3f ± %.3f", s.First, s.FirstSE), fmt.Sprintf("%.3f ± %.3f", s.Total, s.TotalSE), s.Note})
		}
		ui.Table(w, rows)
	}
	for _, l := range rep.LeftOut {
		fmt.Fprintf(w, "left out: %s: %s\n", l.Label, l.Reason)
	}
	fmt.Fprintln(w, ui.Caution)
}

// frontTable lays out a predicted front, one row per point; csv gives the
// numbers in columns of their own.
func frontTable(f *fit.Front, csv bool) [][]string {
	head := slices.Clone(f.Params)
	if len(f.Points) > 0 {
		for _, v := range f.Points[0].Values {
			if csv {
				head = append(head, v.Quantity+"_mean", v.Quantity+"_half_width")
			} else {
				head = append(head, v.Quantity+" (95% CI)")
			}
		}
	}
	if len(f.Limits) > 0 {
		head = append(head, "within limits")
	}
	rows := [][]string{head}
	for _, p := range f.Points {
		var line []string
		for _, n := range f.Params {
			if csv {
				line = append(line, ui.CSVNumber(p.Params[n]))
			} else {
				line = append(line, fmt.Sprintf("%.4g", p.Params[n]))
			}
		}
		for _, v := range p.Values {
			if csv {
				line = append(line, ui.CSVNumber(v.Mean), ui.CSVNumber(v.HalfWidth))
			} else {
				line = append(line, ui.PlusMinus(v.Mean, v.HalfWidth))
			}
		}
		if len(f.Limits) > 0 {
			if csv {
				line = append(line, ui.CSVNumber(p.Chance))
			} else {
				line = append(line, fmt.Sprintf("%.0f%%", 100*p.Chance))
			}
		}
		rows = append(rows, line)
	}
	return rows
}

func printFront(w io.Writer, f *fit.Front, tr results.Trade) {
	var what []string
	for i, o := range f.Objectives {
		what = append(what, fmt.Sprintf("%s (%s is better)", o, f.Better[i]))
	}
	fmt.Fprintf(w, "trade-off of %s over %s", strings.Join(what, " and "), strings.Join(f.Params, ", "))
	if len(f.Limits) > 0 {
		fmt.Fprintf(w, " within %s", strings.Join(f.Limits, ", "))
	}
	fmt.Fprintln(w)
	fmt.Fprintln(w, "\nsurfaces:")
	rows := [][]string{{"quantity", "model", "runs", "leave-one-out error", "runs' own uncertainty", ""}}
	for _, s := range f.Surfaces {
		flag := ""
		if s.Flag != "" {
			flag = "misses structure: see `sweep fit --quantity " + s.Response + "`"
		}
		rows = append(rows, []string{s.Response, s.Model, fmt.Sprint(s.Runs), fmt.Sprintf("%.3g", s.LOORMSE), fmt.Sprintf("%.3g", s.Noise), flag})
	}
	ui.Table(w, rows)
	fmt.Fprintf(w, "\npredicted front: %d points spread along it (%d distinct front points of %d screened; differences within a run's 95%% half-width are ties); 95%% intervals of the predicted means:\n", len(f.Points), f.Size, f.Screened)
	ui.Table(w, frontTable(f, false))
	fmt.Fprintln(w, "\nthe predicted front is a model's: run variants at the points you would choose, and compare with the measured front")
	if front := tr.FrontLabels(); len(front) > 0 {
		fmt.Fprintf(w, "measured front (see `sweep rank --quantity %s`): %s\n", strings.Join(f.Objectives, ","), strings.Join(front, ", "))
	}
	for _, s := range f.Surfaces {
		for _, l := range s.LeftOut {
			fmt.Fprintf(w, "left out of %s: %s: %s\n", s.Response, l.Label, l.Reason)
		}
	}
	fmt.Fprintln(w, ui.Caution)
}
