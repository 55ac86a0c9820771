package recipe

import (
	"errors"
	"fmt"
	"math"

	"github.com/sweep-cfd/sweep/internal/doe"
)

// checkSampling checks the settings of the designs that come from package
// doe, and compiles the constraints.
func checkSampling(pr *problems, r *Recipe, d rawDesign) {
	k := len(r.Params)
	only := func(key string, set bool, schemes ...string) {
		if !set {
			return
		}
		for _, m := range schemes {
			if d.Scheme == m {
				return
			}
		}
		pr.at("design."+key, "%s does not apply to scheme = %q; remove it", key, d.Scheme)
	}
	only("steps", d.Steps != nil, "factorial")
	only("count", d.Count != 0, "latin", "sobol")
	only("seed", d.Seed != 0, "latin", "sobol", "morris")
	only("composite", d.Composite != "", "composite")
	only("centre", d.Centre != nil, "composite", "box_behnken")
	only("trajectories", d.Trajectories != 0, "morris")
	only("grid_levels", d.GridLevels != 0, "morris")
	only("baseline", d.Baseline != nil, "one_at_a_time")
	switch d.Scheme {
	case "latin", "sobol":
		if d.Count < 2 {
			pr.at("design", "scheme = %q needs count = N, the number of points (2 or more; about 10 per parameter is common practice)", d.Scheme)
		}
		if d.Scheme == "sobol" && k > doe.MaxSobolDim {
			pr.at("design", "a sobol design takes at most %d parameters (the recipe has %d): use scheme = \"latin\", or vary fewer parameters", doe.MaxSobolDim, k)
		}
	case "composite":
		switch d.Composite {
		case "", "circumscribed", "inscribed", "face":
		default:
			pr.at("design.composite", "composite must be \"circumscribed\", \"inscribed\" or \"face\" (got %q)", d.Composite)
		}
		if r.Design.Composite == "" {
			r.Design.Composite = "circumscribed"
		}
		if k < 2 || k > 10 {
			pr.at("design", "a composite design needs 2 to 10 parameters (the recipe has %d)", k)
		}
	case "box_behnken":
		if k < 3 || k > 7 {
			pr.at("design", "a Box-Behnken design needs 3 to 7 parameters (the recipe has %d)", k)
		}
	case "morris":
		if d.Trajectories < 2 {
			pr.at("design", "scheme = \"morris\" needs trajectories = N (2 or more; 4 to 10 is usual with an expensive solver)")
		}
		switch {
		case d.GridLevels != 0 && (d.GridLevels < 2 || d.GridLevels%2 != 0):
			pr.at("design.grid_levels", "grid_levels must be an even number of 2 or more (got %d)", d.GridLevels)
		case d.GridLevels > MaxGridLevels:
			pr.at("design.grid_levels", "grid_levels = %d is over the limit of %d: lower it (4 to 8 levels are usual)", d.GridLevels, MaxGridLevels)
		}
	case "one_at_a_time":
		if d.Baseline != nil {
			r.Design.Baseline = make([]Value, k)
			for i, p := range r.Params {
				v, ok := d.Baseline[p.Name]
				if !ok {
					pr.at("design.baseline", "the baseline gives no value for parameter %q", p.Name)
					continue
				}
				val, err := toValue(v)
				if err != nil {
					pr.at("design.baseline", "baseline %s: %v", p.Name, err)
					continue
				}
				if good, why := p.Check(val); !good {
					pr.at("design.baseline", "baseline %s = %s %s", p.Name, val, why)
				}
				r.Design.Baseline[i] = val
			}
			for name := range d.Baseline {
				if r.ParamIndex(name) < 0 {
					pr.at("design.baseline", "the baseline names %q, which is not a parameter", name)
				}
			}
		}
	}
	if d.Centre != nil {
		switch {
		case *d.Centre < 0:
			pr.at("design.centre", "centre cannot be negative")
		case *d.Centre > MaxCentre:
			pr.at("design.centre", "centre = %d is over the limit of %d: lower it (repeated centre points of a deterministic solver are planned once)", *d.Centre, MaxCentre)
		default:
			r.Design.Centre = *d.Centre
		}
	} else if d.Scheme == "composite" || d.Scheme == "box_behnken" {
		r.Design.Centre = 3
	}
	if len(d.Constraints) > 0 && (d.Scheme == "table") {
		pr.at("design.constraints", "constraints apply to generated designs; a table's points are yours to choose")
	}
	if len(d.Constraints) > MaxConstraints {
		pr.at("design.constraints", "[design] lists %d constraints, over the limit of %d: combine them with and", len(d.Constraints), MaxConstraints)
		return
	}
	names := make([]string, k)
	for i, p := range r.Params {
		names[i] = p.Name
	}
	for i, src := range d.Constraints {
		c, err := doe.CompileConstraint(src, names)
		if err != nil {
			var ce *doe.ConstraintError
			if errors.As(err, &ce) && ce.Column > 0 {
				pr.at(fmt.Sprintf("design.constraints[%d]", i), "constraint %q, at character %d: %s", src, ce.Column, ce.Msg)
			} else {
				pr.at(fmt.Sprintf("design.constraints[%d]", i), "constraint %q: %v", src, err)
			}
			continue
		}
		r.Design.Constraints = append(r.Design.Constraints, c)
	}
}

// Coord maps a parameter value back to its coordinate in [0,1], the
// inverse of At: a range linearly (or in log(value)), a level or choice to
// the middle of its interval.
func (p Param) Coord(v Value) float64 {
	switch p.Kind {
	case Range:
		if p.Max == p.Min {
			return 0.5
		}
		if p.Log {
			return (math.Log(v.Num) - math.Log(p.Min)) / (math.Log(p.Max) - math.Log(p.Min))
		}
		return (v.Num - p.Min) / (p.Max - p.Min)
	case Levels:
		for i, x := range p.Values {
			if x == v.Num {
				return (float64(i) + 0.5) / float64(len(p.Values))
			}
		}
	case Choice:
		for i, c := range p.Choices {
			if c == v.Text {
				return (float64(i) + 0.5) / float64(len(p.Choices))
			}
		}
	}
	return 0.5
}

// Numbers returns the values the constraints read for a point: each
// parameter's number (a choice parameter reads as its position in the
// list, from 0).
func (r *Recipe) Numbers(vals []Value) map[string]float64 {
	m := make(map[string]float64, len(vals))
	for i, p := range r.Params {
		if p.Kind == Choice {
			for j, c := range p.Choices {
				if c == vals[i].Text {
					m[p.Name] = float64(j)
				}
			}
			continue
		}
		m[p.Name] = vals[i].Num
	}
	return m
}
