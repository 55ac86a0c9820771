package plan

import (
	"fmt"
	"path/filepath"
	"sort"
	"strings"

	"github.com/sweep-cfd/sweep/internal/doe"
	"github.com/sweep-cfd/sweep/internal/recipe"
)

// generators build the unit-cube points of each design method the recipe
// may name, with a note on the design's quality; explicit tables are
// handled apart.
var generators = map[string]func(*recipe.Recipe) ([][]float64, string){
	"factorial": func(r *recipe.Recipe) ([][]float64, string) {
		levels := make([]int, len(r.Params))
		for i, p := range r.Params {
			levels[i] = p.Levels(r.Design.Steps)
		}
		return doe.FullFactorial(levels), "full factorial"
	},
	"latin": func(r *recipe.Recipe) ([][]float64, string) {
		pts, d := doe.LatinHypercube(r.Design.Count, len(r.Params), doe.LatinHypercubeOptions{Seed: r.Design.Seed})
		return pts, fmt.Sprintf("maximin Latin hypercube, seed %d: minimum distance %.3g in the unit cube", r.Design.Seed, d)
	},
	"sobol": func(r *recipe.Recipe) ([][]float64, string) {
		pts := doe.SobolPoints(r.Design.Count, len(r.Params), doe.SobolOptions{Scramble: true, Seed: r.Design.Seed})
		return pts, fmt.Sprintf("scrambled Sobol' points, seed %d: centred L2 discrepancy %.3g", r.Design.Seed, doe.CenteredL2Discrepancy(pts))
	},
	"composite": func(r *recipe.Recipe) ([][]float64, string) {
		kind := map[string]doe.CompositeKind{"circumscribed": doe.Circumscribed, "inscribed": doe.Inscribed, "face": doe.FaceCentred}[r.Design.Composite]
		return doe.CentralComposite(len(r.Params), kind, r.Design.Centre),
			fmt.Sprintf("central composite (%s, alpha %.4g), %d centre points", r.Design.Composite, doe.RotatableAlpha(len(r.Params)), r.Design.Centre)
	},
	"box_behnken": func(r *recipe.Recipe) ([][]float64, string) {
		return doe.BoxBehnken(len(r.Params), r.Design.Centre), fmt.Sprintf("Box-Behnken, %d centre points", r.Design.Centre)
	},
	"one_at_a_time": func(r *recipe.Recipe) ([][]float64, string) {
		base := make([]float64, len(r.Params))
		for i, p := range r.Params {
			base[i] = 0.5
			if r.Design.Baseline != nil {
				base[i] = p.Coord(r.Design.Baseline[i])
			}
		}
		return doe.OneAtATime(base, nil, nil), "one factor at a time around the baseline"
	},
	"morris": func(r *recipe.Recipe) ([][]float64, string) {
		levels := r.Design.GridLevels
		if levels == 0 {
			levels = 4
		}
		return doe.Morris(len(r.Params), doe.MorrisOptions{Levels: levels, Trajectories: r.Design.Trajectories, Seed: r.Design.Seed}),
			fmt.Sprintf("Morris elementary-effects screening: %d trajectories, %d levels", r.Design.Trajectories, levels)
	},
}

// Points returns the design's points, each with a value for every
// parameter in recipe order, and a note on the design (its quality, and
// points replaced or dropped by the constraints).
func Points(r *recipe.Recipe) ([]recipe.Point, string, error) {
	if r.Design.Scheme == "table" {
		if len(r.Design.Points) == 0 {
			return nil, "", fmt.Errorf("%s:%d: the design has no point; the study would have no variant", r.File, r.Design.Line)
		}
		return r.Design.Points, "explicit table", nil
	}
	gen, ok := generators[r.Design.Scheme]
	if !ok {
		return nil, "", fmt.Errorf("design scheme %q has no generator", r.Design.Scheme)
	}
	unit, note := gen(r)
	if len(r.Design.Constraints) > 0 {
		mapping := func(u []float64) map[string]float64 { return r.Numbers(valuesAt(r, u)) }
		opts := doe.ConstrainOptions{Mapping: mapping}
		switch r.Design.Scheme {
		case "sobol":
			opts.Candidates = doe.NewSobol(len(r.Params), doe.SobolOptions{Scramble: true, Seed: r.Design.Seed + 1})
		case "latin":
			opts.Candidates, opts.Spread = doe.NewUniformCandidates(len(r.Params), r.Design.Seed+1), 20
		}
		res, err := doe.Constrain(unit, r.Design.Constraints, opts)
		if err != nil {
			return nil, "", fmt.Errorf("%w: %s:%d: %v; loosen the constraints", recipe.ErrInvalid, filepath.Base(r.File), r.Design.Line, err)
		}
		unit = res.Points
		switch {
		case len(res.Replaced) > 0:
			note += fmt.Sprintf("; %d points failed the constraints and were replaced", len(res.Replaced))
		case len(res.Dropped) > 0:
			note += fmt.Sprintf("; %d points failed the constraints and were dropped", len(res.Dropped))
		}
	}
	if len(unit) == 0 {
		return nil, "", fmt.Errorf("%s:%d: the design has no point; the study would have no variant", r.File, r.Design.Line)
	}
	return fromUnit(r, unit, r.Design.Scheme), note, nil
}

func valuesAt(r *recipe.Recipe, u []float64) []recipe.Value {
	vals := make([]recipe.Value, len(r.Params))
	for j, p := range r.Params {
		vals[j] = p.At(u[j])
	}
	return vals
}

// fromUnit maps unit-cube points to parameter values.
func fromUnit(r *recipe.Recipe, unit [][]float64, what string) []recipe.Point {
	pts := make([]recipe.Point, len(unit))
	for i, u := range unit {
		pts[i] = recipe.Point{Values: valuesAt(r, u), Where: fmt.Sprintf("%s point %d", what, i+1)}
	}
	return pts
}

// pointKey identifies a design point across re-planning: its name when it
// has one, otherwise its values, listed by parameter name so that the key
// does not depend on the order of the parameters in the recipe.
func pointKey(names []string, pt recipe.Point) string {
	if pt.Name != "" {
		return "name:" + pt.Name
	}
	idx := make([]int, len(names))
	for i := range idx {
		idx[i] = i
	}
	sort.Slice(idx, func(a, b int) bool { return names[idx[a]] < names[idx[b]] })
	var b strings.Builder
	b.WriteString("values:")
	for n, i := range idx {
		if n > 0 {
			b.WriteByte(';')
		}
		b.WriteString(names[i])
		b.WriteByte('=')
		if pt.Values[i].IsText() {
			b.WriteByte('"')
		}
		b.WriteString(pt.Values[i].String())
	}
	return b.String()
}
