package results

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"strings"

	"github.com/sweep-cfd/sweep/internal/gci"
	"github.com/sweep-cfd/sweep/internal/harvest"
	"github.com/sweep-cfd/sweep/internal/recipe"
)

// MeshGroup is the grid-convergence analysis of one setup: the variants
// that differ only in the mesh level.
type MeshGroup struct {
	Setup  map[string]any `json:"setup"` // the other parameters' values
	Labels []string       `json:"labels"`
	// Cell sizes, values and half-widths of the quantity on each grid,
	// fine to coarse (the analysis uses the finest three).
	H          []float64  `json:"h"`
	Means      []float64  `json:"means"`
	HalfWidths []float64  `json:"half_widths"`
	Result     gci.Result `json:"gci"`
	Error      string     `json:"error,omitempty"`
	Notes      []string   `json:"notes,omitempty"`
}

// ErrNoMesh is returned for a study without a mesh-level parameter.
var ErrNoMesh = errors.New("no mesh level")

// MeshStudy runs the grid-convergence analysis (Celik et al. 2008) for a
// quantity over the recipe's mesh-level parameter, once per setup of the
// other parameters that has three or more converged grid levels.
func MeshStudy(r *recipe.Recipe, vs []Variant, quantity string) ([]MeshGroup, error) {
	mi := -1
	for i, p := range r.Params {
		if p.Mesh != "" {
			mi = i
		}
	}
	if mi < 0 {
		return nil, fmt.Errorf("%w: mark the mesh parameter in the recipe, e.g. mesh = \"resolution\" on a [[param]] of cells per length", ErrNoMesh)
	}
	mp := r.Params[mi]
	groups := map[string]*MeshGroup{}
	var order []string
	type run struct {
		label string
		h     float64
		res   harvest.Result
	}
	runs := map[string][]run{}
	for _, v := range vs {
		res, ok := v.Results[quantity]
		if !ok || (res.Verdict != harvest.Converged && res.Verdict != harvest.Steady) {
			continue
		}
		var key []string
		setup := map[string]any{}
		for i, p := range r.Params {
			if i != mi {
				key = append(key, p.Name+"="+v.Values[i].String())
				setup[p.Name] = v.Params[p.Name]
			}
		}
		k := strings.Join(key, " ")
		if groups[k] == nil {
			groups[k] = &MeshGroup{Setup: setup}
			order = append(order, k)
		}
		runs[k] = append(runs[k], run{v.Label, mp.CellSize(v.Values[mi].Num), res})
	}
	var out []MeshGroup
	for _, k := range order {
		g := groups[k]
		rs := runs[k]
		sort.Slice(rs, func(i, j int) bool { return rs[i].h < rs[j].h })
		var grids []gci.Grid
		for _, x := range rs {
			g.Labels = append(g.Labels, x.label)
			g.H = append(g.H, x.h)
			g.Means = append(g.Means, x.res.Mean)
			g.HalfWidths = append(g.HalfWidths, x.res.HalfWidth)
			grids = append(grids, gci.Grid{H: x.h, Value: x.res.Mean})
		}
		res, err := gci.Analyze(grids)
		if err != nil {
			g.Error = err.Error()
		} else {
			g.Result = res
			if len(rs) >= 2 && math.Abs(rs[0].res.Mean-rs[1].res.Mean) < rs[0].res.HalfWidth+rs[1].res.HalfWidth {
				g.Notes = append(g.Notes, "the two finest grids differ by less than their statistical intervals: the apparent order and GCI rest on noise")
			}
		}
		out = append(out, *g)
	}
	if len(out) == 0 {
		return nil, fmt.Errorf("no setup has converged results of %s on the mesh levels of %q; harvest the study first", quantity, mp.Name)
	}
	return out, nil
}
