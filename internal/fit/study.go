package fit

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"slices"
	"strconv"
	"strings"

	"github.com/sweep-cfd/sweep/internal/harvest"
	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/results"
	"github.com/sweep-cfd/sweep/internal/surface"
)

// StudyData gathers the runs of a study for a surface of one quantity:
// the numeric parameters (choice parameters must not vary), each
// converged or steady variant's mean as the response and its standard
// error as the noise. Variants that failed, did not converge or never ran
// are left out and listed.
func StudyData(r *recipe.Recipe, vs []results.Variant, quantity string) (surface.Data, []int, []LeftOut, error) {
	var d surface.Data
	var cols []int // recipe parameter index of each surface input
	for i, p := range r.Params {
		switch p.Kind {
		case recipe.Range:
			if p.Max > p.Min {
				cols = append(cols, i)
				d.Bounds.Lo, d.Bounds.Hi = append(d.Bounds.Lo, p.Min), append(d.Bounds.Hi, p.Max)
			}
		case recipe.Levels:
			lo, hi := slices.Min(p.Values), slices.Max(p.Values)
			if hi > lo {
				cols = append(cols, i)
				d.Bounds.Lo, d.Bounds.Hi = append(d.Bounds.Lo, lo), append(d.Bounds.Hi, hi)
			}
		}
	}
	var left []LeftOut
	choice := map[int]string{}
	for _, v := range vs {
		res, ok := v.Results[quantity]
		switch {
		case !ok:
			left = append(left, LeftOut{v.Label, "not harvested (" + string(v.State) + ")"})
			continue
		case res.Verdict != harvest.Converged && res.Verdict != harvest.Steady:
			why := string(res.Verdict)
			if res.Message != "" {
				why += ": " + res.Message
			}
			left = append(left, LeftOut{v.Label, why})
			continue
		}
		for i, p := range r.Params {
			if p.Kind == recipe.Choice {
				if c, seen := choice[i]; seen && c != v.Values[i].Text {
					return d, nil, nil, fmt.Errorf("parameter %q is a choice and varies among the runs (%s, %s); a surface needs numbers: fit each choice apart with `sweep fit --table`", p.Name, c, v.Values[i].Text)
				}
				choice[i] = v.Values[i].Text
			}
		}
		x := make([]float64, len(cols))
		for j, c := range cols {
			x[j] = v.Values[c].Num
		}
		se := res.Estimate().StdError
		if !(se > 0) {
			se = math.Max(1e-12, 1e-9*math.Abs(res.Mean))
		}
		d.X, d.Y, d.SE = append(d.X, x), append(d.Y, res.Mean), append(d.SE, se)
	}
	for _, c := range cols {
		d.Names = append(d.Names, r.Params[c].Name)
	}
	if len(cols) == 0 {
		return d, nil, left, errors.New("no numeric parameter varies in this study: there is no surface to fit")
	}
	return d, cols, left, nil
}

// TableData reads a CSV table: a header row, one column per parameter and
// the response column; every cell a number. The bounds are the columns'
// ranges.
func TableData(path, response string) (surface.Data, error) {
	var d surface.Data
	f, err := os.Open(path)
	if err != nil {
		return d, err
	}
	defer f.Close()
	cr := csv.NewReader(f)
	cr.Comment = '#'
	cr.TrimLeadingSpace = true
	head, err := cr.Read()
	if err != nil {
		return d, fmt.Errorf("%s: no header row: %v", path, err)
	}
	resp := -1
	for i, h := range head {
		if strings.TrimSpace(h) == response {
			resp = i
		} else {
			d.Names = append(d.Names, strings.TrimSpace(h))
		}
	}
	if resp < 0 {
		return d, fmt.Errorf("%s: no column %q; the header has %s (name the response with --response)", path, response, strings.Join(head, ", "))
	}
	if len(d.Names) == 0 {
		return d, fmt.Errorf("%s: no parameter column beside the response", path)
	}
	for {
		rec, err := cr.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		line, _ := cr.FieldPos(0)
		if err != nil {
			return d, fmt.Errorf("%s:%d: %v", path, line, err)
		}
		var x []float64
		var y float64
		for i, cell := range rec {
			v, err := strconv.ParseFloat(strings.TrimSpace(cell), 64)
			if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
				return d, fmt.Errorf("%s:%d: %q (column %s) is not a finite number", path, line, cell, head[i])
			}
			if i == resp {
				y = v
			} else {
				x = append(x, v)
			}
		}
		d.X, d.Y = append(d.X, x), append(d.Y, y)
	}
	if len(d.Y) == 0 {
		return d, fmt.Errorf("%s: no data rows", path)
	}
	for j := range d.Names {
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, x := range d.X {
			lo, hi = math.Min(lo, x[j]), math.Max(hi, x[j])
		}
		if !(hi > lo) {
			hi = lo + math.Max(1, math.Abs(lo))*1e-9 // a constant column
		}
		d.Bounds.Lo, d.Bounds.Hi = append(d.Bounds.Lo, lo), append(d.Bounds.Hi, hi)
	}
	return d, nil
}
