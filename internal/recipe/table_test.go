package recipe

import (
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// FuzzReadPointsCSV checks that no design table crashes its reader and
// that what it accepts is a table of valid points: every value a finite
// number in its range or one of its levels or choices, every point placed
// at a line of the file. Every problem is placed in the file.
func FuzzReadPointsCSV(f *testing.F) {
	params := []Param{
		{Name: "r", Kind: Range, Min: 0, Max: 1},
		{Name: "n", Kind: Levels, Values: []float64{1, 2, 4}},
		{Name: "w", Kind: Choice, Choices: []string{"round", "square"}},
	}
	for _, s := range []string{
		"r,n,w\n0.5,2,round\n",
		"name, w, n, r\nbase, square, 4, 1\n# a comment\n, round, 1, 0\n",
		"r,n,w\n\"3\"x,4\n",
		"r,n,w\n0.5,2\n",
		"r,n,w,r\n",
		"r,n,w\nNaN,2,round\n1e400,1,round\n",
		"\"r\",n,w\r\n\"0,5\",1,round\r\n",
		"",
	} {
		f.Add([]byte(s))
	}
	path := filepath.Join(f.TempDir(), "points.csv")
	f.Fuzz(func(t *testing.T, data []byte) {
		if err := os.WriteFile(path, data, 0o644); err != nil {
			t.Fatal(err)
		}
		pts, errs := readPointsCSV(path, params)
		for _, e := range errs {
			if e.File != "points.csv" || e.Line < 1 || e.Msg == "" {
				t.Fatalf("problem without a place or a text: %+v", e)
			}
		}
		if errs != nil {
			return
		}
		for _, pt := range pts {
			if !strings.HasPrefix(pt.Where, "points.csv:") || strings.HasSuffix(pt.Where, ":0") {
				t.Fatalf("point placed at %q", pt.Where)
			}
			if len(pt.Values) != len(params) {
				t.Fatalf("point with %d values", len(pt.Values))
			}
			for i, p := range params {
				v := pt.Values[i]
				if ok, why := p.Check(v); !ok || math.IsNaN(v.Num) || math.IsInf(v.Num, 0) {
					t.Fatalf("%s = %s accepted: %s", p.Name, v, why)
				}
			}
		}
	})
}
