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
	if errors.Is(err, io.EOF) {
		return d, fmt.Errorf("%s: the table is empty: write a header row naming the columns, then one row per run", path)
	}
	if err != nil {
		return d, tableError(path, err, len(head), 0)
	}
	resp := -1
	seen := map[string]bool{}
	for i, h := range head {
		h = strings.TrimSpace(h)
		head[i] = h
		if seen[h] {
			line, _ := cr.FieldPos(i)
			return d, fmt.Errorf("%s:%d: column %q appears twice in the header: keep one", path, line, h)
		}
		seen[h] = true
		if h == response {
			resp = i
		} else {
			d.Names = append(d.Names, h)
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
		if err != nil {
			// The reader's position is only defined for a record it
			// returned without error: the line comes from the error.
			return d, tableError(path, err, len(rec), len(head))
		}
		line, _ := cr.FieldPos(0)
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
		if !(hi > lo) { // a constant column: give it a width
			w := math.Max(1, math.Abs(lo)) * 1e-9
			if hi = lo + w; math.IsInf(hi, 0) {
				lo, hi = lo-w, lo // at the largest float, widen downwards
			}
		}
		d.Bounds.Lo, d.Bounds.Hi = append(d.Bounds.Lo, lo), append(d.Bounds.Hi, hi)
	}
	return d, nil
}

// tableError locates an error of the CSV reader in the table: cells is the
// number of cells it returned with the error, width the header's (0 while
// reading the header itself).
func tableError(path string, err error, cells, width int) error {
	var pe *csv.ParseError
	if !errors.As(err, &pe) {
		return fmt.Errorf("%s: %v", path, err)
	}
	if errors.Is(pe.Err, csv.ErrFieldCount) {
		return fmt.Errorf("%s:%d: the row has %s and the header %d: give every row one cell per header column", path, pe.Line, plural(cells, "cell"), width)
	}
	return fmt.Errorf("%s:%d: not valid CSV at column %d: %v: put a cell that holds a comma or a quote in double quotes, each inner quote doubled", path, pe.Line, pe.Column, pe.Err)
}

// plural writes n and a noun, with an s unless n is 1.
func plural(n int, noun string) string {
	if n == 1 {
		return "1 " + noun
	}
	return fmt.Sprintf("%d %ss", n, noun)
}
