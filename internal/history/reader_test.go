package history

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"testing"

	"github.com/BurntSushi/toml"
	"github.com/sweep-cfd/sweep/internal/studytest"
)

func near(a, b []float64, tol float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if math.Abs(a[i]-b[i]) > tol {
			return false
		}
	}
	return true
}

// Ensure that a commented header gives the column names, CR-LF ends, tabs,
// blank lines, trailing blanks, trailing remarks, a repeated header amid the
// data and an unfinished last line are all tolerated. Expected values by
// hand from testdata/history_header.dat: value = Fx_p + 2·Fx_v.
func TestReadHeaderNames(t *testing.T) {
	q := Quantity{
		Files: "history_header.dat",
		Time:  ColumnName("Time"),
		Value: []Term{{Column: ColumnName("Fx_p")}, {Column: ColumnName("fx_v"), Factor: 2}},
	}
	s, err := ReadSeries("testdata", q)
	if err != nil {
		t.Fatal(err)
	}
	if !near(s.Time, []float64{0, 0.5, 1, 1.5, 2}, 0) || !near(s.Value, []float64{1.2, 1.9, 2.6, 3.3, 4.0}, 1e-12) {
		t.Errorf("got %v %v", s.Time, s.Value)
	}
	notes := strings.Join(s.Notes, "\n")
	if !strings.Contains(notes, "line 13 has no newline") || !strings.Contains(notes, "first at line 10") {
		t.Errorf("notes: %q", notes)
	}
}

// Ensure that vector columns in parentheses split into fields, a Fortran D
// exponent reads, and columns can be summed by index: value = column 2 +
// column 5 (pressure and shear x parts), by hand 1.1, 1.2, 1.3. The header
// "t (px py pz) (sx sy sz)" gives the same 7 names without parentheses.
func TestReadVectorColumns(t *testing.T) {
	q := Quantity{Files: "history_vector.dat", Value: []Term{{Column: ColumnIndex(2)}, {Column: ColumnIndex(5)}}}
	s, err := ReadSeries("testdata", q)
	if err != nil {
		t.Fatal(err)
	}
	if !near(s.Time, []float64{0.1, 0.2, 0.3}, 0) || !near(s.Value, []float64{1.1, 1.2, 1.3}, 1e-12) {
		t.Errorf("got %v %v", s.Time, s.Value)
	}
	q.Value = []Term{{Column: ColumnName("px")}, {Column: ColumnName("sx")}}
	if s2, err := ReadSeries("testdata", q); err != nil || !near(s2.Value, s.Value, 0) {
		t.Errorf("by header names: %v", err)
	}
}

// Ensure that a CSV file with a plain header line reads by name, and that
// the scale turns the value into a coefficient: ½·1.225·10²·2 = 122.5.
func TestReadCSVScaled(t *testing.T) {
	q := Quantity{
		Files: "*.csv", Time: ColumnName("time"), Value: []Term{{Column: ColumnName("cd")}},
		Scale: Scale{Density: 1.225, Speed: 10, Reference: 2},
	}
	s, err := ReadSeries("testdata", q)
	if err != nil {
		t.Fatal(err)
	}
	want := []float64{0.5 / 122.5, 0.52 / 122.5, 0.51 / 122.5}
	if !near(s.Value, want, 1e-15) || !reflect.DeepEqual(s.Files, []string{"history.csv"}) {
		t.Errorf("got %v %v", s.Value, s.Files)
	}
}

// Ensure that a restart that begins inside the earlier file's range wins
// from its first time on, and that the overlap is reported. forces_0 holds
// t = 0.00…12.00 and forces_1 t = 10.00…25.00 (step 0.01): the samples
// 10.00…12.00 of forces_0 (201) are replaced.
func TestReadRestart(t *testing.T) {
	q := Quantity{Files: "restart/forces_*.dat", Time: ColumnName("Time"), Value: []Term{{Column: ColumnName("Cd")}}}
	s, err := ReadSeries("testdata", q)
	if err != nil {
		t.Fatal(err)
	}
	if len(s.Time) != 2501 {
		t.Fatalf("%d samples, want 2501", len(s.Time))
	}
	for i := 1; i < len(s.Time); i++ {
		if !(s.Time[i] > s.Time[i-1]) {
			t.Fatalf("time not increasing at %d", i)
		}
	}
	want := []Overlap{{Earlier: "restart/forces_0.dat", Later: "restart/forces_1.dat", From: 10, To: 12, Samples: 201}}
	if !reflect.DeepEqual(s.Overlaps, want) {
		t.Errorf("overlaps %+v, want %+v", s.Overlaps, want)
	}
}

// Ensure that files are ordered by first time, not by name, and that a
// later file covering everything replaces the earlier one entirely.
func TestReadRestartOrder(t *testing.T) {
	dir := t.TempDir()
	write(t, dir, "b.dat", "0 1\n1 1\n2 1\n3 1\n")
	write(t, dir, "a.dat", "2 2\n3 2\n4 2\n")
	write(t, dir, "c.dat", "# header only\n")
	s, err := ReadSeries(dir, Quantity{Files: "*.dat", Value: []Term{{Column: ColumnIndex(2)}}})
	if err != nil {
		t.Fatal(err)
	}
	if !near(s.Time, []float64{0, 1, 2, 3, 4}, 0) || !near(s.Value, []float64{1, 1, 2, 2, 2}, 0) {
		t.Errorf("got %v %v", s.Time, s.Value)
	}
	if len(s.Overlaps) != 1 || s.Overlaps[0].Samples != 2 || s.Files[0] != "b.dat" {
		t.Errorf("overlaps %+v files %v", s.Overlaps, s.Files)
	}
	if len(s.Notes) != 1 || !strings.Contains(s.Notes[0], "c.dat: no data row") {
		t.Errorf("notes %q", s.Notes)
	}
	// Same first time: the later name wins wholly.
	write(t, dir, "d.dat", "0 9\n1 9\n")
	s, err = ReadSeries(dir, Quantity{Files: "[bd].dat", Value: []Term{{Column: ColumnIndex(2)}}})
	if err != nil {
		t.Fatal(err)
	}
	if !near(s.Value, []float64{9, 9}, 0) || s.Overlaps[0].Samples != 4 {
		t.Errorf("got %v, overlaps %+v", s.Value, s.Overlaps)
	}
}

func write(t testing.TB, dir, name, text string) {
	t.Helper()
	if err := os.WriteFile(filepath.Join(dir, name), []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
}

// Ensure that bad histories give typed errors naming file and line.
func TestReadErrors(t *testing.T) {
	cases := []struct {
		name, text string
		q          Quantity
		err        error
		line       int
	}{
		{"nan", "0 1\n1 nan\n2 1\n", Quantity{}, ErrNonFinite, 2},
		{"minus-nan", "0 1\n1 1\n2 -nan\n", Quantity{}, ErrNonFinite, 3},
		{"windows-nan", "0 1\n1 1.#QNAN\n", Quantity{}, ErrNonFinite, 2},
		{"inf", "0 1\n1 inf\n", Quantity{}, ErrNonFinite, 2},
		{"overflow", "0 1e400\n", Quantity{}, ErrNonFinite, 1},
		{"first-row-nan", "# t v\nnan 1\n", Quantity{}, ErrNonFinite, 2},
		{"time-back", "0 1\n1 1\n0.5 1\n", Quantity{}, ErrTimeOrder, 3},
		{"short-row", "0 1 2\n1 1\n", Quantity{Value: []Term{{Column: ColumnIndex(3)}}}, ErrMalformed, 2},
		{"not-number", "0 1\n1 x1\n", Quantity{}, ErrMalformed, 2},
		{"no-column", "0 1\n", Quantity{Value: []Term{{Column: ColumnIndex(3)}}}, ErrColumn, 1},
		{"no-name", "# t a b\n0 1 2\n", Quantity{Value: []Term{{Column: ColumnName("c")}}}, ErrColumn, 2},
		{"no-header", "0 1 2\n", Quantity{Value: []Term{{Column: ColumnName("a")}}}, ErrColumn, 1},
	}
	for _, c := range cases {
		dir := t.TempDir()
		write(t, dir, "h.dat", c.text)
		q := c.q
		q.Files = "h.dat"
		if q.Value == nil {
			q.Value = []Term{{Column: ColumnIndex(2)}}
		}
		_, err := ReadSeries(dir, q)
		var le *LineError
		if !errors.Is(err, c.err) || !errors.As(err, &le) || le.Line != c.line || !strings.Contains(err.Error(), fmt.Sprintf("h.dat:%d:", c.line)) {
			t.Errorf("%s: error %v, want %v at line %d", c.name, err, c.err, c.line)
		}
	}
	dir := t.TempDir()
	if _, err := ReadSeries(dir, Quantity{Files: "*.dat", Value: []Term{{Column: ColumnIndex(2)}}}); !errors.Is(err, ErrNoFiles) {
		t.Errorf("no files: %v", err)
	}
	write(t, dir, "e.dat", "# nothing yet\n\n")
	if _, err := ReadSeries(dir, Quantity{Files: "*.dat", Value: []Term{{Column: ColumnIndex(2)}}}); !errors.Is(err, ErrNoData) {
		t.Errorf("no data: %v", err)
	}
	if _, err := ReadSeries(dir, Quantity{Files: "[", Value: []Term{{Column: ColumnIndex(2)}}}); err == nil {
		t.Error("bad glob accepted")
	}
}

// Ensure that a recipe can write columns as numbers or names and terms as
// bare columns or tables (TOML as decoded by BurntSushi/toml), and that the
// JSON form round-trips.
func TestQuantityDecode(t *testing.T) {
	const recipe = `
files = "post/forces*.dat"
time = "Time"
value = ["Fx_p", {column = 5, factor = -1.0}, 7]
comment = "%"
[scale]
density = 1.225
speed = 30
reference = 2.2
`
	var q Quantity
	if _, err := toml.Decode(recipe, &q); err != nil {
		t.Fatal(err)
	}
	want := Quantity{
		Files: "post/forces*.dat", Time: ColumnName("Time"),
		Value:   []Term{{Column: ColumnName("Fx_p")}, {Column: ColumnIndex(5), Factor: -1}, {Column: ColumnIndex(7)}},
		Comment: "%",
		Scale:   Scale{Density: 1.225, Speed: 30, Reference: 2.2},
	}
	if !reflect.DeepEqual(q, want) {
		t.Errorf("decoded %+v, want %+v", q, want)
	}
	if err := q.Validate(); err != nil {
		t.Error(err)
	}
	b, err := json.Marshal(q)
	if err != nil {
		t.Fatal(err)
	}
	var back Quantity
	if err := json.Unmarshal(b, &back); err != nil || !reflect.DeepEqual(back, q) {
		t.Errorf("JSON round trip: %s → %+v (%v)", b, back, err)
	}
	bad := []string{
		`value = [0]`,
		`value = [{factor = 2.0}]`,
		`value = [{column = "a", size = 2}]`,
		`time = 1.5`,
	}
	for _, s := range bad {
		var q Quantity
		if _, err := toml.Decode(s, &q); err == nil {
			t.Errorf("%q accepted", s)
		}
	}
	invalid := []Quantity{
		{},
		{Files: "x", Value: []Term{{Column: ColumnIndex(2)}}, Scale: Scale{Density: 1.2}},
		{Files: "x", Value: []Term{{Column: ColumnIndex(2), Factor: math.NaN()}}},
		{Files: "x", Value: []Term{{}}},
	}
	for _, q := range invalid {
		if q.Validate() == nil {
			t.Errorf("%+v validated", q)
		}
	}
}

// Ensure that the field splitter agrees with strings.FieldsFunc.
func FuzzSplitFields(f *testing.F) {
	for _, s := range []string{"", " 1 2 ", "0.5 (1 2 3) (4,5;6)", "\t\r\v\f", "a,,b", "((x))"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		got := splitFields(nil, []byte(s), &dataSep)
		want := strings.FieldsFunc(s, func(r rune) bool { return r < 256 && dataSep[r] })
		if len(got) != len(want) {
			t.Fatalf("%q: %q, want %q", s, got, want)
		}
		for i := range got {
			if string(got[i]) != want[i] {
				t.Fatalf("%q: %q, want %q", s, got, want)
			}
		}
	})
}

// Ensure that the history parser never panics and that whatever it
// accepts is well formed: equal lengths, finite values, time never
// decreasing.
func FuzzParseHistory(f *testing.F) {
	for _, s := range []string{
		"# t a b\n0 1 2\n1 2 3\n",
		"0 1\r\n1 2\r\n2 3",
		"time,cd\n0,1\n1,2\n",
		"0 (1 2) (3 4)\n1 (1 2) (3 4)\n",
		"0 1\n1 nan\n",
		"1 1\n0 1\n",
		"# x\n\n\n0 1D+02\nx y\n2 1e400\n",
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		for _, q := range []Quantity{
			{Files: "f", Value: []Term{{Column: ColumnIndex(2)}}},
			{Files: "f", Time: ColumnName("t"), Value: []Term{{Column: ColumnName("a")}, {Column: ColumnIndex(3), Factor: -2}}},
		} {
			p := newParser(q)
			tt, v, _, err := p.read(bytes.NewReader(data), "f", nil, nil, false)
			if len(tt) != len(v) {
				t.Fatalf("lengths %d, %d", len(tt), len(v))
			}
			if err != nil {
				var le *LineError
				if !errors.As(err, &le) {
					t.Fatalf("untyped error %v", err)
				}
				continue
			}
			for i := range tt {
				if math.IsNaN(tt[i]) || math.IsInf(tt[i], 0) || math.IsNaN(v[i]) || math.IsInf(v[i], 0) {
					t.Fatalf("non-finite row %d: %v %v", i, tt[i], v[i])
				}
				if i > 0 && tt[i] < tt[i-1] {
					t.Fatalf("time decreases at row %d", i)
				}
			}
		}
	})
}

// BenchmarkReadHistory reads a 10 MB, 140,000-line, five-column history
// (the size a later issue holds `sweep stats` to) for the time and the
// second column, the work of awk '{s+=$2} END {print s/NR}', and reports
// MB/s.
func BenchmarkReadHistory(b *testing.B) {
	benchmarkRead(b, []Term{{Column: ColumnName("Fx")}})
}

// BenchmarkReadHistorySum reads the same history summing two columns.
func BenchmarkReadHistorySum(b *testing.B) {
	benchmarkRead(b, []Term{{Column: ColumnName("Fx_p")}, {Column: ColumnName("Fx_v")}})
}

func benchmarkRead(b *testing.B, value []Term) {
	dir := b.TempDir()
	size := studytest.ForceHistory(b, filepath.Join(dir, "forces.dat"), 140000)
	q := Quantity{Files: "forces.dat", Time: ColumnName("Time"), Value: value}
	b.SetBytes(size)
	b.ReportAllocs()
	for b.Loop() {
		s, err := ReadSeries(dir, q)
		if err != nil || len(s.Time) != 140000 {
			b.Fatal(err)
		}
	}
}

// Ensure that the exact fast path for plain decimals returns the same bits
// as strconv.ParseFloat whenever it accepts a field.
func FuzzParseDecimal(f *testing.F) {
	for _, s := range []string{"0", "-0", "1.5", "9.01234567e-01", "1.399990e+02", ".5", "1.", "123456789012345",
		"1234567890123456", "1e22", "1e23", "-4.9e-324", "0.000000000000000000001", "007", "1e-22", "+3.25E+5"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		got, ok := parseDecimal([]byte(s))
		if !ok {
			return
		}
		want, err := strconv.ParseFloat(s, 64)
		if err != nil || math.Float64bits(got) != math.Float64bits(want) {
			t.Fatalf("%q: %v (%x), strconv %v (%x) %v", s, got, math.Float64bits(got), want, math.Float64bits(want), err)
		}
	})
}

// Ensure that grouping parentheses leave header names and a name's own
// parentheses stay.
func TestTrimGroupParens(t *testing.T) {
	for in, want := range map[string]string{"(px": "px", "pz)": "pz", "py": "py", "Cd(total)": "Cd(total)", "((a": "a", "b))": "b", "(Cd(p))": "Cd(p))"} {
		if got := string(trimGroupParens([]byte(in))); got != want {
			t.Errorf("%q → %q, want %q", in, got, want)
		}
	}
}
