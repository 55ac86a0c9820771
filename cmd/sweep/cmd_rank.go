package main

import (
	"fmt"
	"io"
	"slices"
	"strings"

	"github.com/spf13/cobra"

	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/results"
	"github.com/sweep-cfd/sweep/internal/study"
	"github.com/sweep-cfd/sweep/internal/ui"
)

type rankOptions struct {
	by       string
	seed     uint64
	baseline string
	mesh     string
	json     bool
	csv      bool
}

func newRankCmd() *cobra.Command {
	var opts rankOptions
	cmd := &cobra.Command{
		Use:   "rank [DIR]",
		Short: "Order the variants by an averaged quantity, or find the trade-off of several",
		Long: `rank harvests the study (see harvest) and orders its variants by the mean
of a quantity (--quantity; default the recipe's objective: the first
quantity that says which values are better, else the first), best first:
lowest first unless the quantity says better = "higher". Variants that
share a group letter are not distinguishable at 95 % (Welch's test on the
two means with their effective degrees of freedom). With --baseline LABEL
every variant also shows its difference from that variant, with its
interval, and the change in percent.

Quantities the recipe limits (at_most, at_least) are checked on every
variant: those whose means keep the limits rank first, those that break
one after them, each with its chance of keeping them.

With several quantities (--quantity drag,downforce) rank shows their
trade-off: the front of the variants no other beats in every quantity
(within the limits), each variant's chance of being on it given its
averages' uncertainty, and which front variants cannot be told apart.`,
		Args: maxOneDir,
		RunE: func(cmd *cobra.Command, args []string) error {
			return runRank(cmd, opts, studyDir(args))
		},
	}
	f := cmd.Flags()
	f.StringVar(&opts.by, "quantity", "", "the quantity to rank by, or several separated by commas for their trade-off (default: the recipe's objective)")
	f.StringVar(&opts.by, "by", "", "the same as --quantity")
	_ = f.MarkHidden("by")
	f.StringVar(&opts.baseline, "baseline", "", "compare every variant with this one (a label such as v001, or its id)")
	f.StringVar(&opts.mesh, "mesh-study", "", "a grid-convergence study of the same setup: also say whether differences exceed the discretisation uncertainty")
	f.Uint64Var(&opts.seed, "seed", 1, "with several quantities: seed of the draws behind the chances")
	f.BoolVar(&opts.json, "json", false, "print the ranking as JSON (a list, best first; an object for a trade-off)")
	f.BoolVar(&opts.csv, "csv", false, "print the ranking as CSV")
	return cmd
}

func runRank(cmd *cobra.Command, opts rankOptions, dir string) error {
	s, err := openStudy(cmd, dir)
	if err != nil {
		return err
	}
	defer s.Close()
	rk, err := s.Rank(cmd.Context(), study.RankOptions{Quantity: opts.by, Baseline: opts.baseline, MeshStudy: opts.mesh, Seed: opts.seed, Progress: harvestProgress()})
	if err != nil {
		return err
	}
	r, out := s.Recipe, cmd.OutOrStdout()
	if tr := rk.Trade; tr != nil {
		switch {
		case opts.json:
			if tr.Rows == nil {
				tr.Rows = []results.TradeRow{}
			}
			return ui.JSON(out, tr)
		case opts.csv:
			return ui.CSV(out, tradeTable(r, *tr, true))
		}
		printTrade(out, r, *tr)
		return nil
	}
	q := r.Quantity(rk.Quantity)
	switch {
	case opts.json:
		if rk.Ranking.Rows == nil {
			rk.Ranking.Rows = []results.Row{}
		}
		return ui.JSON(out, rk.Ranking.Rows)
	case opts.csv:
		return ui.CSV(out, rankTable(r, q, *rk.Ranking, rk.Ranking.Baseline != ""))
	}
	printRank(out, r, q, *rk.Ranking, rk.Ranking.Baseline)
	return nil
}

// tradeTable lays out a trade-off, one row per variant; csv gives the
// numbers in columns of their own.
func tradeTable(r *recipe.Recipe, tr results.Trade, csv bool) [][]string {
	head := []string{"variant"}
	for _, p := range r.Params {
		head = append(head, p.Name)
	}
	var cols []string
	for _, o := range tr.Objectives {
		cols = append(cols, o.Quantity)
	}
	for _, l := range results.LimitsOf(r) {
		if !slices.Contains(cols, l.Quantity) {
			cols = append(cols, l.Quantity)
		}
	}
	for _, c := range cols {
		unit := ""
		if q := r.Quantity(c); q != nil && q.Unit != "" {
			unit = " [" + q.Unit + "]"
		}
		if csv {
			head = append(head, c+"_mean", c+"_half_width")
		} else {
			head = append(head, c+unit+" (95% CI)")
		}
	}
	if csv {
		head = append(head, "layer", "p_front", "p_feasible", "status", "dominated_by", "alike")
	} else {
		head = append(head, "on front", "status")
		if len(tr.Limits) > 0 {
			head = append(head, "within limits")
		}
	}
	rows := [][]string{head}
	for _, row := range tr.Rows {
		line := []string{row.Label}
		for _, p := range r.Params {
			line = append(line, fmt.Sprint(row.Params[p.Name]))
		}
		for _, c := range cols {
			v := row.Values[c]
			if csv {
				line = append(line, ui.CSVNumber(v.Mean), ui.CSVNumber(v.HalfWidth))
			} else {
				line = append(line, ui.PlusMinus(v.Mean, v.HalfWidth))
			}
		}
		if csv {
			line = append(line, fmt.Sprint(row.Layer), ui.CSVNumber(row.ChanceFront), ui.CSVNumber(row.ChanceFeasible), row.Status,
				strings.Join(row.DominatedBy, " "), strings.Join(row.Alike, " "))
		} else {
			line = append(line, fmt.Sprintf("%.0f%%", 100*row.ChanceFront), results.StatusText(row))
			if len(tr.Limits) > 0 {
				line = append(line, fmt.Sprintf("%.0f%%", 100*row.ChanceFeasible))
			}
		}
		rows = append(rows, line)
	}
	return rows
}

func printTrade(w io.Writer, r *recipe.Recipe, tr results.Trade) {
	var what []string
	for _, o := range tr.Objectives {
		what = append(what, fmt.Sprintf("%s (%s is better)", o.Quantity, o.Better))
	}
	fmt.Fprintf(w, "trade-off of %s", strings.Join(what, " and "))
	if len(tr.Limits) > 0 {
		fmt.Fprintf(w, " within %s", strings.Join(tr.Limits, ", "))
	}
	fmt.Fprint(w, "; the front of means first\n\n")
	ui.Table(w, tradeTable(r, tr, false))
	fmt.Fprintf(w, "\n\"on front\" is the chance that the variant is on the front given every average's uncertainty (%d draws, each average normal with its standard error, independent of the others); on the front or off it at 95 %%, else undecided.\n", tr.Draws)
	var front []string
	for _, row := range tr.Rows {
		if row.Layer != 1 {
			continue
		}
		front = append(front, row.Label)
		if len(row.Alike) > 0 {
			fmt.Fprintf(w, "%s cannot be told apart from %s: every difference is within its 95 %% interval\n", row.Label, strings.Join(row.Alike, ", "))
		}
	}
	if len(front) > 0 {
		fmt.Fprintf(w, "front of the means: %s\n", strings.Join(front, ", "))
	} else {
		fmt.Fprintln(w, "no variant's means keep the limits: there is no front")
	}
	for _, ex := range tr.Excluded {
		fmt.Fprintf(w, "left out: %s: %s\n", ex.Label, ex.Reason)
	}
	fmt.Fprintln(w, ui.Caution)
}

func rankTable(r *recipe.Recipe, q *recipe.Quantity, rk results.Ranking, withBase bool) [][]string {
	head := []string{"rank", "variant", "group"}
	for _, p := range r.Params {
		head = append(head, p.Name)
	}
	unit := ""
	if q.Unit != "" {
		unit = " [" + q.Unit + "]"
	}
	head = append(head, q.Name+unit+" (95% CI)", "verdict")
	if withBase {
		head = append(head, "vs baseline (95% CI)", "change", "distinct")
	}
	withMesh := len(rk.Rows) > 0 && rk.Rows[0].MeshHalfWidth != nil
	if withMesh {
		head = append(head, "mesh ±", "beyond mesh")
	}
	withLimits := len(rk.Limits) > 0
	if withLimits {
		head = append(head, "within limits")
	}
	rows := [][]string{head}
	for _, row := range rk.Rows {
		line := []string{fmt.Sprint(row.Rank), row.Label, row.Group}
		for _, p := range r.Params {
			line = append(line, fmt.Sprint(row.Params[p.Name]))
		}
		line = append(line, ui.PlusMinus(row.Mean, row.HalfWidth), row.Verdict)
		if withBase && row.Delta != nil {
			distinct := "no"
			if *row.Significant {
				distinct = "yes"
			}
			line = append(line, ui.PlusMinus(*row.Delta, *row.DeltaHalfWidth), fmt.Sprintf("%+.1f%%", *row.ChangePercent), distinct)
		}
		if withMesh {
			beyond := "(best)"
			if row.BeyondMesh != nil {
				beyond = map[bool]string{true: "yes", false: "no"}[*row.BeyondMesh]
			}
			line = append(line, fmt.Sprintf("%.2g", *row.MeshHalfWidth), beyond)
		}
		if withLimits && row.WithinLimits != nil {
			word := "yes"
			if !*row.WithinLimits {
				word = "no"
			}
			line = append(line, fmt.Sprintf("%s (%.0f%%)", word, 100**row.Feasible))
		}
		rows = append(rows, line)
	}
	return rows
}

func printRank(w io.Writer, r *recipe.Recipe, q *recipe.Quantity, rk results.Ranking, baseline string) {
	fmt.Fprintf(w, "ranked by %s (%s is better), best first", q.Name, rk.Better)
	if len(rk.Limits) > 0 {
		fmt.Fprintf(w, "; the variants within %s first", strings.Join(rk.Limits, ", "))
	}
	fmt.Fprint(w, "\n\n")
	ui.Table(w, rankTable(r, q, rk, baseline != ""))
	if len(rk.Rows) > 1 {
		fmt.Fprintln(w, "\nvariants sharing a group letter are not distinguishable at 95 % (Welch's test)")
	}
	if len(rk.Limits) > 0 {
		fmt.Fprintln(w, "\"within limits\": whether the means keep the limits, with the chance that the true values do (each average normal with its standard error)")
		for _, row := range rk.Rows {
			if row.LimitNote != "" {
				fmt.Fprintf(w, "%s %s\n", row.Label, row.LimitNote)
			}
		}
	}
	for _, ex := range rk.Excluded {
		fmt.Fprintf(w, "left out: %s: %s\n", ex.Label, ex.Reason)
	}
	fmt.Fprintln(w, ui.Caution)
}
