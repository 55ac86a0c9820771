package fit

import (
	"errors"
	"fmt"
	"math"
	"slices"

	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/results"
	"github.com/sweep-cfd/sweep/internal/surface"
)

// Feasible returns the recipe's constraints as a test on surface inputs
// (natural units of the parameters in cols); parameters that do not vary
// read as the first run's value. It returns nil without constraints.
func Feasible(r *recipe.Recipe, cols []int, vs []results.Variant) func(x []float64) bool {
	if len(r.Design.Constraints) == 0 || len(vs) == 0 {
		return nil
	}
	fixed := vs[0].Values
	return func(x []float64) bool {
		vals := append([]recipe.Value(nil), fixed...)
		for j, c := range cols {
			vals[c] = recipe.Num(x[j])
		}
		nums := r.Numbers(vals)
		for _, c := range r.Design.Constraints {
			if ok, err := c.Eval(nums); err != nil || !ok {
				return false
			}
		}
		return true
	}
}

// Next proposes k new points where they help most: by expected
// improvement of the objective (Jones, Schonlau & Welch 1998) when
// criterion is "ei", or where the surface is least certain when it is
// "variance". It fits a kriging surface to the inputs for the purpose
// (in log10 of the parameters declared log = true). The points come back
// as full parameter values: varying parameters from the proposal, numeric
// levels snapped to the nearest level before they are scored, so a batch
// never repeats a run or itself; the others as in the first run. When no
// new point is possible (every combination of levels has run), the error
// says so.
func Next(r *recipe.Recipe, in *Inputs, vs []results.Variant, k int, criterion string, maximize bool, seed uint64) ([]recipe.Point, []surface.Proposal, error) {
	d := fittedData(in.Data, in.Log)
	kr, err := surface.FitKriging(d, surface.KrigingOptions{Kernel: surface.Matern52, Seed: seed})
	if err != nil {
		return nil, nil, fmt.Errorf("fit the kriging surface that proposes points: %w", err)
	}
	crit := surface.CriterionEI
	switch criterion {
	case "", "ei":
	case "variance":
		crit = surface.CriterionVariance
	default:
		return nil, nil, fmt.Errorf("unknown criterion %q: use ei or variance", criterion)
	}
	snap := snapper(r, in)
	feasible := Feasible(r, in.Cols, vs)
	opts := surface.InfillOptions{Criterion: crit, Maximize: maximize, K: k, Seed: seed + 3, Avoid: planned(in, vs),
		Snap: func(u []float64) []float64 { return toFitted(snap(toNatural(u, in.Log)), in.Log) }}
	if feasible != nil {
		opts.Feasible = func(u []float64) bool { return feasible(toNatural(u, in.Log)) }
	}
	props, err := surface.Propose(kr, opts)
	return points(r, in, vs, k, props, err, criterionName(crit), snap)
}

// points turns proposals into full parameter values: varying parameters
// from the proposal, snapped once more (the search's unit box leaves
// rounding in its digits), the others as in the first run.
func points(r *recipe.Recipe, in *Inputs, vs []results.Variant, k int, props []surface.Proposal, err error, why string, snap func([]float64) []float64) ([]recipe.Point, []surface.Proposal, error) {
	if err != nil {
		if errors.Is(err, surface.ErrNoFeasible) {
			if n, all := levelCombinations(r, in); all {
				err = fmt.Errorf("every parameter that varies takes listed levels, and the study's variants and the points proposed fill all %d of their combinations: list more levels in %s, or give a parameter a range (min, max) so that new values can be proposed", n, recipe.FileName)
			}
		}
		if len(props) == 0 {
			return nil, nil, fmt.Errorf("no new point can be proposed: %w", err)
		}
		return nil, nil, fmt.Errorf("only %d of the %d points asked for can be proposed: %w", len(props), k, err)
	}
	pts := make([]recipe.Point, len(props))
	for i, p := range props {
		x := snap(toNatural(p.X, in.Log))
		props[i].X = x
		vals := append([]recipe.Value(nil), vs[0].Values...)
		for j, c := range in.Cols {
			vals[c] = recipe.Num(x[j])
		}
		pts[i] = recipe.Point{Values: vals, Where: fmt.Sprintf("proposed by plan --add (%s, score %.3g)", why, p.Score)}
	}
	return pts, props, nil
}

// Next proposes k new points for a problem with limits or with several
// objectives: by expected improvement times the probability of keeping
// the limits for one objective, by expected hypervolume improvement
// times that probability for several (see surface.Target). Every
// objective and limited quantity gets a kriging surface of its own; the
// hypervolume's reference point lies a tenth of each objective's range of
// measured values beyond its worst one (common practice). Points are
// snapped and checked as Next does.
func (p *Problem) Next(r *recipe.Recipe, vs []results.Variant, k int, seed uint64) ([]recipe.Point, []surface.Proposal, error) {
	var ms []*surface.Kriging
	t := surface.Target{Objectives: len(p.Objectives)}
	for _, part := range append(slices.Clone(p.Objectives), p.Limits...) {
		kr, err := surface.FitKriging(fittedData(part.In.Data, part.In.Log), surface.KrigingOptions{Kernel: surface.Matern52, Seed: seed})
		if err != nil {
			return nil, nil, fmt.Errorf("fit the kriging surface of %s that proposes points: %w", part.Quantity, err)
		}
		ms = append(ms, kr)
	}
	for _, o := range p.Objectives {
		t.Maximize = append(t.Maximize, o.Maximize)
		ys := o.In.Data.Y
		lo, hi := slices.Min(ys), slices.Max(ys)
		ref := hi + 0.1*(hi-lo)
		if o.Maximize {
			ref = lo - 0.1*(hi-lo)
		}
		t.Ref = append(t.Ref, ref)
	}
	for _, l := range p.Limits {
		t.Limits = append(t.Limits, [2]float64{l.Lo, l.Hi})
	}
	in := p.Objectives[0].In
	snap := snapper(r, in)
	feasible := Feasible(r, in.Cols, vs)
	opts := surface.InfillOptions{K: k, Seed: seed + 3, Avoid: planned(in, vs),
		Snap: func(u []float64) []float64 { return toFitted(snap(toNatural(u, in.Log)), in.Log) }}
	if feasible != nil {
		opts.Feasible = func(u []float64) bool { return feasible(toNatural(u, in.Log)) }
	}
	props, err := surface.ProposeFor(ms, t, opts)
	why := "expected improvement × chance of keeping the limits"
	if len(p.Objectives) > 1 {
		why = "expected hypervolume improvement"
		if len(p.Limits) > 0 {
			why += " × chance of keeping the limits"
		}
	}
	return points(r, in, vs, k, props, err, why, snap)
}

// planned returns the points (natural units of the inputs) of the
// variants that are not among the inputs' runs: pending, failed or left
// out, so that no proposal repeats them.
func planned(in *Inputs, vs []results.Variant) [][]float64 {
	fitted := map[string]bool{}
	for _, l := range in.Labels {
		fitted[l] = true
	}
	var out [][]float64
	for _, v := range vs {
		if fitted[v.Label] || len(v.Values) == 0 {
			continue
		}
		x := make([]float64, len(in.Cols))
		for j, c := range in.Cols {
			x[j] = v.Values[c].Num
		}
		out = append(out, x)
	}
	return out
}

// levelCombinations returns the number of combinations of the varying
// parameters' levels, and whether every varying parameter has levels.
func levelCombinations(r *recipe.Recipe, in *Inputs) (int, bool) {
	n := 1
	for _, c := range in.Cols {
		p := r.Params[c]
		if p.Kind != recipe.Levels {
			return 0, false
		}
		n *= len(p.Values)
	}
	return n, true
}

// snapper returns the map of a surface point (natural units) to the
// nearest value a variant can take: numeric levels to the nearest level,
// ranges to a ten-thousandth of their span (finer than any solver setting
// needs), tidied like every planned value.
func snapper(r *recipe.Recipe, in *Inputs) func(x []float64) []float64 {
	return func(x []float64) []float64 {
		out := make([]float64, len(x))
		for j, c := range in.Cols {
			par := r.Params[c]
			v := x[j]
			if par.Kind == recipe.Levels {
				best := par.Values[0]
				for _, l := range par.Values {
					if math.Abs(l-v) < math.Abs(best-v) {
						best = l
					}
				}
				v = best
			} else {
				step := (par.Max - par.Min) / 1e4
				v = math.Round(v/step) * step
				v = par.At(par.Coord(recipe.Num(v))).Num
			}
			out[j] = v
		}
		return out
	}
}

func criterionName(c surface.Criterion) string {
	if c == surface.CriterionVariance {
		return "largest predictive variance"
	}
	return "expected improvement"
}
