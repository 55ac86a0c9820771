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

	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/results"
	"github.com/sweep-cfd/sweep/internal/surface"
)

// Inputs are a study's runs prepared for a surface of one quantity.
type Inputs struct {
	Data surface.Data
	// Cols holds the recipe parameter index of each surface input.
	Cols []int
	// Labels names the runs, parallel to Data.Y.
	Labels []string
	// Log marks the inputs declared log = true (fitted in log10).
	Log  []bool
	Left []LeftOut
}

// Options returns fit options that carry the inputs' labels and log
// scales.
func (in *Inputs) Options(o Options) Options {
	o.Labels, o.Log = in.Labels, in.Log
	return o
}

// StudyData gathers the runs of a study for a surface of one quantity:
// the numeric parameters (choice parameters must not vary), each
// converged or steady variant's mean as the response and its standard
// error as the noise (never below the rounding of its printed digits;
// see harvest.Result.Estimate). A variant whose interval is honest but
// wider than its tolerance (not_converged) is fitted with that wider
// error; variants without an interval (failed, too short, drifting,
// running, never ran) are left out and listed.
func StudyData(r *recipe.Recipe, vs []results.Variant, quantity string) (*Inputs, error) {
	in := &Inputs{}
	d := &in.Data
	for i, p := range r.Params {
		switch p.Kind {
		case recipe.Range:
			if p.Max > p.Min {
				in.Cols = append(in.Cols, i)
				in.Log = append(in.Log, p.Log)
				d.Bounds.Lo, d.Bounds.Hi = append(d.Bounds.Lo, p.Min), append(d.Bounds.Hi, p.Max)
			}
		case recipe.Levels:
			lo, hi := slices.Min(p.Values), slices.Max(p.Values)
			if hi > lo {
				in.Cols = append(in.Cols, i)
				in.Log = append(in.Log, p.Log)
				d.Bounds.Lo, d.Bounds.Hi = append(d.Bounds.Lo, lo), append(d.Bounds.Hi, hi)
			}
		}
	}
	choice := map[int]string{}
	for _, v := range vs {
		res, ok := v.Results[quantity]
		switch {
		case !ok:
			in.Left = append(in.Left, LeftOut{v.Label, "not harvested (" + string(v.State) + ")"})
			continue
		case !results.HasInterval(res):
			why := string(res.Verdict)
			if res.Message != "" {
				why += ": " + res.Message
			}
			in.Left = append(in.Left, LeftOut{v.Label, why})
			continue
		}
		for i, p := range r.Params {
			if p.Kind == recipe.Choice {
				if c, seen := choice[i]; seen && c != v.Values[i].Text {
					return nil, fmt.Errorf("parameter %q is a choice and varies among the runs (%s, %s); a surface needs numbers: fit each choice apart with `sweep fit --table`", p.Name, c, v.Values[i].Text)
				}
				choice[i] = v.Values[i].Text
			}
		}
		x := make([]float64, len(in.Cols))
		for j, c := range in.Cols {
			x[j] = v.Values[c].Num
		}
		se := res.Estimate().StdError
		if !(se > 0) {
			// Nothing known of its digits either (a history of zeros):
			// a floor far below any real error, so no run weighs
			// infinitely.
			se = 1e-12 * math.Max(math.Abs(res.Mean), 1e-300)
		}
		d.X, d.Y, d.SE = append(d.X, x), append(d.Y, res.Mean), append(d.SE, se)
		in.Labels = append(in.Labels, v.Label)
	}
	for _, c := range in.Cols {
		d.Names = append(d.Names, r.Params[c].Name)
	}
	if len(in.Cols) == 0 {
		return nil, errors.New("no numeric parameter varies in this study: there is no surface to fit")
	}
	return in, nil
}

// TableData reads a CSV table: a header row, then one row per run. The
// response is the named column; every other column whose cells are all
// numbers is a parameter, and columns holding text are ignored (named in
// Ignored). The program's own results/summary.csv is read as it is: its
// parameters are the columns between "state" and the first quantity's,
// the response may be named by its quantity ("drag" for drag_mean), each
// run's standard error comes from <quantity>_std_error, and runs whose
// response is empty (failed, too short) are left out. The bounds are the
// parameter columns' ranges.
func TableData(path, response string, params ...string) (surface.Data, error) {
	d, _, err := ReadTable(path, response, params...)
	return d, err
}

// Table says what ReadTable made of a table besides its data.
type Table struct {
	// Ignored lists the columns left out because they hold text.
	Ignored []string
	// Skipped counts rows without a response value.
	Skipped int
	// Summary is true for the program's own results/summary.csv, and
	// Labels then names each run, parallel to the data.
	Summary bool
	Labels  []string
}

// numericColumn reports whether any cell of column i is a number.
func numericColumn(rows [][]string, i int) bool {
	for _, rec := range rows {
		if _, err := strconv.ParseFloat(strings.TrimSpace(rec[i]), 64); err == nil {
			return true
		}
	}
	return false
}

// ReadTable reads a table as TableData does and says what it ignored.
// Named params are the parameter columns instead of those found: each
// must be a column of numbers.
func ReadTable(path, response string, params ...string) (surface.Data, Table, error) {
	var d surface.Data
	var info Table
	f, err := os.Open(path)
	if err != nil {
		return d, info, err
	}
	defer f.Close()
	cr := csv.NewReader(f)
	cr.Comment = '#'
	cr.TrimLeadingSpace = true
	head, err := cr.Read()
	if errors.Is(err, io.EOF) {
		return d, info, fmt.Errorf("%s: the table is empty: write a header row naming the columns, then one row per run", path)
	}
	if err != nil {
		return d, info, tableError(path, err, len(head), 0)
	}
	seen := map[string]bool{}
	for i, h := range head {
		h = strings.TrimSpace(h)
		head[i] = h
		if seen[h] {
			line, _ := cr.FieldPos(i)
			return d, info, fmt.Errorf("%s:%d: column %q appears twice in the header: keep one", path, line, h)
		}
		seen[h] = true
	}
	var rows [][]string
	var lines []int
	for {
		rec, err := cr.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			// The reader's position is only defined for a record it
			// returned without error: the line comes from the error.
			return d, info, tableError(path, err, len(rec), len(head))
		}
		line, _ := cr.FieldPos(0)
		rows, lines = append(rows, rec), append(lines, line)
	}
	resp, seCol := -1, -1
	named := params
	var cols []int
	info.Summary = len(head) > 4 && strings.Join(head[:4], ",") == "id,label,name,state"
	if info.Summary {
		// The program's summary: parameters until the first quantity;
		// a choice parameter's column holds words and is left out.
		for i := 4; i < len(head); i++ {
			if strings.HasSuffix(head[i], "_mean") {
				break
			}
			if numericColumn(rows, i) {
				cols = append(cols, i)
			} else {
				info.Ignored = append(info.Ignored, head[i])
			}
		}
		for i, h := range head {
			if h == response || h == response+"_mean" {
				resp = i
				q := strings.TrimSuffix(h, "_mean")
				for k, h2 := range head {
					if h2 == q+"_std_error" {
						seCol = k
					}
				}
			}
		}
	} else {
		for i, h := range head {
			if h == response {
				resp = i
				continue
			}
			// A column where no cell is a number holds text (labels,
			// names) and is left out; one where some are is numeric, and
			// a cell that is not ("oops", but also "nan") is refused below
			// rather than turning the column into text.
			if numericColumn(rows, i) {
				cols = append(cols, i)
			} else {
				info.Ignored = append(info.Ignored, h)
			}
		}
	}
	if resp < 0 {
		return d, info, fmt.Errorf("%s: no column %q; the header has %s (name the response with --response)", path, response, strings.Join(head, ", "))
	}
	if len(named) > 0 {
		cols = cols[:0]
		info.Ignored = nil
		for _, n := range named {
			k := slices.Index(head, n)
			if k < 0 {
				return d, info, fmt.Errorf("%s: no column %q; the header has %s", path, n, strings.Join(head, ", "))
			}
			if k == resp {
				return d, info, fmt.Errorf("%s: column %q is the response; it cannot be a parameter too", path, n)
			}
			for r, rec := range rows {
				if _, err := strconv.ParseFloat(strings.TrimSpace(rec[k]), 64); err != nil {
					return d, info, fmt.Errorf("%s:%d: column %q holds %q, not a number: a surface needs numeric parameters; fit the rows of each value apart (a table of its own), or leave the column out", path, lines[r], n, rec[k])
				}
			}
			cols = append(cols, k)
		}
		for i, h := range head {
			if i != resp && !slices.Contains(cols, i) {
				info.Ignored = append(info.Ignored, h)
			}
		}
	}
	if len(cols) == 0 {
		return d, info, fmt.Errorf("%s: no numeric parameter column beside the response", path)
	}
	for _, i := range cols {
		d.Names = append(d.Names, head[i])
	}
	for r, rec := range rows {
		cell := strings.TrimSpace(rec[resp])
		if cell == "" && info.Summary {
			info.Skipped++
			continue
		}
		y, err := strconv.ParseFloat(cell, 64)
		if err != nil || math.IsNaN(y) || math.IsInf(y, 0) {
			return d, info, fmt.Errorf("%s:%d: %q (column %s) is not a finite number", path, lines[r], rec[resp], head[resp])
		}
		x := make([]float64, len(cols))
		for j, i := range cols {
			v, err := strconv.ParseFloat(strings.TrimSpace(rec[i]), 64)
			if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
				return d, info, fmt.Errorf("%s:%d: %q (column %s) is not a finite number", path, lines[r], rec[i], head[i])
			}
			x[j] = v
		}
		if seCol >= 0 {
			se, err := strconv.ParseFloat(strings.TrimSpace(rec[seCol]), 64)
			if err != nil || !(se > 0) || math.IsInf(se, 0) {
				info.Skipped++
				continue
			}
			d.SE = append(d.SE, se)
		}
		d.X, d.Y = append(d.X, x), append(d.Y, y)
		if info.Summary {
			info.Labels = append(info.Labels, strings.TrimSpace(rec[1]))
		}
	}
	if len(d.Y) == 0 {
		return d, info, fmt.Errorf("%s: no data rows", path)
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
	return d, info, nil
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
