package doe

import (
	"fmt"
	"testing"
)

// Ensure that FullFactorial gives every level combination, first factor
// slowest, level j of n at j/(n−1) and a single level at ½ (definition of
// the full factorial design, common practice).
func TestFullFactorialOrder(t *testing.T) {
	got := FullFactorial([]int{2, 3, 1})
	want := [][]float64{
		{0, 0, 0.5}, {0, 0.5, 0.5}, {0, 1, 0.5},
		{1, 0, 0.5}, {1, 0.5, 0.5}, {1, 1, 0.5},
	}
	if len(got) != len(want) {
		t.Fatalf("runs = %d, want %d", len(got), len(want))
	}
	for i := range want {
		for j := range want[i] {
			if got[i][j] != want[i][j] { // exact: j/(n−1) of small integers
				t.Errorf("run %d = %v, want %v", i, got[i], want[i])
				break
			}
		}
	}
}

// Ensure that the 2^3 full factorial, coded as 2u − 1, is the factorial
// portion of the three-factor CCC of the NIST/SEMATECH e-Handbook
// §5.3.3.6.3 Table 3.24 (runs 1–8), as a set of runs, exactly.
func TestFullFactorialNISTCube(t *testing.T) {
	_, table := readTable(t, "nist_handbook_ccc_3factor.csv")
	var cube [][]float64
	for _, r := range table[:8] {
		cube = append(cube, r[1:])
	}
	ff := FullFactorial([]int{2, 2, 2})
	for _, p := range ff {
		for j := range p {
			p[j] = 2*p[j] - 1
		}
	}
	if !sameRuns(ff, cube, 0) {
		t.Errorf("coded 2^3 factorial %v differs from the handbook's cube %v", ff, cube)
	}
}

// Ensure that the run count is the product of the levels and every run is
// distinct (definition).
func TestFullFactorialCount(t *testing.T) {
	for _, levels := range [][]int{{5}, {3, 3}, {2, 4, 3}, {2, 2, 2, 2, 2}} {
		pts := FullFactorial(levels)
		n := 1
		for _, l := range levels {
			n *= l
		}
		if len(pts) != n {
			t.Errorf("%v: %d runs, want %d", levels, len(pts), n)
		}
		seen := map[string]bool{}
		for _, p := range pts {
			key := fmt.Sprint(p)
			if seen[key] {
				t.Errorf("%v: run %v repeated", levels, p)
			}
			seen[key] = true
		}
	}
}

func TestFullFactorialPanics(t *testing.T) {
	mustPanic(t, "no factors", func() { FullFactorial(nil) })
	mustPanic(t, "zero levels", func() { FullFactorial([]int{2, 0}) })
}
