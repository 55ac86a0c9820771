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
failures with their log tails, the response surface (contour maps,
leave-one-out predictions, sensitivities) when one can be fitted, and the
grid-convergence study when the recipe marks a mesh level. Figures are
inline SVG; nothing is fetched from anywhere, so the file reads offline
and travels by e-mail.`,
		Args: maxOneDir,
		RunE: func(cmd *cobra.Command, args []string) error {
			return runReport(cmd, opts, studyDir(args))
		},
	}
	cmd.Flags().StringVarP(&opts.out, "output", "o", "", "the file to write (default DIR/results/report.html)")
	cmd.Flags().StringVar(&opts.baseline, "baseline", "", "compare every variant with this one (a label)")
	cmd.Flags().StringVar(&opts.by, "by", "", "the quantity to rank by (default: the objective)")
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
	rk := results.Rank(vs, q.Name, q.LowerIsBetter(), baseline)
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
	s.Surface = reportSurface(r, q, vs)
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

// reportSurface fits a quadratic surface (kriging when there are too few
// runs for one) and samples contour maps over the two most sensitive
// parameters, the others at the optimum. It returns nil when no surface
// can be fitted.
func reportSurface(r *recipe.Recipe, q *recipe.Quantity, vs []results.Variant) *report.Surface {
	in, err := fit.StudyData(r, vs, q.Name)
	if err != nil || len(in.Data.Y) < 3 {
		return nil
	}
	d := in.Data
	fr, err := fit.Fit(d, in.Options(fit.Options{Maximize: !q.LowerIsBetter(), Feasible: fit.Feasible(r, in.Cols, vs), Seed: 1}))
	if err != nil {
		return nil
	}
	sf := &report.Surface{Model: fr.Model, Response: q.Name, LOORMSE: fr.LOORMSE, Noise: fr.Noise, Q2: fr.Q2, Flag: fr.Flag,
		Observed: fr.Observed, LOOPredicted: fr.LOO}
	for _, v := range vs {
		if res, ok := v.Results[q.Name]; ok && (res.Verdict == harvest.Converged || res.Verdict == harvest.Steady) {
			sf.Labels = append(sf.Labels, v.Label)
		}
	}
	for _, x := range fr.Sensitivities {
		sf.Sensitivities = append(sf.Sensitivities, report.Sensitivity{Param: x.Param, First: x.First, FirstSE: x.FirstSE, Total: x.Total, TotalSE: x.TotalSE})
	}
	if fr.Optimum == nil {
		return sf
	}
	sf.Optimum, sf.OptimumValue, sf.OptimumHalfWidth = fr.Optimum.Params, fr.Optimum.Value, fr.Optimum.HalfWidth
	if len(d.Names) < 2 {
		return sf
	}
	idx := make([]int, len(d.Names))
	for i := range idx {
		idx[i] = i
	}
	sort.Slice(idx, func(a, b int) bool { return fr.Sensitivities[idx[a]].Total > fr.Sensitivities[idx[b]].Total })
	a, b := idx[0], idx[1]
	const n = 40
	c := report.Contour{XName: d.Names[a], YName: d.Names[b], OptX: fr.Optimum.X[a], OptY: fr.Optimum.X[b]}
	for i := range n {
		c.X = append(c.X, d.Bounds.Lo[a]+float64(i)/(n-1)*(d.Bounds.Hi[a]-d.Bounds.Lo[a]))
		c.Y = append(c.Y, d.Bounds.Lo[b]+float64(i)/(n-1)*(d.Bounds.Hi[b]-d.Bounds.Lo[b]))
	}
	for j := range n {
		row := make([]float64, n)
		for i := range n {
			x := append([]float64(nil), fr.Optimum.X...)
			x[a], x[b] = c.X[i], c.Y[j]
			row[i] = fr.Mean(x)
		}
		c.Z = append(c.Z, row)
	}
	for _, x := range d.X {
		c.RunsX, c.RunsY = append(c.RunsX, x[a]), append(c.RunsY, x[b])
	}
	sf.Contours = []report.Contour{c}
	return sf
}

func strParams(m map[string]any) map[string]string {
	out := make(map[string]string, len(m))
	for k, v := range m {
		out[k] = fmt.Sprint(v)
	}
	return out
}
