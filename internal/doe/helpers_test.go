package doe

import (
	"encoding/csv"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"testing"
)

// readTable reads a CSV file of testdata with a header row and numeric
// cells, and returns the header and the rows.
func readTable(t *testing.T, name string) ([]string, [][]float64) {
	t.Helper()
	f, err := os.Open(filepath.Join("testdata", name))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	if len(recs) < 2 {
		t.Fatalf("%s: no data rows", name)
	}
	rows := make([][]float64, len(recs)-1)
	for i, r := range recs[1:] {
		rows[i] = make([]float64, len(r))
		for j, s := range r {
			v, err := strconv.ParseFloat(s, 64)
			if err != nil {
				// Non-numeric cells (formulas kept as text) read as NaN.
				v = math.NaN()
			}
			rows[i][j] = v
		}
	}
	return recs[0], rows
}

// mustPanic fails the test unless f panics with a message starting with
// the package name.
func mustPanic(t *testing.T, name string, f func()) {
	t.Helper()
	defer func() {
		t.Helper()
		r := recover()
		if r == nil {
			t.Errorf("%s: no panic", name)
			return
		}
		if s, ok := r.(string); !ok || len(s) < 5 || s[:5] != "doe: " {
			t.Errorf("%s: panic %v does not start with \"doe: \"", name, r)
		}
	}()
	f()
}

// sameRuns reports whether a and b hold the same runs (as multisets), each
// coordinate equal within tol.
func sameRuns(a, b [][]float64, tol float64) bool {
	if len(a) != len(b) {
		return false
	}
	used := make([]bool, len(b))
outer:
	for _, p := range a {
		for j, q := range b {
			if used[j] || len(p) != len(q) {
				continue
			}
			match := true
			for i := range p {
				if math.Abs(p[i]-q[i]) > tol {
					match = false
					break
				}
			}
			if match {
				used[j] = true
				continue outer
			}
		}
		return false
	}
	return true
}

// latinOK reports whether every coordinate of pts puts exactly one point in
// each of the n equal intervals [i/n, (i+1)/n).
func latinOK(pts [][]float64) bool {
	n := len(pts)
	for c := range pts[0] {
		seen := make([]bool, n)
		for _, p := range pts {
			i := int(math.Floor(p[c] * float64(n)))
			if i < 0 || i >= n || seen[i] {
				return false
			}
			seen[i] = true
		}
	}
	return true
}
