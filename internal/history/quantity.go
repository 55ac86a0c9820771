// File: What a recipe says of a history: files, time and value columns, comment
// marker, scale. No published method.

package history

import (
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"path/filepath"
	"strconv"
	"strings"
	"unicode/utf8"
)

// Quantity describes where one force or coefficient history lives in a
// variant directory and how to turn its columns into a value. The recipe
// fills it; the zero values of the optional fields are the defaults.
type Quantity struct {
	// Files is a glob relative to the variant directory, in the syntax of
	// path/filepath.Match, e.g. "out/forces*.dat". Every matching file is
	// read and the files are merged by time (see ReadSeries).
	Files string `json:"files" toml:"files"`

	// Time is the time column. The zero value means column 1.
	Time Column `json:"time,omitzero" toml:"time"`

	// Value lists the columns that are summed to form the value, each
	// with an optional factor (e.g. a pressure and a viscous part of the
	// same force). At least one term is required.
	Value []Term `json:"value" toml:"value"`

	// Comment is the marker that starts a comment; "" means "#". A line
	// whose first non-blank characters are the marker is a comment line;
	// on a data line a field that starts with the marker begins a remark
	// that runs to the end of the line.
	Comment string `json:"comment,omitempty" toml:"comment"`

	// Scale turns the summed value into the reported quantity, e.g. a
	// force into a coefficient. The zero value leaves the value as is.
	Scale Scale `json:"scale,omitzero" toml:"scale"`
}

// Column names a column of a history file, either by its 1-based index or
// by its header name (see ReadSeries for how header names are found). The
// zero value is "no column".
//
// In a recipe a column is written as an integer (3) or a string ("Cd"); a
// string made only of digits is read as an index.
type Column struct {
	Index int    // 1-based index; used when Name is empty
	Name  string // header name
}

// ColumnIndex returns the column with 1-based index i.
func ColumnIndex(i int) Column { return Column{Index: i} }

// ColumnName returns the column with header name s.
func ColumnName(s string) Column { return Column{Name: s} }

// ParseColumn reads a column as written in a recipe: a positive integer is
// an index, anything else a header name. A name must be UTF-8 text, as
// recipes and the study's stored results are.
func ParseColumn(s string) (Column, error) {
	s = strings.TrimSpace(s)
	if s == "" {
		return Column{}, errors.New("empty column")
	}
	if !utf8.ValidString(s) {
		return Column{}, fmt.Errorf("column name %q is not valid UTF-8 text", s)
	}
	i, err := strconv.Atoi(s)
	switch {
	case errors.Is(err, strconv.ErrRange) || (err == nil && i > math.MaxInt32):
		return Column{}, fmt.Errorf("column index %s is too large: count the columns from 1", s)
	case err == nil && i < 1:
		return Column{}, fmt.Errorf("column index %d: indices start at 1", i)
	case err == nil:
		return Column{Index: i}, nil
	}
	return Column{Name: s}, nil
}

// IsZero reports whether c names no column.
func (c Column) IsZero() bool { return c.Index == 0 && c.Name == "" }

// String returns the index or the quoted name.
func (c Column) String() string {
	if c.Name != "" {
		return strconv.Quote(c.Name)
	}
	return strconv.Itoa(c.Index)
}

// UnmarshalTOML accepts an integer index or a string.
func (c *Column) UnmarshalTOML(v any) error {
	switch x := v.(type) {
	case int64:
		if x < 1 {
			return fmt.Errorf("column index %d: indices start at 1", x)
		}
		if x > math.MaxInt32 {
			return fmt.Errorf("column index %d is too large: count the columns from 1", x)
		}
		*c = Column{Index: int(x)}
		return nil
	case float64:
		if x != math.Trunc(x) || x < 1 || x > math.MaxInt32 {
			return fmt.Errorf("column index %v: need a whole number from 1 on", x)
		}
		*c = Column{Index: int(x)}
		return nil
	case string:
		col, err := ParseColumn(x)
		if err != nil {
			return err
		}
		*c = col
		return nil
	}
	return fmt.Errorf("column: need an index or a header name, got %T", v)
}

// MarshalJSON writes an index as a number and a name as a string.
func (c Column) MarshalJSON() ([]byte, error) {
	if c.Name != "" {
		return json.Marshal(c.Name)
	}
	return json.Marshal(c.Index)
}

// UnmarshalJSON accepts a number or a string.
func (c *Column) UnmarshalJSON(b []byte) error {
	var v any
	if err := json.Unmarshal(b, &v); err != nil {
		return err
	}
	return c.UnmarshalTOML(v)
}

// Term is one summand of a value: Factor times a column. A zero Factor is
// read as 1 (a term that is always zero would be a recipe mistake, so
// UnmarshalTOML refuses a factor written as 0).
type Term struct {
	Column Column  `json:"column" toml:"column"`
	Factor float64 `json:"factor,omitempty" toml:"factor"`
}

// factor returns the factor with the zero default applied.
func (t Term) factor() float64 {
	if t.Factor == 0 {
		return 1
	}
	return t.Factor
}

// UnmarshalTOML accepts a bare column (an integer or a string) or a table
// with the keys column and factor.
func (t *Term) UnmarshalTOML(v any) error {
	m, ok := v.(map[string]any)
	if !ok {
		*t = Term{}
		return t.Column.UnmarshalTOML(v)
	}
	*t = Term{}
	for k, x := range m {
		switch k {
		case "column":
			if err := t.Column.UnmarshalTOML(x); err != nil {
				return err
			}
		case "factor":
			switch f := x.(type) {
			case float64:
				t.Factor = f
			case int64:
				t.Factor = float64(f)
			default:
				return fmt.Errorf("factor: need a number, got %T", x)
			}
			if t.Factor == 0 {
				return errors.New("factor 0 would make the term always zero: remove the term, or give a factor other than 0")
			}
		default:
			return fmt.Errorf("value term: unknown key %q (want column, factor)", k)
		}
	}
	if t.Column.IsZero() {
		return errors.New("value term: missing column")
	}
	return nil
}

// UnmarshalJSON accepts the same forms as UnmarshalTOML.
func (t *Term) UnmarshalJSON(b []byte) error {
	var v any
	if err := json.Unmarshal(b, &v); err != nil {
		return err
	}
	return t.UnmarshalTOML(v)
}

// Scale turns a summed column value into the reported quantity:
//
//	q = Factor · v / (½ ρ U² A)
//
// where the division applies only when Density, Speed and Reference are all
// set. A is an area for a 3D body, or a reference length for a 2D case whose
// forces are per unit span. A zero Factor is read as 1. The zero Scale
// leaves values unchanged.
type Scale struct {
	Factor    float64 `json:"factor,omitempty" toml:"factor"`
	Density   float64 `json:"density,omitempty" toml:"density"`     // ρ, e.g. kg/m^3
	Speed     float64 `json:"speed,omitempty" toml:"speed"`         // U, e.g. m/s
	Reference float64 `json:"reference,omitempty" toml:"reference"` // A in m^2 (3D) or m (2D)
}

// Multiplier returns the number every summed value is multiplied by.
// It panics if the scale is invalid; Validate reports the same problems as
// errors.
func (s Scale) Multiplier() float64 {
	if err := s.validate(); err != nil {
		panic("harvest: " + err.Error())
	}
	m := s.Factor
	if m == 0 {
		m = 1
	}
	if s.Density != 0 {
		m /= DynamicPressure(s.Density, s.Speed) * s.Reference
	}
	return m
}

func (s Scale) validate() error {
	if math.IsNaN(s.Factor) || math.IsInf(s.Factor, 0) {
		return fmt.Errorf("scale factor %v is not finite", s.Factor)
	}
	set := 0
	for _, v := range []float64{s.Density, s.Speed, s.Reference} {
		if v != 0 {
			set++
		}
		if v < 0 || math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("scale: density, speed and reference must be positive and finite (got %v, %v, %v)",
				s.Density, s.Speed, s.Reference)
		}
	}
	if set != 0 && set != 3 {
		return fmt.Errorf("scale: set all of density, speed and reference, or none (got %v, %v, %v)",
			s.Density, s.Speed, s.Reference)
	}
	return nil
}

// Validate reports what is wrong with q, or nil.
func (q Quantity) Validate() error {
	var errs []error
	if q.Files == "" {
		errs = append(errs, errors.New("files: empty glob"))
	} else if _, err := filepath.Match(q.Files, ""); err != nil {
		errs = append(errs, fmt.Errorf("files %q: %w", q.Files, err))
	}
	if q.Time.Index < 0 {
		errs = append(errs, fmt.Errorf("time column %d: indices start at 1", q.Time.Index))
	}
	if len(q.Value) == 0 {
		errs = append(errs, errors.New("value: no column given"))
	}
	for i, t := range q.Value {
		if t.Column.IsZero() || t.Column.Index < 0 {
			errs = append(errs, fmt.Errorf("value term %d: missing or invalid column", i+1))
		}
		if math.IsNaN(t.Factor) || math.IsInf(t.Factor, 0) {
			errs = append(errs, fmt.Errorf("value term %d: factor %v is not finite", i+1, t.Factor))
		}
	}
	if strings.TrimSpace(q.Comment) != q.Comment {
		errs = append(errs, fmt.Errorf("comment marker %q has surrounding blanks", q.Comment))
	}
	if err := q.Scale.validate(); err != nil {
		errs = append(errs, err)
	}
	return errors.Join(errs...)
}

func (q Quantity) comment() string {
	if q.Comment == "" {
		return "#"
	}
	return q.Comment
}

func (q Quantity) timeColumn() Column {
	if q.Time.IsZero() {
		return Column{Index: 1}
	}
	return q.Time
}
