package fit

import (
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"

	"gonum.org/v1/gonum/stat/distuv"

	"github.com/sweep-cfd/sweep/internal/surface"
	"github.com/sweep-cfd/sweep/internal/tradeoff"
)

// Models a user may ask for, simplest first; "auto" (the default) picks
// among them by cross-validation.
var Models = []string{"linear", "interactions", "quadratic", "kriging"}

// Options control a fit.
type Options struct {
	// Model is one of Models, or "" / "auto" to choose by leave-one-out
	// error (see Fit).
	Model string
	// Terms, polynomial terms such as "1, x, x^2", override Model.
	Terms    string
	Maximize bool // the optimum is a maximum
	// Feasible tests a point in natural units (nil: every point).
	Feasible func(x []float64) bool
	// Log marks the inputs (in Data.Names order) to fit in log10 of their
	// value: parameters declared log = true, which designs spread evenly in
	// log(value).
	Log []bool
	// Labels name the runs (parallel to Data.Y) in messages.
	Labels []string
	// Limits are other quantities' surfaces whose predictions must keep
	// their limits at the optimum (a constrained optimum), and RunLimits
	// holds, parallel to Data.Y, each run's own averages of them (nil:
	// none known), so that the best measured run is one that keeps them.
	Limits    []LimitSurface
	RunLimits [][]LimitValue
	Seed      uint64
}

// LimitSurface is a fitted quantity that must stay within [Lo, Hi].
type LimitSurface struct {
	Quantity string
	Lo, Hi   float64
	Text     string
	Report   *Report
}

// LimitValue is a limited quantity's prediction at a point: its mean, the
// half-width of its 95 % interval and the chance it keeps its limits.
type LimitValue struct {
	Quantity  string  `json:"quantity"`
	Limit     string  `json:"limit"`
	Mean      float64 `json:"mean"`
	HalfWidth float64 `json:"half_width"`
	Chance    float64 `json:"p_within"`
	// Within is true when the mean keeps the limit.
	Within bool `json:"within"`
}

// Term is one polynomial term with its coefficient. Scripts read the
// names.
type Term struct {
	Name   string  `json:"name"`
	Coef   float64 `json:"coef"`
	StdErr float64 `json:"stderr"`
}

// Optimum is the recommended best point: the surface's optimum within
// the bounds, or the best measured run when the surface shows no proven
// improvement on it (Source says which).
type Optimum struct {
	Params    map[string]float64 `json:"params"`
	Value     float64            `json:"value"`
	HalfWidth float64            `json:"half_width"` // of its 95 % interval (of the predicted mean, or of the run's average)
	// Source is "surface", or "run LABEL" for a measured run.
	Source   string   `json:"source"`
	Warnings []string `json:"warnings,omitempty"`
	// Limits holds the limited quantities' predictions (a surface's
	// optimum) or averages (a run) there.
	Limits []LimitValue `json:"limits,omitempty"`
	// X is the point in natural units, in Data.Names order.
	X []float64 `json:"-"`
}

// Run is one measured run, as the fit saw it.
type Run struct {
	Label     string             `json:"label,omitempty"`
	Params    map[string]float64 `json:"params"`
	Value     float64            `json:"value"`
	HalfWidth float64            `json:"half_width"` // of its own 95 % interval
	// Limits holds its own averages of the limited quantities.
	Limits []LimitValue `json:"limits,omitempty"`
}

// Sensitivity is a parameter's share of the surface's variance over the
// bounds: first-order (main effect) and total Sobol' indices, each with
// its bootstrap standard error, clipped to [0, 1] (Note says so).
type Sensitivity struct {
	Param   string  `json:"param"`
	First   float64 `json:"first"`
	FirstSE float64 `json:"first_se"`
	Total   float64 `json:"total"`
	TotalSE float64 `json:"total_se"`
	Note    string  `json:"note,omitempty"`
}

// Candidate is one model the automatic choice compared.
type Candidate struct {
	Model   string  `json:"model"`
	Terms   int     `json:"terms"` // polynomial terms; 0 for kriging
	LOORMSE float64 `json:"loo_rmse"`
	Error   string  `json:"error,omitempty"` // why it could not be fitted
}

// CurvePoint is the surface of a one-parameter study at one value: the
// predicted mean and the half-width of its 95 % interval.
type CurvePoint struct {
	X         float64 `json:"x"`
	Mean      float64 `json:"mean"`
	HalfWidth float64 `json:"half_width"`
}

// LeftOut is a run not used in a fit, and why.
type LeftOut struct {
	Label  string `json:"label"`
	Reason string `json:"reason"`
}

// Report is a fitted surface and what follows from it. Scripts read the
// JSON names model, terms, r2, loo_rmse and optimum.
type Report struct {
	Model    string   `json:"model"`
	Response string   `json:"response"`
	Params   []string `json:"param_names"`
	// LogParams are the parameters fitted in log10 of their value.
	LogParams []string `json:"log_params,omitempty"`
	Runs      int      `json:"runs"`
	// Choice says how the model was chosen; Candidates lists what the
	// automatic choice compared.
	Choice     string      `json:"choice"`
	Candidates []Candidate `json:"candidates,omitempty"`
	Terms      []Term      `json:"terms"`
	// R2 is the coefficient of determination of a polynomial fit (null for
	// kriging, which passes through the runs up to their noise).
	R2    *float64 `json:"r2"`
	AdjR2 *float64 `json:"adj_r2,omitempty"`
	// Q2 = 1 − PRESS/TSS, the share of the response's variance that
	// leave-one-out predictions explain.
	Q2      *float64 `json:"q2"`
	LOORMSE float64  `json:"loo_rmse"`
	// Noise is the root mean square of the runs' standard errors (0 when
	// unknown); a LOO error far above it means the surface misses
	// structure, and Flag says so.
	Noise   float64  `json:"noise_rms"`
	Flag    string   `json:"flag,omitempty"`
	Optimum *Optimum `json:"optimum,omitempty"`
	// Predicted is the surface's own optimum when Optimum is a measured
	// run instead.
	Predicted *Optimum `json:"predicted_optimum,omitempty"`
	// Best is the best measured run.
	Best          *Run          `json:"best_run,omitempty"`
	Sensitivities []Sensitivity `json:"sensitivities,omitempty"`
	// Curve samples a one-parameter surface across its range.
	Curve   []CurvePoint `json:"curve,omitempty"`
	LeftOut []LeftOut    `json:"left_out,omitempty"`
	// LimitFits are the surfaces of the quantities with limits, when the
	// optimum was constrained by them.
	LimitFits []*Report `json:"limit_fits,omitempty"`
	// Notes says what else a reader must know (no run keeps the limits).
	Notes    []string  `json:"notes,omitempty"`
	LOO      []float64 `json:"loo_predictions,omitempty"`
	Observed []float64 `json:"observed,omitempty"`

	// Surface is the fitted model, in the fitted inputs (log10 for the
	// LogParams); use Mean and Predict with natural values.
	Surface surface.Model `json:"-"`
	// Data is what was fitted, in natural units.
	Data surface.Data `json:"-"`
	log  []bool
}

// flagRatio is how far the LOO error may exceed the runs' own noise
// before the fit is flagged: with a surface that captures the trend, the
// LOO residuals are noise plus a modest interpolation error.
const flagRatio = 3

// toFitted maps a point in natural units to the fitted inputs.
func toFitted(x []float64, log []bool) []float64 {
	u := slices.Clone(x)
	for j := range u {
		if j < len(log) && log[j] {
			u[j] = math.Log10(u[j])
		}
	}
	return u
}

// toNatural maps fitted inputs back to natural units.
func toNatural(u []float64, log []bool) []float64 {
	x := slices.Clone(u)
	for j := range x {
		if j < len(log) && log[j] {
			x[j] = math.Pow(10, x[j])
		}
	}
	return x
}

// Mean returns the surface's mean at a point in natural units.
func (r *Report) Mean(x []float64) float64 { return r.Surface.Mean(toFitted(x, r.log)) }

// Predict returns the surface's mean and its standard deviation at a
// point in natural units.
func (r *Report) Predict(x []float64) (mean, sd float64) {
	return r.Surface.Predict(toFitted(x, r.log))
}

// Interval returns the surface's mean at a point in natural units, the
// half-width of its 95 % interval and its standard deviation.
func (r *Report) Interval(x []float64) (mean, hw, sd float64) {
	mean, sd = r.Predict(x)
	crit := distuv.UnitNormal.Quantile(0.975)
	if c := r.Surface.Critical(0.95); c > 0 {
		crit = c
	}
	return mean, crit * sd, sd
}

// limitValues returns the limited quantities' predictions at x (natural
// units).
func limitValues(ls []LimitSurface, x []float64) []LimitValue {
	var out []LimitValue
	for _, l := range ls {
		m, hw, sd := l.Report.Interval(x)
		out = append(out, LimitValue{Quantity: l.Quantity, Limit: l.Text, Mean: m, HalfWidth: hw,
			Chance: tradeoff.Feasibility(m, sd, l.Lo, l.Hi), Within: m >= l.Lo && m <= l.Hi})
	}
	return out
}

// keeps reports whether the limited quantities' predicted means keep
// their limits at x (natural units).
func keeps(ls []LimitSurface, x []float64) bool {
	for _, l := range ls {
		if m := l.Report.Mean(x); !(m >= l.Lo && m <= l.Hi) {
			return false
		}
	}
	return true
}

// Fit fits a surface to d and analyses it: the optimum within the bounds
// (compared with the best measured run), the Sobol' sensitivities, and,
// for one parameter, the curve.
//
// Model choice. Unless opts.Model or opts.Terms says which, the models the
// runs can support are fitted (a polynomial needs more runs than terms;
// kriging at least three runs) and compared by their leave-one-out error;
// the simplest whose error is within the runs' own noise (the RMS of
// their standard errors) of the smallest is chosen, since a more complex
// model that predicts no better than the noise allows gains nothing. The
// Report says which was chosen and why.
func Fit(d surface.Data, opts Options) (*Report, error) {
	rep := &Report{Params: d.Names, Runs: len(d.Y), Data: d, log: opts.Log}
	for j, l := range opts.Log {
		if l && j < len(d.Names) {
			rep.LogParams = append(rep.LogParams, d.Names[j])
		}
	}
	fd := fittedData(d, opts.Log)
	if d.SE != nil {
		s := 0.0
		for _, e := range d.SE {
			s += e * e
		}
		rep.Noise = math.Sqrt(s / float64(len(d.SE)))
	}
	var m surface.Model
	var err error
	switch {
	case opts.Terms != "":
		ts, perr := surface.ParseTerms(opts.Terms, d.Names)
		if perr != nil {
			return nil, perr
		}
		rep.Model, rep.Choice = "polynomial", "the terms given"
		m, err = fitPoly(fd, ts, "polynomial", rep)
	case opts.Model == "" || opts.Model == "auto":
		m, err = choose(fd, opts, rep)
	case slices.Contains(Models, opts.Model):
		rep.Model, rep.Choice = opts.Model, "the model asked for"
		m, err = fitModel(fd, opts.Model, opts.Seed, rep)
	default:
		return nil, fmt.Errorf("unknown model %q: use auto or one of %s", opts.Model, strings.Join(Models, ", "))
	}
	if err != nil {
		return nil, err
	}
	rep.Surface = m
	rep.LOORMSE, rep.LOO = m.LOO()
	rep.Observed = d.Y
	if q := q2(d.Y, rep.LOO); !math.IsNaN(q) && !math.IsInf(q, 0) {
		rep.Q2 = &q
	}
	if rep.Noise > 0 && rep.LOORMSE > flagRatio*rep.Noise {
		rep.Flag = fmt.Sprintf("leave-one-out error %.3g is %.0f times the runs' own uncertainty (%.3g): the %s surface misses structure; try another model or add runs",
			rep.LOORMSE, rep.LOORMSE/rep.Noise, rep.Noise, rep.Model)
	}
	rep.Best = bestRun(d, opts, rep.LOORMSE)
	if rep.Best == nil && len(opts.Limits) > 0 && len(d.Y) > 0 {
		rep.Notes = append(rep.Notes, "no measured run keeps the limits ("+limitTexts(opts.Limits)+")")
	}
	var feasible func([]float64) bool
	if opts.Feasible != nil || len(opts.Limits) > 0 {
		feasible = func(u []float64) bool {
			x := toNatural(u, opts.Log)
			return (opts.Feasible == nil || opts.Feasible(x)) && keeps(opts.Limits, x)
		}
	}
	opt, err := surface.FindOptimum(m, surface.OptimumOptions{Maximize: opts.Maximize, Feasible: feasible, Level: 0.95, Seed: opts.Seed + 1})
	if err != nil && !errors.Is(err, surface.ErrNoFeasible) {
		return nil, err
	}
	if opt == nil && len(opts.Limits) > 0 {
		rep.Notes = append(rep.Notes, "no point of the parameter range is predicted to keep the limits ("+limitTexts(opts.Limits)+"): widen the range or the limits, or add runs where the limited quantities are uncertain")
	}
	if opt != nil {
		x := toNatural(opt.X, opts.Log)
		// The surface words its bound warnings in the fitted inputs
		// (log10 of a log parameter): say them in natural units.
		warnings := append(atBound(d, x), opt.Warnings[len(opt.AtBound):]...)
		o := &Optimum{Params: map[string]float64{}, Value: opt.Mean, HalfWidth: opt.HalfWidth, Source: "surface", Warnings: warnings, X: x,
			Limits: limitValues(opts.Limits, x)}
		for j, n := range d.Names {
			o.Params[n] = x[j]
		}
		if rep.Flag != "" {
			// A surface that misses the runs by more than their noise
			// errs by about its leave-one-out error anywhere, and its
			// own interval does not know it.
			if hw := 1.959964 * rep.LOORMSE; hw > o.HalfWidth {
				o.Warnings = append(o.Warnings, fmt.Sprintf("the surface misses the runs (leave-one-out error %.3g), so its optimum's interval is widened from ±%.2g to ±%.2g, 1.96 times that error", rep.LOORMSE, o.HalfWidth, hw))
				o.HalfWidth = hw
			}
		}
		rep.Optimum = o
		if rep.Best != nil {
			if note, proven := compareBest(o, rep.Best, opts.Maximize); !proven {
				// No proven improvement on a measured run: that run is
				// the honest answer, the surface's optimum a prediction.
				b := rep.Best
				src := "the best measured run"
				if b.Label != "" {
					src = "run " + b.Label
				}
				rep.Predicted = o
				rep.Optimum = &Optimum{Params: b.Params, Value: b.Value, HalfWidth: b.HalfWidth, Source: src,
					Warnings: append([]string{note}, atBound(d, bestX(d, b))...), X: bestX(d, b), Limits: b.Limits}
			} else if note != "" {
				o.Warnings = append(o.Warnings, note)
			}
		}
	}
	rep.Sensitivities = sensitivities(m, d.Names, opts.Seed+2)
	if len(d.Names) == 1 {
		rep.Curve = curve(rep, d.Bounds, opts.Log)
	}
	return rep, nil
}

// fittedData returns d with the log inputs in log10 (bounds too), named
// log10(name) so that terms say what they are.
func fittedData(d surface.Data, log []bool) surface.Data {
	if !slices.Contains(log, true) {
		return d
	}
	fd := d
	fd.X = make([][]float64, len(d.X))
	for i, x := range d.X {
		fd.X[i] = toFitted(x, log)
	}
	fd.Bounds = surface.Bounds{Lo: toFitted(d.Bounds.Lo, log), Hi: toFitted(d.Bounds.Hi, log)}
	fd.Names = slices.Clone(d.Names)
	for j := range fd.Names {
		if j < len(log) && log[j] {
			fd.Names[j] = "log10(" + fd.Names[j] + ")"
		}
	}
	return fd
}

// polyTerms returns the terms of a named polynomial model.
func polyTerms(model string, k int) []surface.Term {
	switch model {
	case "linear":
		return surface.LinearTerms(k)
	case "interactions":
		return surface.InteractionTerms(k)
	}
	return surface.QuadraticTerms(k)
}

func fitModel(d surface.Data, model string, seed uint64, rep *Report) (surface.Model, error) {
	if model == "kriging" {
		if len(d.Y) < 3 {
			return nil, fmt.Errorf("%w: kriging needs at least 3 runs; there are %d", surface.ErrTooFewRuns, len(d.Y))
		}
		kr, err := surface.FitKriging(d, surface.KrigingOptions{Kernel: surface.Matern52, Seed: seed})
		if err != nil {
			return nil, err
		}
		rep.Terms = []Term{}
		rep.R2, rep.AdjR2 = nil, nil
		return kr, nil
	}
	return fitPoly(d, polyTerms(model, len(d.Names)), model, rep)
}

func fitPoly(d surface.Data, terms []surface.Term, model string, rep *Report) (surface.Model, error) {
	if len(d.Y) <= len(terms) {
		return nil, fmt.Errorf("%w: a %s model has %d terms and needs more runs than that; it has %d (use a smaller model, or add runs with `sweep plan --add`)", surface.ErrTooFewRuns, model, len(terms), len(d.Y))
	}
	p, err := surface.FitPoly(d, terms)
	if err != nil {
		return nil, err
	}
	rep.Terms = rep.Terms[:0]
	for i := range p.Terms {
		rep.Terms = append(rep.Terms, Term{Name: p.TermNames[i], Coef: p.Coef[i], StdErr: p.StdErr[i]})
	}
	rep.R2, rep.AdjR2 = &p.R2, &p.AdjR2
	return p, nil
}

// choose fits every model the runs support and picks one (see Fit).
func choose(d surface.Data, opts Options, rep *Report) (surface.Model, error) {
	type fitted struct {
		c   Candidate
		m   surface.Model
		rep Report
	}
	var ok []fitted
	for _, name := range Models {
		c := Candidate{Model: name}
		if name != "kriging" {
			c.Terms = len(polyTerms(name, len(d.Names)))
			if name == "interactions" && len(d.Names) < 2 {
				continue // the same as linear
			}
		}
		var r Report
		m, err := fitModel(d, name, opts.Seed, &r)
		if err != nil {
			c.Error, c.LOORMSE = err.Error(), math.NaN()
			rep.Candidates = append(rep.Candidates, c)
			continue
		}
		c.LOORMSE, _ = m.LOO()
		rep.Candidates = append(rep.Candidates, c)
		ok = append(ok, fitted{c, m, r})
	}
	if len(ok) == 0 {
		return nil, fmt.Errorf("%w: no model can be fitted to %d runs over %d parameters (linear needs %d); add runs with `sweep plan --add`",
			surface.ErrTooFewRuns, len(d.Y), len(d.Names), len(d.Names)+2)
	}
	best := ok[0]
	for _, f := range ok[1:] {
		if f.c.LOORMSE < best.c.LOORMSE {
			best = f
		}
	}
	// The simplest model within the noise of the best (Models is ordered
	// simplest first).
	pick := best
	for _, f := range ok {
		if f.c.LOORMSE <= best.c.LOORMSE+rep.Noise {
			pick = f
			break
		}
	}
	rep.Model = pick.c.Model
	rep.Terms, rep.R2, rep.AdjR2 = pick.rep.Terms, pick.rep.R2, pick.rep.AdjR2
	var others []string
	for _, c := range rep.Candidates {
		if c.Model == pick.c.Model {
			continue
		}
		if c.Error != "" {
			others = append(others, c.Model+" could not be fitted")
		} else {
			others = append(others, fmt.Sprintf("%s %.3g", c.Model, c.LOORMSE))
		}
	}
	why := "the smallest"
	if pick.c.Model != best.c.Model {
		why = fmt.Sprintf("within the runs' noise (%.3g) of the smallest (%s %.3g), and simpler", rep.Noise, best.c.Model, best.c.LOORMSE)
	}
	rep.Choice = fmt.Sprintf("chosen by leave-one-out error: %s %.3g is %s", pick.c.Model, pick.c.LOORMSE, why)
	if len(others) > 0 {
		rep.Choice += " (" + strings.Join(others, ", ") + ")"
	}
	return pick.m, nil
}

// bestRun returns the best measured run; without standard errors (a
// table), its uncertainty is taken as the surface's leave-one-out error,
// the scatter the runs show about it.
func bestRun(d surface.Data, opts Options, loo float64) *Run {
	if len(d.Y) == 0 {
		return nil
	}
	b := -1
	for i, y := range d.Y {
		if opts.RunLimits != nil && !allWithin(opts.RunLimits[i]) {
			continue
		}
		if b < 0 || (opts.Maximize && y > d.Y[b]) || (!opts.Maximize && y < d.Y[b]) {
			b = i
		}
	}
	if b < 0 {
		return nil
	}
	r := &Run{Params: map[string]float64{}, Value: d.Y[b], HalfWidth: math.NaN()}
	for j, n := range d.Names {
		r.Params[n] = d.X[b][j]
	}
	if d.SE != nil {
		r.HalfWidth = 1.959964 * d.SE[b]
	} else if loo > 0 && !math.IsInf(loo, 0) {
		r.HalfWidth = 1.959964 * loo
	}
	if b < len(opts.Labels) {
		r.Label = opts.Labels[b]
	}
	if opts.RunLimits != nil {
		r.Limits = opts.RunLimits[b]
	}
	return r
}

func allWithin(ls []LimitValue) bool {
	for _, l := range ls {
		if !l.Within {
			return false
		}
	}
	return true
}

func limitTexts(ls []LimitSurface) string {
	var t []string
	for _, l := range ls {
		t = append(t, l.Text)
	}
	return strings.Join(t, ", ")
}

// compareBest says how the surface's optimum stands against the best
// measured run, and whether it is a proven improvement on it: better by
// more than their combined 95 % uncertainty, the two half-widths added in
// quadrature (each with its own critical value: a surface fitted with few
// degrees of freedom has a wide one). A prediction worse than the run
// beyond that uncertainty means the surface misses the runs there.
func compareBest(o *Optimum, best *Run, maximize bool) (note string, proven bool) {
	hw := best.HalfWidth
	if math.IsNaN(hw) {
		hw = 0
	}
	comb := math.Hypot(o.HalfWidth, hw)
	gain := best.Value - o.Value // positive: the optimum is lower
	if maximize {
		gain = -gain
	}
	name := "the best measured run"
	if best.Label != "" {
		name = "run " + best.Label
	}
	at := ""
	for _, k := range sortedKeys(o.Params) {
		at += fmt.Sprintf(", %s = %.5g", k, o.Params[k])
	}
	switch {
	case gain < -comb:
		return fmt.Sprintf("the surface predicts %.4g ± %.2g at its optimum%s, worse than %s measured (%.4g): the surface misses the runs there; the best answer is %s",
			o.Value, o.HalfWidth, at, name, best.Value, name), false
	case gain <= comb:
		return fmt.Sprintf("the surface's optimum (%.4g ± %.2g%s) is not distinguishable from %s: the surface promises no proven improvement, so the best answer is %s",
			o.Value, o.HalfWidth, at, name, name), false
	}
	return fmt.Sprintf("a proven improvement on %s (%.4g) beyond their combined uncertainty", name, best.Value), true
}

func sortedKeys(m map[string]float64) []string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	slices.Sort(keys)
	return keys
}

// atBound warns of the parameters within 1 % of their range from a bound
// at x (natural units): the optimum may lie outside the studied range.
func atBound(d surface.Data, x []float64) []string {
	var out []string
	for j, n := range d.Names {
		lo, hi := d.Bounds.Lo[j], d.Bounds.Hi[j]
		side := ""
		switch {
		case x[j] <= lo+0.01*(hi-lo):
			side = "lower"
		case x[j] >= hi-0.01*(hi-lo):
			side = "upper"
		default:
			continue
		}
		out = append(out, fmt.Sprintf("%s = %g is at its %s bound: the optimum may lie outside the studied range", n, x[j], side))
	}
	return out
}

// bestX returns the point of the best run in Data.Names order.
func bestX(d surface.Data, b *Run) []float64 {
	x := make([]float64, len(d.Names))
	for j, n := range d.Names {
		x[j] = b.Params[n]
	}
	return x
}

// sensitivities returns the Sobol' indices of the surface, clipped to
// [0, 1]; with one parameter the index is 1 by definition.
func sensitivities(m surface.Model, names []string, seed uint64) []Sensitivity {
	if len(names) == 1 {
		return []Sensitivity{{Param: names[0], First: 1, Total: 1, Note: "1 by definition: the only parameter"}}
	}
	idx := surface.Sensitivities(m, surface.SobolOptions{N: 4096, Bootstrap: 100, Seed: seed})
	out := make([]Sensitivity, len(names))
	for j, n := range names {
		out[j] = clipIndices(Sensitivity{Param: n, First: idx.First[j], FirstSE: idx.FirstSE[j], Total: idx.Total[j], TotalSE: idx.TotalSE[j]})
	}
	return out
}

// clipIndices clips estimated indices into [0, 1], where true indices
// lie, and says so with the estimates.
func clipIndices(s Sensitivity) Sensitivity {
	var clipped []string
	for _, v := range []struct {
		name string
		x    *float64
		se   float64
	}{{"main effect", &s.First, s.FirstSE}, {"total effect", &s.Total, s.TotalSE}} {
		if c := math.Max(0, math.Min(1, *v.x)); c != *v.x {
			clipped = append(clipped, fmt.Sprintf("%s estimate %.3f ± %.3f", v.name, *v.x, v.se))
			*v.x = c
		}
	}
	if clipped != nil {
		s.Note = strings.Join(clipped, ", ") + " clipped to [0, 1]"
	}
	return s
}

// curve samples a one-parameter surface at 41 points across its range
// (evenly in log10 of the value for a log parameter).
func curve(rep *Report, b surface.Bounds, log []bool) []CurvePoint {
	lo, hi := toFitted(b.Lo, log)[0], toFitted(b.Hi, log)[0]
	crit := distuv.UnitNormal.Quantile(0.975)
	if c := rep.Surface.Critical(0.95); c > 0 {
		crit = c
	}
	var out []CurvePoint
	for i := range 41 {
		u := lo + (hi-lo)*float64(i)/40
		x := toNatural([]float64{u}, log)
		m, sd := rep.Surface.Predict([]float64{u})
		out = append(out, CurvePoint{X: x[0], Mean: m, HalfWidth: crit * sd})
	}
	return out
}

// q2 returns 1 − Σ(y − ŷ_loo)²/Σ(y − ȳ)².
func q2(y, loo []float64) float64 {
	if len(loo) != len(y) || len(y) < 2 {
		return math.NaN()
	}
	mean := 0.0
	for _, v := range y {
		mean += v
	}
	mean /= float64(len(y))
	var press, tss float64
	for i := range y {
		press += (y[i] - loo[i]) * (y[i] - loo[i])
		tss += (y[i] - mean) * (y[i] - mean)
	}
	if tss == 0 {
		return math.NaN()
	}
	return 1 - press/tss
}

// finite returns x, or nil when it is not a finite number (null in
// JSON, never 0 or an error).
func finite(x float64) *float64 {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return nil
	}
	return &x
}

// MarshalJSON writes a candidate with a null error for a model whose
// leave-one-out error is not finite (a run of full leverage).
func (c Candidate) MarshalJSON() ([]byte, error) {
	type alias Candidate
	return json.Marshal(struct {
		alias
		LOORMSE *float64 `json:"loo_rmse"`
	}{alias(c), finite(c.LOORMSE)})
}

// MarshalJSON writes a run with a null half-width when its error is not
// known (a table without one).
func (r Run) MarshalJSON() ([]byte, error) {
	type alias Run
	return json.Marshal(struct {
		alias
		HalfWidth *float64 `json:"half_width"`
	}{alias(r), finite(r.HalfWidth)})
}

// MarshalJSON writes an optimum with a null half-width when it is not
// known.
func (o Optimum) MarshalJSON() ([]byte, error) {
	type alias Optimum
	return json.Marshal(struct {
		alias
		HalfWidth *float64 `json:"half_width"`
	}{alias(o), finite(o.HalfWidth)})
}
