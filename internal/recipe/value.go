package recipe

import (
	"encoding/json"
	"fmt"
	"math"
	"strconv"
)

// Value is a parameter value: a number, or a word for a choice parameter.
type Value struct {
	Num  float64
	Text string // non-empty for a choice parameter
}

// Num returns a numeric value.
func Num(x float64) Value { return Value{Num: x} }

// Word returns a categorical value.
func Word(s string) Value { return Value{Text: s} }

// IsText reports whether v is a categorical value.
func (v Value) IsText() bool { return v.Text != "" }

// String formats v the way it is rendered into files and environment
// variables: the word itself, or the shortest decimal that reads back to
// the same number.
func (v Value) String() string {
	if v.IsText() {
		return v.Text
	}
	return strconv.FormatFloat(v.Num, 'g', -1, 64)
}

// MarshalJSON writes a number as a JSON number and a word as a string.
func (v Value) MarshalJSON() ([]byte, error) {
	if v.IsText() {
		return json.Marshal(v.Text)
	}
	return []byte(strconv.FormatFloat(v.Num, 'g', -1, 64)), nil
}

// UnmarshalJSON reads what MarshalJSON writes.
func (v *Value) UnmarshalJSON(b []byte) error {
	if len(b) > 0 && b[0] == '"' {
		v.Num = 0
		return json.Unmarshal(b, &v.Text)
	}
	v.Text = ""
	x, err := strconv.ParseFloat(string(b), 64)
	if err != nil {
		return fmt.Errorf("parameter value %s: %w", b, err)
	}
	v.Num = x
	return nil
}

// Equal reports whether two values are the same parameter value.
func (v Value) Equal(w Value) bool {
	if v.IsText() || w.IsText() {
		return v.Text == w.Text
	}
	return v.Num == w.Num
}

// tidy rounds x to 12 significant digits, so values computed from a design
// (0.1 + 2*0.1) are written as a person would write them (0.3), and a value
// computed twice the same way is the same value.
func tidy(x float64) float64 {
	if x == 0 || math.IsInf(x, 0) || math.IsNaN(x) {
		return x
	}
	y, err := strconv.ParseFloat(strconv.FormatFloat(x, 'g', 12, 64), 64)
	if err != nil {
		return x
	}
	return y
}

// At maps a coordinate u in [0,1] to the parameter's value. A range maps
// linearly (or linearly in log(value) when Log is set); a list of levels or
// choices is cut into len equal intervals and u picks one, so the points
// j/(n-1) of an n-level factorial pick level j. Coordinates outside [0,1]
// are clamped. A range's value is tidied (see tidy) and then kept within
// [Min, Max], which a bound of more than 12 significant digits would
// otherwise let the rounding leave.
func (p Param) At(u float64) Value {
	u = math.Max(0, math.Min(1, u))
	switch p.Kind {
	case Range:
		var x float64
		if p.Log {
			x = math.Exp(math.Log(p.Min) + u*(math.Log(p.Max)-math.Log(p.Min)))
		} else {
			x = p.Min + u*(p.Max-p.Min)
		}
		return Num(math.Max(p.Min, math.Min(p.Max, tidy(x))))
	case Levels:
		return Num(p.Values[pick(u, len(p.Values))])
	default:
		return Word(p.Choices[pick(u, len(p.Choices))])
	}
}

func pick(u float64, n int) int {
	i := int(math.Floor(u * float64(n)))
	if i >= n {
		i = n - 1
	}
	return i
}

// Levels returns the number of distinct values the parameter takes in a
// factorial design whose default for ranges is def.
func (p Param) Levels(def int) int {
	switch p.Kind {
	case Range:
		if p.Steps > 0 {
			return p.Steps
		}
		return def
	case Levels:
		return len(p.Values)
	default:
		return len(p.Choices)
	}
}

// Check reports whether v is a valid value of p, and if not, why.
func (p Param) Check(v Value) (ok bool, why string) {
	switch p.Kind {
	case Range:
		if v.IsText() {
			return false, "is a word, but the parameter is a number range"
		}
		if math.IsNaN(v.Num) || v.Num < p.Min || v.Num > p.Max {
			return false, "lies outside the range [" + Num(p.Min).String() + ", " + Num(p.Max).String() + "]"
		}
	case Levels:
		if v.IsText() {
			return false, "is a word, but the parameter takes numeric levels"
		}
		for _, x := range p.Values {
			if x == v.Num {
				return true, ""
			}
		}
		return false, "is not one of the parameter's values"
	case Choice:
		for _, c := range p.Choices {
			if c == v.Text {
				return true, ""
			}
		}
		return false, "is not one of the parameter's choices"
	}
	return true, ""
}
