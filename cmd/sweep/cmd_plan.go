package main

import (
	"fmt"
	"io"
	"os"
	"path/filepath"
	"runtime"
	"strings"

	"github.com/spf13/cobra"

	"github.com/sweep-cfd/sweep/internal/plan"
	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/results"
	"github.com/sweep-cfd/sweep/internal/study"
	"github.com/sweep-cfd/sweep/internal/ui"
)

type planOptions struct {
	dryRun    bool
	json      bool
	csv       bool
	add       int
	criterion string
	quantity  string
	seed      uint64
}

func newPlanCmd() *cobra.Command {
	var opts planOptions
	cmd := &cobra.Command{
		Use:   "plan [DIR]",
		Short: "Check the recipe, make the variants and render their cases",
		Long: `plan checks DIR/study.toml, generates the design's points, gives each new
point a variant (a UUID and a short label such as v007), renders its case
into DIR/variants/<label>/ and queues its stages. Planning again after
editing the design adds the new points and keeps every planned variant and
its results.`,
		Args: maxOneDir,
		RunE: func(cmd *cobra.Command, args []string) error {
			return runPlan(cmd, opts, studyDir(args))
		},
	}
	cmd.Flags().BoolVar(&opts.dryRun, "dry-run", false, "print the variants without writing anything")
	cmd.Flags().IntVar(&opts.add, "add", 0, "propose this many new variants where they help most (from a kriging surface of the harvested results) and add them")
	cmd.Flags().StringVar(&opts.criterion, "criterion", "ei", "with --add: ei (expected improvement of the objective, times the chance of keeping the recipe's limits; of the hypervolume for several quantities) or variance (where the surface is least certain)")
	cmd.Flags().StringVar(&opts.quantity, "quantity", "", "with --add: the quantity, or several separated by commas for their trade-off (default: the objective)")
	cmd.Flags().Uint64Var(&opts.seed, "seed", 1, "with --add: seed of the search for new points")
	cmd.Flags().BoolVar(&opts.json, "json", false, "print the result as JSON")
	cmd.Flags().BoolVar(&opts.csv, "csv", false, "print the variants as CSV")
	return cmd
}

func runPlan(cmd *cobra.Command, opts planOptions, dir string) error {
	res, err := study.Plan(cmd.Context(), dir, study.PlanOptions{DryRun: opts.dryRun, Add: opts.add, Criterion: opts.criterion, Quantity: opts.quantity,
		Seed: opts.seed, Progress: ui.NewCounter(os.Stderr, "rendering"), HarvestProgress: harvestProgress()})
	if err != nil {
		return err
	}
	if res.Note != "" {
		fmt.Fprintln(cmd.ErrOrStderr(), "note:", res.Note)
	}
	if res.BackupErr != nil {
		fmt.Fprintf(cmd.ErrOrStderr(), "warning: %v; the plan is recorded, but `sweep recover` has no fresh copy to start from\n", res.BackupErr)
	}
	r, out := res.Recipe, cmd.OutOrStdout()
	if opts.json {
		return ui.JSON(out, planJSON(r, res.Result, opts.dryRun))
	}
	if opts.csv {
		return ui.CSV(out, planTable(r, res.Result, opts.dryRun))
	}
	printPlan(out, r, res.Result, opts.dryRun)
	return nil
}

type planRowJSON struct {
	ID     string         `json:"id"`
	Label  string         `json:"label"`
	Name   string         `json:"name,omitempty"`
	Params map[string]any `json:"params"`
	New    bool           `json:"new"`
}

func planJSON(r *recipe.Recipe, res *plan.Result, dry bool) any {
	rows := make([]planRowJSON, len(res.Rows))
	for i, row := range res.Rows {
		rows[i] = planRowJSON{ID: row.ID, Label: row.Label, Name: row.Name, Params: plan.Data(r, row.Values), New: row.New}
	}
	return map[string]any{"dry_run": dry, "design": res.Design, "added": res.Added, "kept": res.Kept, "duplicates": res.Duplicates,
		"retired": res.Retired, "variants": rows}
}

func printPlan(w io.Writer, r *recipe.Recipe, res *plan.Result, dry bool) {
	ui.Table(w, planTable(r, res, dry))
	printPlanSummary(w, r, res, dry)
}

func planTable(r *recipe.Recipe, res *plan.Result, dry bool) [][]string {
	header := []string{"variant", "name"}
	for _, p := range r.Params {
		h := p.Name
		if p.Unit != "" {
			h += " [" + p.Unit + "]"
		}
		header = append(header, h)
	}
	header = append(header, "")
	rows := [][]string{header}
	for _, row := range res.Rows {
		label := row.Label
		if dry && row.New {
			label = "(new)"
		}
		line := []string{label, dash(row.Name)}
		for _, v := range row.Values {
			line = append(line, v.String())
		}
		if row.New {
			line = append(line, "new")
		} else {
			line = append(line, "kept")
		}
		rows = append(rows, line)
	}
	return rows
}

func printPlanSummary(w io.Writer, r *recipe.Recipe, res *plan.Result, dry bool) {
	verb := "planned"
	if dry {
		verb = "would plan (dry run, nothing written)"
	}
	fmt.Fprintf(w, "\ndesign: %s\n", res.Design)
	fmt.Fprintf(w, "%s %d new variants; %d already planned kept", verb, res.Added, res.Kept)
	if res.Duplicates > 0 {
		fmt.Fprintf(w, "; %d duplicate design points planned once", res.Duplicates)
	}
	if res.Retired > 0 {
		fmt.Fprintf(w, "; %d earlier variants are no longer in the design (kept, with their results)", res.Retired)
	}
	if res.NewJobs > 0 {
		fmt.Fprintf(w, "; %d new stage jobs for existing variants", res.NewJobs)
	}
	fmt.Fprintln(w)
	if res.Cloned > 0 {
		fmt.Fprintf(w, "large files: %d copy-on-write clones of the base case's (each variant may change its own)\n", res.Cloned)
	}
	if res.Linked > 0 {
		fmt.Fprintf(w, "large files: %d hard links to the base case's, which are now read-only so an edit in place fails instead of changing every variant; list a file in [case] private to give each variant its own copy\n", res.Linked)
	}
	if r.Backend.Kind == "local" {
		for _, st := range r.Stages {
			if st.Cores > runtime.NumCPU() {
				fmt.Fprintf(w, "warning: %s:%d: stage %q asks for %d cores and this machine has %d: `sweep run` here can start it only with --cores %d (more jobs than cores); run it on a cluster ([backend] kind = \"slurm\") or lower its cores\n",
					filepath.Base(r.File), st.Line, st.Name, st.Cores, runtime.NumCPU(), st.Cores)
			}
		}
	}
	if q, err := r.Objective(""); err == nil {
		line := fmt.Sprintf("objective: %s", q.Name)
		if q.Directed() {
			line += fmt.Sprintf(" (%s is better)", q.BetterWord())
		} else {
			line += " (no better = ...; ranked lowest first)"
		}
		var also []string
		names := []string{q.Name}
		for _, o := range r.Quantities {
			if o.Name != q.Name && o.Directed() {
				also = append(also, fmt.Sprintf("%s (%s is better)", o.Name, o.BetterWord()))
				names = append(names, o.Name)
			}
		}
		if also != nil {
			line += "; also directed: " + strings.Join(also, ", ") + "; rank, fit and plan --add use the objective unless given --quantity (--quantity " + strings.Join(names, ",") + " for their trade-off)"
		}
		fmt.Fprintln(w, line)
		var limits []string
		for _, l := range results.LimitsOf(r) {
			limits = append(limits, l.Text)
		}
		if limits != nil {
			fmt.Fprintf(w, "limits: %s; rank, fit and plan --add keep them\n", strings.Join(limits, ", "))
		}
	}
	if !dry && res.Added+res.NewJobs > 0 {
		fmt.Fprintf(w, "next: sweep run %s\n", r.Dir)
	}
}

func dash(s string) string {
	if s == "" {
		return "-"
	}
	return s
}
