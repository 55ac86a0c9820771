package main

import (
	"fmt"
	"io"
	"strings"

	"github.com/spf13/cobra"

	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/results"
	"github.com/sweep-cfd/sweep/internal/study"
	"github.com/sweep-cfd/sweep/internal/ui"
)

type gciOptions struct {
	quantity string
	json     bool
	csv      bool
}

func newGCICmd() *cobra.Command {
	var opts gciOptions
	cmd := &cobra.Command{
		Use:   "gci [DIR]",
		Short: "Estimate the discretisation uncertainty from three or more mesh levels",
		Long: `gci harvests the study and, for the parameter marked as the mesh level
(mesh = "resolution", "spacing", "cells2d" or "cells3d" in its [[param]]),
applies the procedure of Celik et al. (2008, J. Fluids Eng. 130, 078001):
the apparent order of convergence (iterated for unequal refinement
ratios), the Richardson-extrapolated value, the approximate and
extrapolated relative errors, and Roache's grid convergence index on the
finest grid (safety factor 1.25). Oscillatory or divergent convergence is
flagged. Each setup of the other parameters is analysed on its own.`,
		Args: maxOneDir,
		RunE: func(cmd *cobra.Command, args []string) error {
			groups, r, q, err := meshStudy(cmd, studyDir(args), opts.quantity)
			if err != nil {
				return err
			}
			if opts.json {
				return ui.JSON(cmd.OutOrStdout(), groups)
			}
			if opts.csv {
				return ui.CSV(cmd.OutOrStdout(), gciTable(groups))
			}
			printGCI(cmd.OutOrStdout(), r, q, groups)
			return nil
		},
	}
	cmd.Flags().StringVar(&opts.quantity, "quantity", "", "the quantity (default: the objective)")
	cmd.Flags().BoolVar(&opts.json, "json", false, "print the analysis as JSON")
	cmd.Flags().BoolVar(&opts.csv, "csv", false, "print one row per setup as CSV")
	return cmd
}

func meshStudy(cmd *cobra.Command, dir, quantity string) ([]results.MeshGroup, *recipe.Recipe, *recipe.Quantity, error) {
	s, err := openStudy(cmd, dir)
	if err != nil {
		return nil, nil, nil, err
	}
	defer s.Close()
	qs, err := s.Objectives(quantity, false)
	if err != nil {
		return nil, nil, nil, err
	}
	groups, err := s.Mesh(cmd.Context(), study.MeshOptions{Quantity: quantity, Progress: harvestProgress()})
	return groups, s.Recipe, qs[0], err
}

func printGCI(w io.Writer, r *recipe.Recipe, q *recipe.Quantity, groups []results.MeshGroup) {
	for _, g := range groups {
		var setup []string
		for k, v := range g.Setup {
			setup = append(setup, fmt.Sprintf("%s=%v", k, v))
		}
		title := "grid convergence of " + q.Name
		if len(setup) > 0 {
			title += " at " + strings.Join(setup, " ")
		}
		fmt.Fprintln(w, title)
		rows := [][]string{{"grid", "variant", "cell size h", q.Name + " (95% CI)"}}
		for i, l := range g.Labels {
			h := "-"
			if i < 3 && g.Error == "" {
				h = fmt.Sprintf("%.4g", g.Result.Grids[i].H)
			}
			rows = append(rows, []string{fmt.Sprint(i + 1), l, h, ui.PlusMinus(g.Means[i], g.HalfWidths[i])})
		}
		ui.Table(w, rows)
		if g.Error != "" {
			fmt.Fprintln(w, "  cannot estimate:", g.Error)
			continue
		}
		res := g.Result
		fmt.Fprintf(w, "  refinement ratios r21 %.4g, r32 %.4g; convergence %s (R = %.3g)\n", res.R21, res.R32, res.Convergence, res.Ratio)
		fmt.Fprintf(w, "  apparent order p %.3f; extrapolated value %.6g\n", res.Order, res.Extrap)
		fmt.Fprintf(w, "  e_a21 %.3g %%, e_ext21 %.3g %%, GCI_fine %.3g %% (%s ± %.3g)\n", 100*res.RelErr, 100*res.ExtrapErr, 100*res.GCIFine, fmt.Sprintf("%.6g", g.Means[0]), res.GCIFine*abs(g.Means[0]))
		for _, warn := range append(res.Warnings, g.Notes...) {
			fmt.Fprintln(w, "  note:", warn)
		}
		fmt.Fprintln(w)
	}
	fmt.Fprintln(w, ui.Caution)
}

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}

// gciTable is one row per setup: its grids' values and the estimate.
func gciTable(groups []results.MeshGroup) [][]string {
	rows := [][]string{{"setup", "phi1", "phi2", "phi3", "r21", "r32", "order", "extrapolated", "e_a21", "e_ext21", "gci_fine21", "convergence", "error"}}
	for _, g := range groups {
		var setup []string
		for k, v := range g.Setup {
			setup = append(setup, fmt.Sprintf("%s=%v", k, v))
		}
		row := []string{strings.Join(setup, " ")}
		for i := range 3 {
			if i < len(g.Means) {
				row = append(row, fmt.Sprintf("%.10g", g.Means[i]))
			} else {
				row = append(row, "")
			}
		}
		res := g.Result
		if g.Error != "" {
			row = append(row, "", "", "", "", "", "", "", "", g.Error)
		} else {
			row = append(row, fmt.Sprintf("%.6g", res.R21), fmt.Sprintf("%.6g", res.R32), fmt.Sprintf("%.6g", res.Order), fmt.Sprintf("%.10g", res.Extrap),
				fmt.Sprintf("%.6g", res.RelErr), fmt.Sprintf("%.6g", res.ExtrapErr), fmt.Sprintf("%.6g", res.GCIFine), res.Convergence, "")
		}
		rows = append(rows, row)
	}
	return rows
}
