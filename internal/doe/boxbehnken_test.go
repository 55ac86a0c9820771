package doe

import (
	"math"
	"testing"
)

// Ensure that the coded three-factor Box–Behnken design with 3 centre runs
// equals the NIST/SEMATECH e-Handbook §5.3.3.6.3 Table 3.24 run by run, in
// the handbook's order, exactly.
func TestBoxBehnkenNISTTable(t *testing.T) {
	_, table := readTable(t, "nist_handbook_box_behnken_3factor.csv")
	got := BoxBehnkenCoded(3, 3)
	if len(got) != len(table) {
		t.Fatalf("runs = %d, handbook %d", len(got), len(table))
	}
	for i, row := range table {
		for j := range 3 {
			if got[i][j] != row[j+1] {
				t.Errorf("run %d = %v, handbook %v", i+1, got[i], row[1:])
				break
			}
		}
	}
}

// Ensure the run counts of the classic designs of Box & Behnken (1960),
// without centre runs: 12, 24, 40, 48, 56 for k = 3..7 (from memory, the
// paper's tables: k = 4, 5 all pairs, k = 6 six blocks of 3, k = 7 seven
// blocks of 3), and that centre runs are added at the end.
func TestBoxBehnkenRunCounts(t *testing.T) {
	want := map[int]int{3: 12, 4: 24, 5: 40, 6: 48, 7: 56}
	for k, n := range want {
		if got := len(BoxBehnkenCoded(k, 0)); got != n {
			t.Errorf("k=%d: %d runs, want %d", k, got, n)
		}
		d := BoxBehnkenCoded(k, 5)
		if len(d) != n+5 {
			t.Errorf("k=%d with 5 centres: %d runs", k, len(d))
		}
		for _, p := range d[n:] {
			for _, x := range p {
				if x != 0 {
					t.Errorf("k=%d: centre run %v", k, p)
				}
			}
		}
	}
}

// Ensure the structural properties of Box–Behnken designs (Box & Behnken
// 1960; NIST/SEMATECH e-Handbook §5.3.3.6.2): three levels −1, 0, +1; no
// corner points (each non-centre run moves exactly 2 factors for k ≤ 5 and
// 3 for k = 6, 7); each factor balanced (as many +1 as −1); columns
// orthogonal (Σx_i x_j = 0) with equal Σx_i²; every pair of factors varied
// together (Σx_i²x_j² > 0), equally often for the balanced designs
// (k = 3, 4, 5, 7); and rotatable, Σx_i⁴ = 3Σx_i²x_j² (Box & Hunter 1957),
// for k = 4 and k = 7, the two the paper notes as rotatable (from memory),
// and for no other k (nearly rotatable only).
func TestBoxBehnkenProperties(t *testing.T) {
	for k := 3; k <= 7; k++ {
		d := BoxBehnkenCoded(k, 0)
		moved := 2
		if k >= 6 {
			moved = 3
		}
		for _, p := range d {
			nz := 0
			for _, x := range p {
				if x != -1 && x != 0 && x != 1 {
					t.Fatalf("k=%d: level %v", k, x)
				}
				if x != 0 {
					nz++
				}
			}
			if nz != moved {
				t.Errorf("k=%d: run %v moves %d factors, want %d", k, p, nz, moved)
			}
		}
		var sq0 float64
		pairs := map[float64]int{}
		rotatable := true
		for i := range k {
			var plus, minus, sq, x4 float64
			for _, p := range d {
				switch p[i] {
				case 1:
					plus++
				case -1:
					minus++
				}
				sq += p[i] * p[i]
				x4 += math.Pow(p[i], 4)
			}
			if plus != minus {
				t.Errorf("k=%d factor %d: %v at +1, %v at −1", k, i+1, plus, minus)
			}
			if i == 0 {
				sq0 = sq
			} else if sq != sq0 {
				t.Errorf("k=%d factor %d: Σx² = %v, factor 1 %v", k, i+1, sq, sq0)
			}
			for j := i + 1; j < k; j++ {
				var xx, x22 float64
				for _, p := range d {
					xx += p[i] * p[j]
					x22 += p[i] * p[i] * p[j] * p[j]
				}
				if xx != 0 {
					t.Errorf("k=%d: factors %d,%d not orthogonal (Σxx = %v)", k, i+1, j+1, xx)
				}
				if x22 == 0 {
					t.Errorf("k=%d: factors %d,%d never varied together", k, i+1, j+1)
				}
				pairs[x22]++
				if x4 != 3*x22 {
					rotatable = false
				}
			}
		}
		if balanced := k != 6; balanced && len(pairs) != 1 {
			t.Errorf("k=%d: pair moments %v, want one value", k, pairs)
		}
		if want := k == 4 || k == 7; rotatable != want {
			t.Errorf("k=%d: rotatable = %v, want %v", k, rotatable, want)
		}
	}
}

// Ensure that the unit-cube design is (c + 1)/2 of the coded one.
func TestBoxBehnkenUnit(t *testing.T) {
	c := BoxBehnkenCoded(5, 2)
	u := BoxBehnken(5, 2)
	for i := range c {
		for j := range c[i] {
			if u[i][j] != (c[i][j]+1)/2 {
				t.Fatalf("run %d: unit %v, coded %v", i, u[i], c[i])
			}
		}
	}
}

func TestBoxBehnkenPanics(t *testing.T) {
	mustPanic(t, "k=2", func() { BoxBehnkenCoded(2, 1) })
	mustPanic(t, "k=8", func() { BoxBehnken(8, 1) })
	mustPanic(t, "centre", func() { BoxBehnken(3, -1) })
}
