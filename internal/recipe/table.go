package recipe

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
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
		return nil, Errors{{File: file, Line: 1, Msg: err.Error()}}
	}
	col := make([]int, len(params))
	for i := range col {
		col[i] = -1
	}
	nameCol := -1
	var errs Errors
	for j, h := range header {
		h = strings.TrimSpace(h)
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
			errs = append(errs, &Error{File: file, Line: 1, Msg: fmt.Sprintf("column %q is not a parameter of the recipe", h)})
		}
	}
	for i, c := range col {
		if c < 0 {
			errs = append(errs, &Error{File: file, Line: 1, Msg: fmt.Sprintf("no column for parameter %q", params[i].Name)})
		}
	}
	if errs != nil {
		return nil, errs
	}
	var pts []Point
	for {
		rec, err := cr.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		line, _ := cr.FieldPos(0)
		if err != nil {
			var pe *csv.ParseError
			if errors.As(err, &pe) {
				line = pe.Line
			}
			errs = append(errs, &Error{File: file, Line: line, Msg: err.Error()})
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
