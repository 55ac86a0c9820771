package harvest

import (
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/sweep-cfd/sweep/internal/history"
)

// fuzzQuantity builds the quantity a recipe would give for column specs
// as written there: the time column, value columns separated by '+', the
// first one scaled by factor, and the comment marker. It reports false
// when a spec does not parse (the recipe refuses it).
func fuzzQuantity(timeSpec, valueSpec string, factor float64, comment string) (history.Quantity, bool) {
	q := history.Quantity{Files: "forces_*.dat", Comment: comment}
	if timeSpec != "" {
		c, err := history.ParseColumn(timeSpec)
		if err != nil {
			return q, false
		}
		q.Time = c
	}
	for i, s := range strings.Split(valueSpec, "+") {
		c, err := history.ParseColumn(s)
		if err != nil {
			return q, false
		}
		t := history.Term{Column: c}
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
		s, err := history.ReadSeries(dir, q)
		if err != nil {
			var le *history.LineError
			if !errors.As(err, &le) && !errors.Is(err, history.ErrNoData) && !errors.Is(err, history.ErrNoFiles) {
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

func finiteValue(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
