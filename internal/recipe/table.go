package recipe

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
)

// readPointsCSV reads a design table: a header row naming every parameter
// (in any order, plus an optional "name" column), then one row per point.
// Numbers are written with a '.' decimal separator.
func readPointsCSV(path string, params []Param) ([]Point, Errors) {
	file := filepath.Base(path)
	f, err := os.Open(path)
	if err != nil {
		return nil, Errors{{File: file, Msg: fmt.Sprintf("cannot open the design table: %v", err)}}
	}
	defer f.Close()
	cr := csv.NewReader(f)
	cr.Comment = '#'
	cr.TrimLeadingSpace = true
	header, err := cr.Read()
	if err != nil {
		if errors.Is(err, io.EOF) {
			return nil, Errors{{File: file, Line: 1, Msg: "the design table is empty; write a header row naming the parameters, then one row per point"}}
		}
		return nil, Errors{csvError(file, err, len(header), 0)}
	}
	headLine, _ := cr.FieldPos(0)
	col := make([]int, len(params))
	for i := range col {
		col[i] = -1
	}
	nameCol := -1
	var errs Errors
	seen := map[string]bool{}
	for j, h := range header {
		h = strings.TrimSpace(h)
		if seen[h] {
			errs = append(errs, &Error{File: file, Line: headLine, Msg: fmt.Sprintf("column %q appears twice in the header: keep one", h)})
			continue
		}
		seen[h] = true
		if h == "name" {
			nameCol = j
			continue
		}
		found := false
		for i, p := range params {
			if p.Name == h {
				col[i], found = j, true
			}
		}
		if !found {
			errs = append(errs, &Error{File: file, Line: headLine, Msg: fmt.Sprintf("column %q is not a parameter of the recipe", h)})
		}
	}
	for i, c := range col {
		if c < 0 {
			errs = append(errs, &Error{File: file, Line: headLine, Msg: fmt.Sprintf("no column for parameter %q", params[i].Name)})
		}
	}
	if errs != nil {
		return nil, errs
	}
	var pts []Point
	for rows := 0; ; rows++ {
		rec, err := cr.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			// The reader's position is only defined for a record it
			// returned without error: the line comes from the error.
			errs = append(errs, csvError(file, err, len(rec), len(header)))
			break
		}
		line, _ := cr.FieldPos(0)
		if rows == MaxVariants {
			errs = append(errs, &Error{File: file, Line: line, Msg: fmt.Sprintf("the design table has more than %d points, the limit of variants a study may have: split it into several studies", MaxVariants)})
			break
		}
		pt := Point{Values: make([]Value, len(params)), Where: fmt.Sprintf("%s:%d", file, line)}
		if nameCol >= 0 {
			pt.Name = strings.TrimSpace(rec[nameCol])
		}
		ok := true
		for i, p := range params {
			cell := strings.TrimSpace(rec[col[i]])
			var v Value
			if p.Kind == Choice {
				v = Word(cell)
			} else {
				x, err := strconv.ParseFloat(cell, 64)
				if err != nil {
					errs = append(errs, &Error{File: file, Line: line, Msg: fmt.Sprintf("%s = %q is not a number", p.Name, cell)})
					ok = false
					continue
				}
				if math.IsNaN(x) || math.IsInf(x, 0) {
					errs = append(errs, &Error{File: file, Line: line, Msg: fmt.Sprintf("%s = %q is not a finite number: write an ordinary number", p.Name, cell)})
					ok = false
					continue
				}
				v = Num(x)
			}
			if good, why := p.Check(v); !good {
				errs = append(errs, &Error{File: file, Line: line, Msg: fmt.Sprintf("%s = %s %s", p.Name, v, why)})
				ok = false
			}
			pt.Values[i] = v
		}
		if ok {
			pts = append(pts, pt)
		}
	}
	return pts, errs
}

// csvError turns an error of the CSV reader into a located problem of the
// design table: cells is the number of cells the reader returned with the
// error, width the header's (0 while reading the header itself).
func csvError(file string, err error, cells, width int) *Error {
	var pe *csv.ParseError
	if !errors.As(err, &pe) {
		return &Error{File: file, Msg: fmt.Sprintf("cannot read the design table: %v", err)}
	}
	if errors.Is(pe.Err, csv.ErrFieldCount) {
		return &Error{File: file, Line: pe.Line, Msg: fmt.Sprintf("the row has %s and the header %d: give every row one cell per header column", plural(cells, "cell"), width)}
	}
	return &Error{File: file, Line: pe.Line, Msg: fmt.Sprintf("not valid CSV at column %d: %v: put a cell that holds a comma or a quote in double quotes, each inner quote doubled", pe.Column, pe.Err)}
}

// plural writes n and a noun, with an s unless n is 1.
func plural(n int, noun string) string {
	if n == 1 {
		return "1 " + noun
	}
	return fmt.Sprintf("%d %ss", n, noun)
}
