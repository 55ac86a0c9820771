package doe

import (
	"math"
	"testing"
)

// Ensure that the coded three-factor CCC with 6 centre runs equals the
// NIST/SEMATECH e-Handbook §5.3.3.6.3 Table 3.24 run by run, in the
// handbook's order; tolerance 5e-4 because the handbook prints α = 1.682
// to three decimals (α = 8^(1/4) = 1.68179…).
func TestCentralCompositeNISTTable(t *testing.T) {
	_, table := readTable(t, "nist_handbook_ccc_3factor.csv")
	got := CentralCompositeCoded(3, Circumscribed, 6)
	if len(got) != len(table) {
		t.Fatalf("runs = %d, handbook %d", len(got), len(table))
	}
	for i, row := range table {
		for j := range 3 {
			if math.Abs(got[i][j]-row[j+1]) > 5e-4 {
				t.Errorf("run %d = %v, handbook %v", i+1, got[i], row[1:])
				break
			}
		}
	}
}

// Ensure that RotatableAlpha matches the handbook's α for k = 2, 3, 4
// (NIST/SEMATECH e-Handbook §5.3.3.6.1, printed to 3 decimals: tolerance
// 5e-4), and the exact values 4^(1/4) = √2 and 16^(1/4) = 2 to rel 1e-15.
func TestRotatableAlphaNIST(t *testing.T) {
	_, table := readTable(t, "nist_handbook_ccd_rotatable_alpha.csv")
	for _, row := range table {
		k := int(row[0])
		if nf := float64(int(1) << k); nf != row[1] {
			t.Errorf("k=%d: factorial runs %v, handbook %v", k, nf, row[1])
		}
		if got := RotatableAlpha(k); math.Abs(got-row[2]) > 5e-4 {
			t.Errorf("k=%d: α = %.5f, handbook %.3f", k, got, row[2])
		}
	}
	if got := RotatableAlpha(2); math.Abs(got-math.Sqrt2) > 1e-15*math.Sqrt2 {
		t.Errorf("α(2) = %.17g, want √2", got)
	}
	if got := RotatableAlpha(4); got != 2 {
		t.Errorf("α(4) = %.17g, want 2", got)
	}
}

// Ensure that the CCC with α = (2^k)^(1/4) is rotatable, by the moment
// conditions of Box & Hunter (1957) on the design (from memory): odd
// moments vanish, Σx_i²x_j² equal for all pairs and Σx_i⁴ = 3Σx_i²x_j²;
// here Σx_i⁴ = 2^k + 2α⁴ = 3·2^k. Rel 1e-12, k = 2..6, 4 centre runs.
func TestCentralCompositeRotatable(t *testing.T) {
	for k := 2; k <= 6; k++ {
		runs := CentralCompositeCoded(k, Circumscribed, 4)
		nf := float64(int(1) << k)
		for i := range k {
			var odd, x4 float64
			for _, r := range runs {
				odd += r[i] + r[i]*r[i]*r[i]
				x4 += math.Pow(r[i], 4)
			}
			if math.Abs(odd) > 1e-12 {
				t.Errorf("k=%d factor %d: odd moment %v", k, i, odd)
			}
			if math.Abs(x4-3*nf) > 1e-12*3*nf {
				t.Errorf("k=%d factor %d: Σx⁴ = %v, want %v", k, i, x4, 3*nf)
			}
			for j := i + 1; j < k; j++ {
				var x22, x1 float64
				for _, r := range runs {
					x22 += r[i] * r[i] * r[j] * r[j]
					x1 += r[i] * r[j]
				}
				if math.Abs(x22-nf) > 1e-12*nf || x1 != 0 {
					t.Errorf("k=%d pair %d,%d: Σx²x² = %v (want %v), Σxx = %v", k, i, j, x22, nf, x1)
				}
			}
		}
	}
}

// Ensure the relations between the three kinds (NIST/SEMATECH e-Handbook
// §5.3.3.6.1): CCI is CCC divided by α, CCF has levels −1, 0, 1 only; all
// have 2^k + 2k + centre runs; in the unit cube every point lies in [0,1],
// the axial points on the faces, and CCC and CCI coincide.
func TestCentralCompositeKinds(t *testing.T) {
	for k := 2; k <= 5; k++ {
		a := RotatableAlpha(k)
		ccc := CentralCompositeCoded(k, Circumscribed, 3)
		cci := CentralCompositeCoded(k, Inscribed, 3)
		ccf := CentralCompositeCoded(k, FaceCentred, 3)
		want := 1<<k + 2*k + 3
		for _, d := range [][][]float64{ccc, cci, ccf} {
			if len(d) != want {
				t.Fatalf("k=%d: %d runs, want %d", k, len(d), want)
			}
		}
		for i := range ccc {
			for j := range ccc[i] {
				if math.Abs(cci[i][j]-ccc[i][j]/a) > 1e-15 {
					t.Errorf("k=%d run %d: CCI %v ≠ CCC/α", k, i, cci[i])
				}
				if v := ccf[i][j]; v != -1 && v != 0 && v != 1 {
					t.Errorf("k=%d: CCF level %v", k, v)
				}
			}
		}
		uc := CentralComposite(k, Circumscribed, 3)
		ui := CentralComposite(k, Inscribed, 3)
		uf := CentralComposite(k, FaceCentred, 3)
		if !sameRuns(uc, ui, 1e-15) {
			t.Errorf("k=%d: unit-cube CCC and CCI differ", k)
		}
		for _, u := range [][][]float64{uc, uf} {
			for _, p := range u {
				for _, x := range p {
					if x < 0 || x > 1 {
						t.Errorf("k=%d: unit coordinate %v outside [0,1]", k, x)
					}
				}
			}
			for i := 1 << k; i < 1<<k+2*k; i++ {
				j := (i - 1<<k) / 2
				if face := float64((i - 1<<k) % 2); math.Abs(u[i][j]-face) > 1e-15 {
					t.Errorf("k=%d: axial run %d = %v, want factor %d on face %v", k, i, u[i], j, face)
				}
			}
		}
		// CCC factorial points sit inside at ½ ± 1/(2α).
		if got, want := uc[0][0], 0.5-0.5/a; math.Abs(got-want) > 1e-15 {
			t.Errorf("k=%d: CCC factorial level %v, want %v", k, got, want)
		}
	}
	if Circumscribed.String() != "CCC" || Inscribed.String() != "CCI" || FaceCentred.String() != "CCF" {
		t.Error("kind names differ from the handbook's")
	}
}

func TestCentralCompositePanics(t *testing.T) {
	mustPanic(t, "k", func() { CentralCompositeCoded(1, Circumscribed, 1) })
	mustPanic(t, "centre", func() { CentralComposite(3, FaceCentred, -1) })
	mustPanic(t, "kind", func() { CentralComposite(3, CompositeKind(9), 1) })
	mustPanic(t, "alpha", func() { RotatableAlpha(0) })
}
