package plan

import (
	"fmt"
	"sort"
	"strings"

	"github.com/sweep-cfd/sweep/internal/doe"
	"github.com/sweep-cfd/sweep/internal/recipe"
)

// generators build the points of each design method the recipe may name.
var generators = map[string]func(*recipe.Recipe) ([]recipe.Point, error){
	"factorial": factorial,
	"table":     func(r *recipe.Recipe) ([]recipe.Point, error) { return r.Design.Points, nil },
}

// Points returns the design's points, each with a value for every
// parameter in recipe order.
func Points(r *recipe.Recipe) ([]recipe.Point, error) {
	gen, ok := generators[r.Design.Method]
	if !ok {
		return nil, fmt.Errorf("design method %q has no generator", r.Design.Method)
	}
	pts, err := gen(r)
	if err != nil {
		return nil, err
	}
	if len(pts) == 0 {
		return nil, fmt.Errorf("%s:%d: the design has no point; the study would have no variant", r.File, r.Design.Line)
	}
	return pts, nil
}

func factorial(r *recipe.Recipe) ([]recipe.Point, error) {
	levels := make([]int, len(r.Params))
	for i, p := range r.Params {
		levels[i] = p.Levels(r.Design.Steps)
	}
	return fromUnit(r, doe.FullFactorial(levels), "factorial"), nil
}

// fromUnit maps unit-cube points to parameter values.
func fromUnit(r *recipe.Recipe, unit [][]float64, what string) []recipe.Point {
	pts := make([]recipe.Point, len(unit))
	for i, u := range unit {
		vals := make([]recipe.Value, len(r.Params))
		for j, p := range r.Params {
			vals[j] = p.At(u[j])
		}
		pts[i] = recipe.Point{Values: vals, Where: fmt.Sprintf("%s point %d", what, i+1)}
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
