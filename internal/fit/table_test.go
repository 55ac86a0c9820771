package fit

import (
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// FuzzTableData checks that no table crashes the reader of `fit --table`,
// that every refusal names the file, and that an accepted table is a
// rectangle of finite numbers inside bounds of some width; a small one is
// then fitted with a linear surface, as the command would, which may
// refuse it but must not crash.
func FuzzTableData(f *testing.F) {
	for _, s := range []struct{ text, response string }{
		{"x,y\n1,2\n2,3.5\n3,5\n4,7\n", "y"},
		{"# runs\na, b, cd\n0, 0, 1\n1, 0, 2\n0, 1, 3\n1, 1, 4.5\n", "cd"},
		{"x,y\n\"3\"x,4\n", "y"},
		{"x,y,y\n1,2,3\n", "y"},
		{"y\n1\n2\n", "y"},
		{"x,y\n1,2\n1,3\n1,4\n", "y"},
		{"x,y\n1e308,1\n-1e308,2\n0,3\n", "y"},
		{"x,y\r\n1,inf\r\n", "y"},
	} {
		f.Add([]byte(s.text), s.response)
	}
	path := filepath.Join(f.TempDir(), "runs.csv")
	f.Fuzz(func(t *testing.T, data []byte, response string) {
		if err := os.WriteFile(path, data, 0o644); err != nil {
			t.Fatal(err)
		}
		d, err := TableData(path, response)
		if err != nil {
			if !strings.HasPrefix(err.Error(), path) {
				t.Fatalf("error does not name the table: %v", err)
			}
			return
		}
		k := len(d.Names)
		if k == 0 || len(d.Y) == 0 || len(d.X) != len(d.Y) || len(d.Bounds.Lo) != k || len(d.Bounds.Hi) != k {
			t.Fatalf("%d names, %d rows, %d responses, bounds %v", k, len(d.X), len(d.Y), d.Bounds)
		}
		for i, x := range d.X {
			if len(x) != k || !finiteValue(d.Y[i]) {
				t.Fatalf("row %d: %v, %v", i+1, x, d.Y[i])
			}
			for j, v := range x {
				if !finiteValue(v) || v < d.Bounds.Lo[j] || v > d.Bounds.Hi[j] {
					t.Fatalf("row %d: %v outside the bounds %v", i+1, x, d.Bounds)
				}
			}
		}
		for j := range k {
			if !(d.Bounds.Lo[j] < d.Bounds.Hi[j]) || !finiteValue(d.Bounds.Hi[j]) {
				t.Fatalf("bounds of %s: [%g, %g]", d.Names[j], d.Bounds.Lo[j], d.Bounds.Hi[j])
			}
		}
		if k > 2 || len(d.Y) > 12 {
			return
		}
		rep, err := Fit(d, Options{Model: "linear"})
		if err != nil {
			return
		}
		if len(rep.Sensitivities) != k {
			t.Fatalf("%d sensitivities for %d parameters", len(rep.Sensitivities), k)
		}
	})
}

func finiteValue(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
