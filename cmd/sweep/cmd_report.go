package main

import (
	"bytes"
	"fmt"
	"path/filepath"
	"sort"
	"time"

	"github.com/spf13/cobra"

	"github.com/sweep-cfd/sweep/internal/fit"
	"github.com/sweep-cfd/sweep/internal/harvest"
	"github.com/sweep-cfd/sweep/internal/plan"
	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/report"
	"github.com/sweep-cfd/sweep/internal/results"
	"github.com/sweep-cfd/sweep/internal/runner"
	"github.com/sweep-cfd/sweep/internal/store"
	"github.com/sweep-cfd/sweep/internal/ui"
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
	h, err := harvestStudy(cmd, dir, opts.by, true)
	if err != nil {
		return err
	}
	defer h.st.Close()
	r, q, vs := h.r, h.q, h.vs
	rep, err := runner.Status(h.st, r.Name)
	if err != nil {
		return err
	}
	if opts.baseline != "" {
		label, ok := variantLabel(vs, opts.baseline)
		if !ok {
			return usageError{fmt.Errorf("no variant %q in the study; see `sweep status %s`", opts.baseline, dir)}
		}
		opts.baseline = label
	}
	s := buildReport(r, q, vs, rep, opts.baseline)
	trade := h.qs
	if len(trade) == 1 {
		// By default the report weighs every quantity that says which
		// values are better, when there are several.
		trade = nil
		for i := range r.Quantities {
			if r.Quantities[i].Direction != recipe.None {
				trade = append(trade, &r.Quantities[i])
			}
		}
	}
	if len(trade) > 1 {
		s.Tradeoff = reportTradeoff(r, trade, vs)
	}
	var buf bytes.Buffer
	if err := report.Render(&buf, s); err != nil {
		return err
	}
	out := opts.out
	if out == "" {
		out = filepath.Join(dir, results.Dir, "report.html")
	}
	if err := results.WriteAtomic(out, buf.Bytes()); err != nil {
		return fmt.Errorf("write the report: %w", err)
	}
	fmt.Fprintf(cmd.OutOrStdout(), "wrote %s (%d KB)\n", out, buf.Len()/1024)
	return nil
}

func buildReport(r *recipe.Recipe, q *recipe.Quantity, vs []results.Variant, st *runner.Report, baseline string) report.Study {
	s := report.Study{Name: r.Name, Description: r.Description, Generated: time.Now(), Objective: q.Name, Better: q.Direction.String(),
		Caution:  "These results need validation — mesh and time-step checks, comparison with trusted references and review by qualified people — before they steer a decision; local codes and licensed practice prevail.",
		Counts:   report.Counts{Done: st.Counts.Done, Failed: st.Counts.Failed, Pending: st.Counts.Pending, Running: st.Counts.Running},
		Baseline: baseline, ObjectiveUnit: q.Unit}
	if s.Better == "" {
		s.Better = recipe.Lower.String()
	}
	for _, p := range r.Params {
		rp := report.Param{Name: p.Name, Kind: p.Kind.String(), Unit: p.Unit}
		switch p.Kind {
		case recipe.Range:
			rp.Range = fmt.Sprintf("%g .. %g", p.Min, p.Max)
		case recipe.Levels:
			rp.Range = fmt.Sprint(p.Values)
		default:
			rp.Range = fmt.Sprint(p.Choices)
		}
		s.Params = append(s.Params, rp)
	}
	s.Design = fmt.Sprintf("%s, %d variants", r.Design.Scheme, len(vs))
	rk := results.Rank(vs, q.Name, q.LowerIsBetter(), baseline, results.LimitsOf(r)...)
	for _, row := range rk.Rows {
		s.Ranking = append(s.Ranking, report.RankRow{Rank: row.Rank, Label: row.Label, Name: row.Name, Params: strParams(row.Params),
			Mean: row.Mean, HalfWidth: row.HalfWidth, Verdict: row.Verdict, Group: row.Group,
			Delta: row.Delta, DeltaHalfWidth: row.DeltaHalfWidth, ChangePercent: row.ChangePercent})
	}
	jobs := map[string][]store.Job{}
	for _, v := range st.Variants {
		jobs[v.Label] = v.Jobs
	}
	for _, v := range vs {
		rv := report.Variant{Label: v.Label, Name: v.Name, State: string(v.State), Params: strParams(v.Params)}
		for _, j := range jobs[v.Label] {
			if !j.Ended.IsZero() && !j.Started.IsZero() {
				rv.Runtime += j.Ended.Sub(j.Started)
			}
			rv.Cores = max(rv.Cores, j.Cores)
			if j.State == store.Failed {
				rv.ExitStatus, rv.LogTail = j.Reason, j.Tail
			}
		}
		for _, qq := range r.Quantities {
			res, ok := v.Results[qq.Name]
			if !ok || qq.Derived() {
				continue // a statistic of a quantity's cycles has no history of its own
			}
			qs := report.QuantitySeries{Name: qq.Name, Unit: qq.Unit, TransientEnd: res.TransientEnd, Mean: res.Mean,
				HalfWidth: res.HalfWidth, Verdict: string(res.Verdict), Message: res.Message}
			if ser, err := harvest.ReadSeries(plan.Dir(r.Dir, v.Label), qq.Spec); err == nil {
				qs.Time, qs.Value = ser.Time, ser.Value
			}
			rv.Quantities = append(rv.Quantities, qs)
		}
		s.Variants = append(s.Variants, rv)
	}
	s.Surface, s.SurfaceNote = reportSurface(r, q, vs)
	if groups, err := results.MeshStudy(r, vs, q.Name); err == nil {
		for _, g := range groups {
			if g.Error != "" {
				continue
			}
			ms := report.MeshStudy{Title: "grid convergence of " + q.Name, Extrapolated: g.Result.Extrap, GCI: g.Result.GCIFine,
				Order: g.Result.Order, Convergence: g.Result.Convergence, Warnings: append(g.Result.Warnings, g.Notes...)}
			for i := range g.Means {
				if i < 3 {
					ms.H = append(ms.H, g.Result.Grids[i].H)
					ms.Value = append(ms.Value, g.Means[i])
					ms.HalfWidth = append(ms.HalfWidth, g.HalfWidths[i])
				}
			}
			s.Mesh = append(s.Mesh, ms)
		}
	}
	return s
}

// reportSurface fits the objective's surface as fit does (the model
// chosen by cross-validation, the optimum kept within the recipe's
// limits) and samples a contour map over the two most sensitive
// parameters, the others at the optimum, or the curve of a one-parameter
// study. Without a surface it says why.
func reportSurface(r *recipe.Recipe, q *recipe.Quantity, vs []results.Variant) (*report.Surface, string) {
	prob, err := fit.StudyProblem(r, vs, []*recipe.Quantity{q})
	if err != nil {
		return nil, err.Error()
	}
	in := prob.Objectives[0].In
	if n := len(in.Data.Y); n < 3 {
		return nil, fmt.Sprintf("%d variants have an average of %s with an interval, and a surface needs at least 3", n, q.Name)
	}
	d := in.Data
	fr, _, err := prob.FitConstrained(fit.Options{Feasible: fit.Feasible(r, in.Cols, vs), Seed: 1})
	if err != nil {
		return nil, "the surface could not be fitted: " + err.Error()
	}
	sf := &report.Surface{Model: fr.Model, Response: q.Name, LOORMSE: fr.LOORMSE, Noise: fr.Noise, Q2: fr.Q2, Flag: fr.Flag,
		Observed: fr.Observed, LOOPredicted: fr.LOO, Labels: in.Labels, Choice: fr.Choice, Notes: fr.Notes}
	for _, x := range fr.Sensitivities {
		sf.Sensitivities = append(sf.Sensitivities, report.Sensitivity{Param: x.Param, First: x.First, FirstSE: x.FirstSE, Total: x.Total, TotalSE: x.TotalSE})
	}
	if len(fr.Curve) > 0 {
		c := &report.Curve{Param: d.Names[0]}
		for _, p := range fr.Curve {
			c.X, c.Mean, c.HalfWidth = append(c.X, p.X), append(c.Mean, p.Mean), append(c.HalfWidth, p.HalfWidth)
		}
		for i, x := range d.X {
			c.RunX, c.RunY = append(c.RunX, x[0]), append(c.RunY, d.Y[i])
			c.RunHalfWide = append(c.RunHalfWide, 1.959964*d.SE[i])
		}
		sf.Curve = c
	}
	if fr.Optimum == nil {
		return sf, ""
	}
	o := fr.Optimum
	sf.Optimum, sf.OptimumValue, sf.OptimumHalfWidth, sf.OptimumSource = o.Params, o.Value, o.HalfWidth, o.Source
	sf.Notes = append(sf.Notes, o.Warnings...)
	for _, l := range o.Limits {
		sf.Notes = append(sf.Notes, fmt.Sprintf("there %s = %s (%s; chance within %.0f %%)", l.Quantity, ui.PlusMinus(l.Mean, l.HalfWidth), l.Limit, 100*l.Chance))
	}
	if len(d.Names) < 2 {
		return sf, ""
	}
	idx := make([]int, len(d.Names))
	for i := range idx {
		idx[i] = i
	}
	sort.Slice(idx, func(a, b int) bool { return fr.Sensitivities[idx[a]].Total > fr.Sensitivities[idx[b]].Total })
	a, b := idx[0], idx[1]
	const n = 40
	c := report.Contour{XName: d.Names[a], YName: d.Names[b], OptX: o.X[a], OptY: o.X[b]}
	for i := range n {
		c.X = append(c.X, d.Bounds.Lo[a]+float64(i)/(n-1)*(d.Bounds.Hi[a]-d.Bounds.Lo[a]))
		c.Y = append(c.Y, d.Bounds.Lo[b]+float64(i)/(n-1)*(d.Bounds.Hi[b]-d.Bounds.Lo[b]))
	}
	for j := range n {
		row := make([]float64, n)
		for i := range n {
			x := append([]float64(nil), o.X...)
			x[a], x[b] = c.X[i], c.Y[j]
			row[i] = fr.Mean(x)
		}
		c.Z = append(c.Z, row)
	}
	for _, x := range d.X {
		c.RunsX, c.RunsY = append(c.RunsX, x[a]), append(c.RunsY, x[b])
	}
	sf.Contours = []report.Contour{c}
	return sf, ""
}

// reportTradeoff weighs the objectives (two or more) as rank and fit do:
// the variants' averages, their front and the front the surfaces
// predict.
func reportTradeoff(r *recipe.Recipe, qs []*recipe.Quantity, vs []results.Variant) *report.Tradeoff {
	tr := results.Tradeoff(vs, tradeObjectives(qs), results.LimitsOf(r), 1)
	t := &report.Tradeoff{Limits: tr.Limits, Draws: tr.Draws}
	for _, q := range qs {
		lo, hi := q.Limits()
		t.Lo, t.Hi = append(t.Lo, lo), append(t.Hi, hi)
		t.Objectives, t.Units = append(t.Objectives, q.Name), append(t.Units, q.Unit)
		t.Better = append(t.Better, map[bool]string{true: "lower", false: "higher"}[q.LowerIsBetter()])
	}
	for _, row := range tr.Rows {
		tr := report.TradeRow{Label: row.Label, Params: strParams(row.Params), Front: row.Layer == 1, Chance: row.ChanceFront, Status: results.StatusText(row)}
		for _, q := range qs {
			v := row.Values[q.Name]
			tr.Mean, tr.HalfWidth = append(tr.Mean, v.Mean), append(tr.HalfWidth, v.HalfWidth)
		}
		t.Rows = append(t.Rows, tr)
	}
	prob, err := fit.StudyProblem(r, vs, qs)
	if err == nil {
		var f *fit.Front
		if f, err = prob.FitFront(fit.Options{Feasible: fit.Feasible(r, prob.Objectives[0].In.Cols, vs), Seed: 1}); err == nil {
			for _, p := range f.Points {
				var y []float64
				for j := range qs {
					y = append(y, p.Values[j].Mean)
				}
				t.Predicted = append(t.Predicted, y)
			}
		}
	}
	if err != nil {
		t.PredictedNote = "No front is predicted: " + err.Error()
	}
	return t
}

func strParams(m map[string]any) map[string]string {
	out := make(map[string]string, len(m))
	for k, v := range m {
		out[k] = fmt.Sprint(v)
	}
	return out
}
