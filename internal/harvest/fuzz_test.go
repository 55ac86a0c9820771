package harvest

import (
	"encoding/json"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// fuzzQuantity builds the quantity a recipe would give for column specs
// as written there: the time column, value columns separated by '+', the
// first one scaled by factor, and the comment marker. It reports false
// when a spec does not parse (the recipe refuses it).
func fuzzQuantity(timeSpec, valueSpec string, factor float64, comment string) (Quantity, bool) {
	q := Quantity{Files: "forces_*.dat", Comment: comment}
	if timeSpec != "" {
		c, err := ParseColumn(timeSpec)
		if err != nil {
			return q, false
		}
		q.Time = c
	}
	for i, s := range strings.Split(valueSpec, "+") {
		c, err := ParseColumn(s)
		if err != nil {
			return q, false
		}
		t := Term{Column: c}
		if i == 0 {
			t.Factor = factor
		}
		q.Value = append(q.Value, t)
	}
	return q, q.Validate() == nil
}

// FuzzReadSeries checks that no pair of history files (a run and its
// restart) and no column spec crashes the reader or the analysis: an
// accepted history is a merged series of finite values with time never
// decreasing, read from the files it lists; a refusal is one of the
// reader's errors; and the analysis gives a verdict.
func FuzzReadSeries(f *testing.F) {
	for _, s := range []struct {
		first, restart string
		time, value    string
		factor         float64
		comment        string
	}{
		{"# t Cd Cl\n0 1.1 0.1\n1 1.2 0.2\n2 1.15 0.1\n", "# t Cd Cl\n1.5 1.3 0\n2.5 1.2 0\n", "t", "Cd", 0, ""},
		{"% time (px py) (vx vy)\n0 (1 2) (3 4)\n1 (1.5 2) (3 4)\n", "", "1", "2+4", -1, "%"},
		{"0,1\r\n1,2\r\n2,3", "x y\n3 4\n", "", "2", 2.5, "//"},
		{"1 1\n0 1\n", "0 nan\n", "1", "2", 0, "#"},
		{"# a b\n1 1D+02\n2 1.#QNAN\n", "2 3 # remark\n", "A", "b", 1e300, ""},
		{"", "\n\n", "", "3", 0, ""},
	} {
		f.Add([]byte(s.first), []byte(s.restart), s.time, s.value, s.factor, s.comment)
	}
	dir := f.TempDir()
	f.Fuzz(func(t *testing.T, first, restart []byte, timeSpec, valueSpec string, factor float64, comment string) {
		q, ok := fuzzQuantity(timeSpec, valueSpec, factor, comment)
		if !ok {
			return
		}
		for i, data := range [][]byte{first, restart} {
			name := filepath.Join(dir, []string{"forces_0.dat", "forces_1.dat"}[i])
			if len(data) == 0 && i == 1 {
				os.Remove(name)
				continue
			}
			if err := os.WriteFile(name, data, 0o644); err != nil {
				t.Fatal(err)
			}
		}
		s, err := ReadSeries(dir, q)
		if err != nil {
			var le *LineError
			if !errors.As(err, &le) && !errors.Is(err, ErrNoData) && !errors.Is(err, ErrNoFiles) {
				t.Fatalf("error %T outside the reader's: %v", err, err)
			}
		} else {
			if len(s.Time) == 0 || len(s.Time) != len(s.Value) || len(s.Files) == 0 {
				t.Fatalf("%d times, %d values, files %v", len(s.Time), len(s.Value), s.Files)
			}
			for i := range s.Time {
				if !finiteValue(s.Time[i]) || !finiteValue(s.Value[i]) {
					t.Fatalf("row %d: %v %v", i, s.Time[i], s.Value[i])
				}
				if i > 0 && s.Time[i] < s.Time[i-1] {
					t.Fatalf("time decreases at row %d: %v after %v", i, s.Time[i], s.Time[i-1])
				}
			}
		}
		// The analysis of whatever was read must not crash either, and
		// says what it found.
		if r, _ := Harvest(dir, q, Options{}); r.Verdict == "" {
			t.Fatalf("no verdict: %+v", r)
		}
	})
}

// FuzzColumnSpec checks the column and term specs of a quantity as a
// recipe or a stored study gives them: a column written as text, and a
// value term in its JSON form. Whatever is accepted names a column and
// reads back the same after writing.
func FuzzColumnSpec(f *testing.F) {
	for _, s := range []struct{ text, term string }{
		{"Cd", `"Fx_p"`},
		{"3", `2`},
		{" 12 ", `{"column": 3, "factor": -1}`},
		{"0", `{"column": "Cd(total)", "factor": 1e-3}`},
		{"-4", `{"factor": 2}`},
		{"+7", `{"column": 2.5}`},
		{"", `{"column": 1, "factor": 0}`},
		{"x y", `[1]`},
	} {
		f.Add(s.text, []byte(s.term))
	}
	f.Fuzz(func(t *testing.T, text string, term []byte) {
		if c, err := ParseColumn(text); err == nil {
			if c.IsZero() || c.Index < 0 || (c.Name == "" && c.Index < 1) {
				t.Fatalf("%q gives the column %+v", text, c)
			}
			b, err := json.Marshal(c)
			if err != nil {
				t.Fatalf("%+v: %v", c, err)
			}
			var back Column
			if err := json.Unmarshal(b, &back); err != nil || back != c {
				t.Fatalf("%q: %+v writes %s, which reads back as %+v (%v)", text, c, b, back, err)
			}
		}
		var tm Term
		if err := json.Unmarshal(term, &tm); err != nil {
			return
		}
		if tm.Column.IsZero() || tm.Column.Index < 0 {
			t.Fatalf("%s gives the term %+v", term, tm)
		}
		b, err := json.Marshal(tm)
		if err != nil {
			t.Fatalf("%+v: %v", tm, err)
		}
		var back Term
		if err := json.Unmarshal(b, &back); err != nil || back != tm {
			t.Fatalf("%s: %+v writes %s, which reads back as %+v (%v)", term, tm, b, back, err)
		}
	})
}

func finiteValue(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
