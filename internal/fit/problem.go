package fit

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strings"

	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/results"
	"github.com/sweep-cfd/sweep/internal/tradeoff"
)

// Part is one quantity of a problem: its runs, which way is better (for
// an objective) and its limits (for a limited quantity).
type Part struct {
	Quantity string
	In       *Inputs
	Maximize bool
	Lo, Hi   float64
	// Limit says the limits in words ("lift ≤ 0.3").
	Limit string
}

// Problem is what a study asks of its surfaces: one or more objectives,
// and limits on quantities (the recipe's at_most and at_least).
type Problem struct {
	Objectives []Part
	Limits     []Part
	// runs holds each variant's averages by label, to check the limits
	// on measured runs.
	runs map[string]results.Variant
}

// StudyProblem gathers a study's runs for the named objectives and for
// every quantity the recipe limits.
func StudyProblem(r *recipe.Recipe, vs []results.Variant, objectives []*recipe.Quantity) (*Problem, error) {
	p := &Problem{runs: map[string]results.Variant{}}
	for _, v := range vs {
		p.runs[v.Label] = v
	}
	for _, q := range objectives {
		in, err := StudyData(r, vs, q.Name)
		if err != nil {
			return nil, err
		}
		p.Objectives = append(p.Objectives, Part{Quantity: q.Name, In: in, Maximize: !q.LowerIsBetter()})
	}
	for _, l := range results.LimitsOf(r) {
		in, err := StudyData(r, vs, l.Quantity)
		if err != nil {
			return nil, err
		}
		p.Limits = append(p.Limits, Part{Quantity: l.Quantity, In: in, Lo: l.Lo, Hi: l.Hi, Limit: l.Text})
	}
	return p, nil
}

// runLimits returns, for the runs of in, each run's own averages of the
// limited quantities; a run without an honest average of one counts as
// not keeping it.
func (p *Problem) runLimits(in *Inputs) [][]LimitValue {
	if len(p.Limits) == 0 {
		return nil
	}
	out := make([][]LimitValue, len(in.Labels))
	for i, label := range in.Labels {
		v := p.runs[label]
		for _, l := range p.Limits {
			lv := LimitValue{Quantity: l.Quantity, Limit: l.Limit, Mean: math.NaN(), HalfWidth: math.NaN()}
			if res, ok := v.Results[l.Quantity]; ok && results.HasInterval(res) {
				e := res.Estimate()
				lv.Mean, lv.HalfWidth = e.Mean, res.HalfWidth
				lv.Chance = tradeoff.Feasibility(e.Mean, e.StdError, l.Lo, l.Hi)
				lv.Within = e.Mean >= l.Lo && e.Mean <= l.Hi
			}
			out[i] = append(out[i], lv)
		}
	}
	return out
}

// limitSurfaces fits a surface to each limited quantity (model chosen by
// cross-validation), or takes it from fitted, the objectives' surfaces by
// name; reps holds the new fits only.
func (p *Problem) limitSurfaces(base Options, fitted map[string]*Report) (ls []LimitSurface, reps []*Report, err error) {
	for _, l := range p.Limits {
		rep := fitted[l.Quantity]
		if rep == nil {
			o := l.In.Options(Options{Seed: base.Seed, Feasible: base.Feasible})
			if rep, err = Fit(l.In.Data, o); err != nil {
				return nil, nil, fmt.Errorf("fit %s (limited: %s): %w", l.Quantity, l.Limit, err)
			}
			rep.Response, rep.LeftOut = l.Quantity, l.In.Left
			reps = append(reps, rep)
		}
		ls = append(ls, LimitSurface{Quantity: l.Quantity, Lo: l.Lo, Hi: l.Hi, Text: l.Limit, Report: rep})
	}
	return ls, reps, nil
}

// FitConstrained fits the problem's one objective with base's model and
// terms, and every limited quantity by cross-validation, and finds the
// objective's optimum among the points whose predicted limited
// quantities keep their limits; the best measured run is the best one
// whose own averages keep them. It returns the objective's report and the
// limited quantities' ones.
func (p *Problem) FitConstrained(base Options) (*Report, []*Report, error) {
	if len(p.Objectives) != 1 {
		return nil, nil, errors.New("fit: a constrained optimum has one objective")
	}
	ls, reps, err := p.limitSurfaces(base, nil)
	if err != nil {
		return nil, nil, err
	}
	o := p.Objectives[0]
	opts := o.In.Options(base)
	opts.Maximize, opts.Limits, opts.RunLimits = o.Maximize, ls, p.runLimits(o.In)
	rep, err := Fit(o.In.Data, opts)
	if err != nil {
		return nil, nil, fmt.Errorf("fit %s: %w", o.Quantity, err)
	}
	rep.Response, rep.LeftOut = o.Quantity, o.In.Left
	return rep, reps, nil
}

// FrontPoint is a point of the predicted front: its parameters and each
// objective's and limited quantity's prediction there.
type FrontPoint struct {
	Params map[string]float64 `json:"params"`
	Values []LimitValue       `json:"values"`
	// Chance is the probability that the limited quantities keep their
	// limits there (1 without limits).
	Chance float64   `json:"p_within"`
	X      []float64 `json:"-"`
}

// Front is the trade-off the surfaces predict between several objectives.
type Front struct {
	Objectives []string `json:"objectives"`
	Better     []string `json:"better"`
	Params     []string `json:"param_names"`
	Limits     []string `json:"limits,omitempty"`
	// Surfaces are the objectives' fits, then the other limited
	// quantities'.
	Surfaces []*Report `json:"surfaces"`
	// Points are up to MaxFrontPoints points spread along the front of
	// the surfaces' means, in order of the first objective; Size is how
	// many distinct points of the screen were on it (one per box of the
	// tie widths; see tradeoff.FrontWithin).
	Points []FrontPoint `json:"points"`
	Size   int          `json:"size"`
	// Screened is the number of points of the parameter range screened.
	Screened int `json:"screened"`
}

// MaxFrontPoints bounds the points of a predicted front that are kept.
const MaxFrontPoints = 12

// FitFront fits every objective and limited quantity (each model chosen
// by cross-validation, unless base names one for the objectives) and
// predicts their front: of a space-filling screen of the parameter range
// (a Latin hypercube, with a third of the points on a face of the box
// and a sixth on an edge, where trade-offs often lie), the points whose
// predicted limited quantities keep their limits and whose predicted
// objectives no other such point beats (differences below a run's own
// 95 % half-width count as ties; see tradeoff.FrontWithin); up to MaxFrontPoints of them, spread
// along the front, are kept with every prediction's 95 % interval.
func (p *Problem) FitFront(base Options) (*Front, error) {
	if len(p.Objectives) < 2 {
		return nil, errors.New("fit: a front needs two or more objectives")
	}
	f := &Front{}
	var objs []*Report
	byName := map[string]*Report{}
	for _, o := range p.Objectives {
		opts := o.In.Options(base)
		opts.Maximize = o.Maximize
		rep, err := Fit(o.In.Data, opts)
		if err != nil {
			return nil, fmt.Errorf("fit %s: %w", o.Quantity, err)
		}
		rep.Response, rep.LeftOut = o.Quantity, o.In.Left
		objs = append(objs, rep)
		byName[o.Quantity] = rep
		f.Objectives = append(f.Objectives, o.Quantity)
		f.Better = append(f.Better, recipe.BetterWord(!o.Maximize))
	}
	ls, lreps, err := p.limitSurfaces(base, byName)
	if err != nil {
		return nil, err
	}
	for _, l := range ls {
		f.Limits = append(f.Limits, l.Text)
	}
	f.Surfaces = append(objs, lreps...)
	in := p.Objectives[0].In
	f.Params = in.Data.Names
	b := in.Data.Bounds
	k := len(b.Lo)
	n := min(20000, 4000*k)
	f.Screened = n
	rng := rand.New(rand.NewPCG(base.Seed+5, 0xf407))
	lo, hi := toFitted(b.Lo, in.Log), toFitted(b.Hi, in.Log)
	var xs [][]float64
	var ys [][]float64
	for _, u := range screen(rng, n, k) {
		v := make([]float64, k)
		for j := range v {
			v[j] = lo[j] + u[j]*(hi[j]-lo[j])
		}
		x := toNatural(v, in.Log)
		if (base.Feasible != nil && !base.Feasible(x)) || !keeps(ls, x) {
			continue
		}
		y := make([]float64, len(objs))
		for j, r := range objs {
			y[j] = r.Mean(x)
			if p.Objectives[j].Maximize {
				y[j] = -y[j]
			}
		}
		xs, ys = append(xs, x), append(ys, y)
	}
	if len(xs) == 0 {
		return nil, fmt.Errorf("no point of the parameter range is predicted to keep the limits (%s): widen the range or the limits, or add runs where the limited quantities are uncertain", limitTexts(ls))
	}
	// Differences below a run's own 95 % half-width (or a billionth of
	// the objective's range over the screen, for runs without errors) are
	// ties.
	eps := make([]float64, len(objs))
	for j, r := range objs {
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, y := range ys {
			lo, hi = math.Min(lo, y[j]), math.Max(hi, y[j])
		}
		eps[j] = math.Max(1.959964*r.Noise, 1e-9*(hi-lo))
	}
	idx := tradeoff.FrontWithin(ys, eps)
	f.Size = len(idx)

	var fy [][]float64
	for _, i := range idx {
		fy = append(fy, ys[i])
	}
	for _, s := range spread(fy, MaxFrontPoints) {
		x := xs[idx[s]]
		pt := FrontPoint{Params: map[string]float64{}, X: x, Chance: 1}
		for j, name := range f.Params {
			pt.Params[name] = x[j]
		}
		for j, r := range objs {
			m, hw, _ := r.Interval(x)
			pt.Values = append(pt.Values, LimitValue{Quantity: f.Objectives[j], Mean: m, HalfWidth: hw, Chance: 1, Within: true})
		}
		for _, lv := range limitValues(ls, x) {
			if byName[lv.Quantity] == nil {
				pt.Values = append(pt.Values, lv)
			}
			pt.Chance *= lv.Chance
		}
		f.Points = append(f.Points, pt)
	}
	slices.SortFunc(f.Points, func(a, b FrontPoint) int { return cmp(a.Values[0].Mean, b.Values[0].Mean) })
	return f, nil
}

func cmp(a, b float64) int {
	switch {
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}

// screen returns n points of the unit cube: a Latin hypercube, with a
// third of them moved onto a face of the cube (one coordinate at 0 or 1)
// and a sixth onto an edge (two coordinates).
func screen(rng *rand.Rand, n, k int) [][]float64 {
	pts := make([][]float64, n)
	for j := range k {
		perm := rng.Perm(n)
		for i := range n {
			if j == 0 {
				pts[i] = make([]float64, k)
			}
			pts[i][j] = (float64(perm[i]) + rng.Float64()) / float64(n)
		}
	}
	for i := range pts {
		faces := 0
		switch {
		case i%6 == 0 && k >= 2:
			faces = 2
		case i%3 == 1:
			faces = 1
		}
		for _, j := range rng.Perm(k)[:faces] {
			pts[i][j] = float64(rng.IntN(2))
		}
	}
	return pts
}

// spread returns the indices of up to n points of a front spread along
// it: the extremes of each objective first, then repeatedly the point
// farthest from those chosen, distances taken with each objective scaled
// by its range on the front.
func spread(ys [][]float64, n int) []int {
	if len(ys) <= n {
		out := make([]int, len(ys))
		for i := range out {
			out[i] = i
		}
		return out
	}
	m := len(ys[0])
	lo, hi := slices.Clone(ys[0]), slices.Clone(ys[0])
	for _, y := range ys {
		for j := range m {
			lo[j], hi[j] = math.Min(lo[j], y[j]), math.Max(hi[j], y[j])
		}
	}
	dist := func(a, b []float64) float64 {
		s := 0.0
		for j := range m {
			if r := hi[j] - lo[j]; r > 0 {
				d := (a[j] - b[j]) / r
				s += d * d
			}
		}
		return s
	}
	var out []int
	for j := range m {
		best := 0
		for i, y := range ys {
			if y[j] < ys[best][j] {
				best = i
			}
		}
		if !slices.Contains(out, best) {
			out = append(out, best)
		}
	}
	near := make([]float64, len(ys))
	for i := range ys {
		near[i] = math.Inf(1)
		for _, c := range out {
			near[i] = math.Min(near[i], dist(ys[i], ys[c]))
		}
	}
	for len(out) < n {
		far := -1
		for i := range ys {
			if far < 0 || near[i] > near[far] {
				far = i
			}
		}
		if near[far] == 0 {
			break
		}
		out = append(out, far)
		for i := range ys {
			near[i] = math.Min(near[i], dist(ys[i], ys[far]))
		}
	}
	return out
}

// Names returns the problem's objective names joined by commas.
func (p *Problem) Names() string {
	var n []string
	for _, o := range p.Objectives {
		n = append(n, o.Quantity)
	}
	return strings.Join(n, ", ")
}
