package fit

import (
	"fmt"
	"math"

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
// "variance". It fits a kriging surface to d for the purpose. The points
// come back as full parameter values: varying parameters from the
// proposal (numeric levels snapped to the nearest level), the others as
// in the first run.
func Next(r *recipe.Recipe, d surface.Data, cols []int, vs []results.Variant, k int, criterion string, maximize bool, seed uint64) ([]recipe.Point, []surface.Proposal, error) {
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
	props, err := surface.Propose(kr, surface.InfillOptions{Criterion: crit, Maximize: maximize, K: k, Feasible: Feasible(r, cols, vs), Seed: seed + 3})
	if err != nil {
		return nil, nil, err
	}
	pts := make([]recipe.Point, len(props))
	for i, p := range props {
		vals := append([]recipe.Value(nil), vs[0].Values...)
		for j, c := range cols {
			par := r.Params[c]
			x := p.X[j]
			if par.Kind == recipe.Levels {
				best := par.Values[0]
				for _, l := range par.Values {
					if math.Abs(l-x) < math.Abs(best-x) {
						best = l
					}
				}
				x = best
			} else {
				// A ten-thousandth of the range is finer than any solver
				// setting needs, and gives values people can read.
				step := (par.Max - par.Min) / 1e4
				x = math.Round(x/step) * step
				x = par.At(par.Coord(recipe.Num(x))).Num // tidied like every planned value
			}
			vals[c] = recipe.Num(x)
		}
		pts[i] = recipe.Point{Values: vals, Where: fmt.Sprintf("proposed by plan --add (%s, score %.3g)", criterionName(crit), p.Score)}
	}
	return pts, props, nil
}

func criterionName(c surface.Criterion) string {
	if c == surface.CriterionVariance {
		return "largest predictive variance"
	}
	return "expected improvement"
}
