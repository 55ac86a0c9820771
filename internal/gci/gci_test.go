package gci

import (
	"encoding/csv"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"testing"
)

// Ensure that the procedure reproduces the worked example of Celik et al.
// (2008), Table 1, columns 1 to 3, to the printed digits: p to 0.005,
// φ_ext21 to half a unit of its last printed digit, percentages to 0.05
// percentage points (column 2's e_ext21 to 0.06: printed 0.9, 0.847 on
// recomputation, see testdata/README.md).
func TestCelik2008Table1(t *testing.T) {
	f, err := os.Open(filepath.Join("testdata", "celik_2008_gci_example.csv"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	col := map[string]int{}
	for i, h := range rows[0] {
		col[h] = i
	}
	for _, row := range rows[1:] {
		v := func(name string) float64 {
			x, err := strconv.ParseFloat(row[col[name]], 64)
			if err != nil {
				t.Fatalf("%s: %v", name, err)
			}
			return x
		}
		// Cell sizes from the grids' cell counts (2-D: h = (1/N)^(1/2),
		// Celik et al. eq. 1), which give the printed ratios.
		res, err := Analyze([]Grid{{CellSize(v("N1"), 2), v("phi1")}, {CellSize(v("N2"), 2), v("phi2")}, {CellSize(v("N3"), 2), v("phi3")}})
		if math.Abs(res.R21-v("r21")) > 5e-4 || math.Abs(res.R32-v("r32")) > 5e-4 {
			t.Errorf("column %s: ratios %.4f %.4f, printed %g %g", row[col["column"]], res.R21, res.R32, v("r21"), v("r32"))
		}
		if err != nil {
			t.Fatal(err)
		}
		eext := 0.05
		if row[col["column"]] == "2" {
			eext = 0.06
		}
		checks := []struct {
			name      string
			got, want float64
			tol       float64
		}{
			{"p", res.Order, v("p"), 0.005},
			{"phi_ext21", res.Extrap, v("phi_ext21"), 0.5 * math.Pow(10, -decimals(row[col["phi_ext21"]]))},
			{"e_a21 %", 100 * res.RelErr, v("e_a21_percent"), 0.05},
			{"e_ext21 %", 100 * res.ExtrapErr, v("e_ext21_percent"), eext},
			{"GCI_fine21 %", 100 * res.GCIFine, v("gci_fine21_percent"), 0.05},
		}
		for _, c := range checks {
			if math.Abs(c.got-c.want) > c.tol {
				t.Errorf("column %s: %s = %.5g, Celik et al. (2008) print %g", row[col["column"]], c.name, c.got, c.want)
			}
		}
		want := "monotonic"
		if row[col["column"]] == "3" {
			want = "oscillatory"
		}
		if res.Convergence != want {
			t.Errorf("column %s: convergence %s, want %s", row[col["column"]], res.Convergence, want)
		}
	}
}

func decimals(s string) float64 {
	for i := len(s) - 1; i >= 0; i-- {
		if s[i] == '.' {
			return float64(len(s) - 1 - i)
		}
	}
	return 0
}

// Ensure that a second-order result on a constant refinement ratio gives
// p = 2 and the exact limit: φ(h) = 1 + h² sampled at h = 1, 2, 4
// (Richardson extrapolation is exact for it; plain algebra).
func TestExactSecondOrder(t *testing.T) {
	res, err := Analyze([]Grid{{4, 17}, {1, 2}, {2, 5}})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(res.Order-2) > 1e-12 || math.Abs(res.Extrap-1) > 1e-12 {
		t.Errorf("p = %v, φ_ext = %v; want 2 and 1", res.Order, res.Extrap)
	}
	// GCI = 1.25 |(2−5)/2| / (2² − 1) = 0.625.
	if math.Abs(res.GCIFine-0.625) > 1e-12 {
		t.Errorf("GCI %v, want 0.625", res.GCIFine)
	}
}

// Ensure that divergence is flagged and equal values are refused.
func TestDivergentAndFlat(t *testing.T) {
	res, err := Analyze([]Grid{{1, 1.0}, {2, 1.1}, {4, 1.15}})
	if err != nil {
		t.Fatal(err)
	}
	if res.Convergence != "divergent" || len(res.Warnings) == 0 {
		t.Errorf("%+v", res)
	}
	if _, err := Analyze([]Grid{{1, 1}, {2, 1}, {4, 1.2}}); err == nil {
		t.Error("equal values accepted")
	}
	if _, err := Analyze([]Grid{{1, 1}, {2, 2}}); err == nil {
		t.Error("two grids accepted")
	}
}
