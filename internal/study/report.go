package study

import (
	"bytes"
	"context"
	"fmt"
	"path/filepath"
	"sort"
	"time"

	"github.com/sweep-cfd/sweep/internal/fit"
	"github.com/sweep-cfd/sweep/internal/harvest"
	"github.com/sweep-cfd/sweep/internal/history"
	"github.com/sweep-cfd/sweep/internal/plan"
	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/report"
	"github.com/sweep-cfd/sweep/internal/results"
	"github.com/sweep-cfd/sweep/internal/store"
	"github.com/sweep-cfd/sweep/internal/ui"
)

// ReportOptions control Report.
type ReportOptions struct {
	// Quantity names the quantity to rank and fit, or several separated
	// by commas: the first is ranked and fitted, all are weighed in the
	// trade-off section.
	Quantity string
	// Baseline is a label or id every variant is compared with.
	Baseline string
	// Out is the file to write (default results/report.html).
	Out      string
	Progress results.Progress
}

// Reported says where a report was written and how big it is.
type Reported struct {
	Path  string
	Bytes int
}

// Report harvests the study, builds the report's model (see Model) and
// writes the self-contained HTML page atomically.
func (s *Study) Report(ctx context.Context, opts ReportOptions) (*Reported, error) {
	m, err := s.Model(ctx, opts)
	if err != nil {
		return nil, err
	}
	var buf bytes.Buffer
	if err := report.Render(&buf, *m); err != nil {
		return nil, err
	}
	out := opts.Out
	if out == "" {
		out = filepath.Join(s.Dir, results.Dir, "report.html")
	}
	if err := results.WriteAtomic(out, buf.Bytes()); err != nil {
		return nil, fmt.Errorf("write the report: %w", err)
	}
	return &Reported{Path: out, Bytes: buf.Len()}, nil
}

// Model harvests the study and builds what the report shows: the recipe,
// the counts, the ranking by the first quantity within the limits, every
// variant's histories (a history that cannot be read says why), the
// trade-off of the quantities when there are several (those named, or by
// default every quantity that says which values are better), the
// response surface or why there is none, and the mesh studies.
func (s *Study) Model(ctx context.Context, opts ReportOptions) (*report.Study, error) {
	qs, err := s.Objectives(opts.Quantity, true)
	if err != nil {
		return nil, err
	}
	h, err := s.Harvest(ctx, HarvestOptions{Progress: opts.Progress})
	if err != nil {
		return nil, err
	}
	st, err := s.Status()
	if err != nil {
		return nil, err
	}
	r, vs := s.Recipe, h.Variants
	baseline := ""
	if opts.Baseline != "" {
		label, ok := variantLabel(vs, opts.Baseline)
		if !ok {
			return nil, usage(fmt.Errorf("no variant %q in the study; see `sweep status %s`", opts.Baseline, s.Dir))
		}
		baseline = label
	}
	m := buildReport(r, qs[0], vs, st, baseline)
	trade := qs
	if len(trade) == 1 {
		trade = nil
		for i := range r.Quantities {
			if r.Quantities[i].Directed() {
				trade = append(trade, &r.Quantities[i])
			}
		}
	}
	if len(trade) > 1 {
		m.Tradeoff = reportTradeoff(r, trade, vs)
	}
	return &m, nil
}

func buildReport(r *recipe.Recipe, q *recipe.Quantity, vs []results.Variant, st *Report, baseline string) report.Study {
	s := report.Study{Name: r.Name, Description: r.Description, Generated: time.Now(), Objective: q.Name, Better: q.BetterWord(),
		Caution:  "These results need validation — mesh and time-step checks, comparison with trusted references and review by qualified people — before they steer a decision; local codes and licensed practice prevail.",
		Counts:   report.Counts{Done: st.Counts.Done, Failed: st.Counts.Failed, Pending: st.Counts.Pending, Running: st.Counts.Running},
		Baseline: baseline, ObjectiveUnit: q.Unit}
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
			if ser, err := history.ReadSeries(plan.Dir(r.Dir, v.Label), qq.Spec); err == nil {
				qs.Time, qs.Value = ser.Time, ser.Value
			} else if res.Verdict != harvest.NoData && res.Verdict != harvest.Failed {
				qs.Message = joinNote(qs.Message, "the history cannot be drawn: "+err.Error())
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
			ms.H, ms.Value, ms.HalfWidth = g.H, g.Means, g.HalfWidths
			if len(g.H) > 3 {
				ms.Warnings = append(ms.Warnings, fmt.Sprintf("%d grids: the estimate uses the finest three", len(g.H)))
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
	tr := results.Tradeoff(vs, objectivesOf(qs), results.LimitsOf(r), 1)
	t := &report.Tradeoff{Limits: tr.Limits, Draws: tr.Draws}
	for _, q := range qs {
		lo, hi := q.Limits()
		t.Lo, t.Hi = append(t.Lo, lo), append(t.Hi, hi)
		t.Objectives, t.Units = append(t.Objectives, q.Name), append(t.Units, q.Unit)
		t.Better = append(t.Better, q.BetterWord())
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

// joinNote joins two notes with a semicolon.
func joinNote(a, b string) string {
	if a == "" {
		return b
	}
	return a + "; " + b
}
