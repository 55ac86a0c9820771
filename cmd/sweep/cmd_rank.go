package main

import (
	"fmt"
	"io"

	"github.com/spf13/cobra"

	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/results"
	"github.com/sweep-cfd/sweep/internal/ui"
)

type rankOptions struct {
	by       string
	baseline string
	mesh     string
	json     bool
	csv      bool
}

func newRankCmd() *cobra.Command {
	var opts rankOptions
	cmd := &cobra.Command{
		Use:   "rank [DIR]",
		Short: "Order the variants by an averaged quantity, with significance groups",
		Long: `rank harvests the study (see harvest) and orders its variants by the mean
of a quantity (--by; default the recipe's objective: the first quantity
that says which values are better, else the first), best first: lowest
first unless the quantity says better = "higher". Variants that share a group letter are not
distinguishable at 95 % (Welch's test on the two means with their
effective degrees of freedom). With --baseline LABEL every variant also
shows its difference from that variant, with its interval, and the change
in percent.`,
		Args: maxOneDir,
		RunE: func(cmd *cobra.Command, args []string) error {
			return runRank(cmd, opts, studyDir(args))
		},
	}
	cmd.Flags().StringVar(&opts.by, "by", "", "the quantity to rank by (default: the recipe's objective)")
	cmd.Flags().StringVar(&opts.baseline, "baseline", "", "compare every variant with this one (a label such as v001, or its id)")
	cmd.Flags().StringVar(&opts.mesh, "mesh-study", "", "a grid-convergence study of the same setup: also say whether differences exceed the discretisation uncertainty")
	cmd.Flags().BoolVar(&opts.json, "json", false, "print the ranking as JSON (a list, best first)")
	cmd.Flags().BoolVar(&opts.csv, "csv", false, "print the ranking as CSV")
	return cmd
}

func runRank(cmd *cobra.Command, opts rankOptions, dir string) error {
	h, err := harvestStudy(cmd, dir, opts.by)
	if err != nil {
		return err
	}
	defer h.st.Close()
	r, q, vs := h.r, h.q, h.vs
	if opts.baseline != "" {
		label, ok := variantLabel(vs, opts.baseline)
		if !ok {
			return usageError{fmt.Errorf("no variant %q in the study (give a label such as v001, or an id); see `sweep status %s`", opts.baseline, dir)}
		}
		opts.baseline = label
	}
	rk := results.Rank(vs, q.Name, q.LowerIsBetter(), opts.baseline)
	if opts.mesh != "" {
		g, err := meshGCI(cmd, opts.mesh, q.Name)
		if err != nil {
			return err
		}
		rk.ApplyMesh(g)
	}
	out := cmd.OutOrStdout()
	switch {
	case opts.json:
		if rk.Rows == nil {
			rk.Rows = []results.Row{}
		}
		return ui.JSON(out, rk.Rows)
	case opts.csv:
		return ui.CSV(out, rankTable(r, q, rk, opts.baseline != ""))
	}
	printRank(out, r, q, rk, opts.baseline)
	return nil
}

// variantLabel finds a variant by its label or its id.
func variantLabel(vs []results.Variant, ref string) (string, bool) {
	for _, v := range vs {
		if v.Label == ref || v.ID == ref {
			return v.Label, true
		}
	}
	return "", false
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
		rows = append(rows, line)
	}
	return rows
}

func printRank(w io.Writer, r *recipe.Recipe, q *recipe.Quantity, rk results.Ranking, baseline string) {
	fmt.Fprintf(w, "ranked by %s (%s is better), best first\n\n", q.Name, rk.Better)
	ui.Table(w, rankTable(r, q, rk, baseline != ""))
	if len(rk.Rows) > 1 {
		fmt.Fprintln(w, "\nvariants sharing a group letter are not distinguishable at 95 % (Welch's test)")
	}
	for _, ex := range rk.Excluded {
		fmt.Fprintf(w, "left out: %s: %s\n", ex.Label, ex.Reason)
	}
	fmt.Fprintln(w, ui.Caution)
}
