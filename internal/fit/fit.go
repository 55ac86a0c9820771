package fit

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"github.com/sweep-cfd/sweep/internal/surface"
)

// Models a user may ask for.
var Models = []string{"quadratic", "linear", "interactions", "kriging"}

// Options control a fit.
type Options struct {
	Model    string // one of Models; "" is quadratic (kriging with too few runs for it)
	Terms    string // polynomial terms, e.g. "1, x, x^2"; overrides Model
	Maximize bool   // the optimum is a maximum
	Feasible func(x []float64) bool
	Seed     uint64
}

// Term is one polynomial term with its coefficient. Scripts read the
// names.
type Term struct {
	Name   string  `json:"name"`
	Coef   float64 `json:"coef"`
	StdErr float64 `json:"stderr"`
}

// Optimum is the surface's best point within the bounds.
type Optimum struct {
	Params    map[string]float64 `json:"params"`
	Value     float64            `json:"value"`
	HalfWidth float64            `json:"half_width"` // of the 95 % interval of the predicted mean
	Warnings  []string           `json:"warnings,omitempty"`
	X         []float64          `json:"-"`
}

// Sensitivity is a parameter's share of the surface's variance over the
// bounds: first-order (main effect) and total Sobol' indices, each with
// its bootstrap standard error.
type Sensitivity struct {
	Param   string  `json:"param"`
	First   float64 `json:"first"`
	FirstSE float64 `json:"first_se"`
	Total   float64 `json:"total"`
	TotalSE float64 `json:"total_se"`
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
	Runs     int      `json:"runs"`
	Terms    []Term   `json:"terms"`
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
	Noise         float64       `json:"noise_rms"`
	Flag          string        `json:"flag,omitempty"`
	Optimum       *Optimum      `json:"optimum,omitempty"`
	Sensitivities []Sensitivity `json:"sensitivities,omitempty"`
	LeftOut       []LeftOut     `json:"left_out,omitempty"`
	LOO           []float64     `json:"loo_predictions,omitempty"`
	Observed      []float64     `json:"observed,omitempty"`

	Surface surface.Model `json:"-"`
	Data    surface.Data  `json:"-"`
}

// flagRatio is how far the LOO error may exceed the runs' own noise
// before the fit is flagged: with a surface that captures the trend, the
// LOO residuals are noise plus a modest interpolation error.
const flagRatio = 3

// Fit fits the chosen model to d and analyses it.
func Fit(d surface.Data, opts Options) (*Report, error) {
	rep := &Report{Params: d.Names, Runs: len(d.Y), Data: d}
	k := len(d.Names)
	var m surface.Model
	var terms []surface.Term
	model := opts.Model
	switch {
	case opts.Terms != "":
		ts, err := surface.ParseTerms(opts.Terms, d.Names)
		if err != nil {
			return nil, err
		}
		terms, model = ts, "polynomial"
	case model == "" || model == "quadratic":
		terms, model = surface.QuadraticTerms(k), "quadratic"
	case model == "linear":
		terms = surface.LinearTerms(k)
	case model == "interactions":
		terms = surface.InteractionTerms(k)
	case model == "kriging":
	default:
		return nil, fmt.Errorf("unknown model %q: use one of %s", model, strings.Join(Models, ", "))
	}
	rep.Model = model
	if terms != nil {
		if len(d.Y) <= len(terms) {
			return nil, fmt.Errorf("%w: a %s model has %d terms and needs more runs than that; it has %d (use a smaller model, or add runs with `sweep plan --add`)", surface.ErrTooFewRuns, model, len(terms), len(d.Y))
		}
		p, err := surface.FitPoly(d, terms)
		if err != nil {
			return nil, err
		}
		for i := range p.Terms {
			rep.Terms = append(rep.Terms, Term{Name: p.TermNames[i], Coef: p.Coef[i], StdErr: p.StdErr[i]})
		}
		rep.R2, rep.AdjR2 = &p.R2, &p.AdjR2
		m = p
	} else {
		kr, err := surface.FitKriging(d, surface.KrigingOptions{Kernel: surface.Matern52, Seed: opts.Seed})
		if err != nil {
			return nil, err
		}
		rep.Terms = []Term{}
		m = kr
	}
	rep.Surface = m
	rep.LOORMSE, rep.LOO = m.LOO()
	rep.Observed = d.Y
	if q := q2(d.Y, rep.LOO); !math.IsNaN(q) && !math.IsInf(q, 0) {
		rep.Q2 = &q
	}
	if d.SE != nil {
		s := 0.0
		for _, e := range d.SE {
			s += e * e
		}
		rep.Noise = math.Sqrt(s / float64(len(d.SE)))
		if rep.Noise > 0 && rep.LOORMSE > flagRatio*rep.Noise {
			rep.Flag = fmt.Sprintf("leave-one-out error %.3g is %.0f times the runs' own uncertainty (%.3g): the %s surface misses structure; try another model or add runs",
				rep.LOORMSE, rep.LOORMSE/rep.Noise, rep.Noise, model)
		}
	}
	opt, err := surface.FindOptimum(m, surface.OptimumOptions{Maximize: opts.Maximize, Feasible: opts.Feasible, Level: 0.95, Seed: opts.Seed + 1})
	if err != nil && !errors.Is(err, surface.ErrNoFeasible) {
		return nil, err
	}
	if opt != nil {
		o := &Optimum{Params: map[string]float64{}, Value: opt.Mean, HalfWidth: opt.HalfWidth, Warnings: opt.Warnings, X: opt.X}
		for j, n := range d.Names {
			o.Params[n] = opt.X[j]
		}
		rep.Optimum = o
	}
	idx := surface.Sensitivities(m, surface.SobolOptions{N: 4096, Bootstrap: 100, Seed: opts.Seed + 2})
	for j, n := range d.Names {
		rep.Sensitivities = append(rep.Sensitivities, Sensitivity{Param: n, First: idx.First[j], FirstSE: idx.FirstSE[j], Total: idx.Total[j], TotalSE: idx.TotalSE[j]})
	}
	return rep, nil
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
