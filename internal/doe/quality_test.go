package doe

import (
	"math"
	"testing"
)

// Ensure that MinDistance and PhiP match values worked by hand on a 3-4-5
// right triangle scaled by 1/10 (distances 0.3, 0.4, 0.5).
func TestMinDistancePhiPHand(t *testing.T) {
	pts := [][]float64{{0, 0}, {0.3, 0}, {0, 0.4}}
	if got := MinDistance(pts); math.Abs(got-0.3) > 1e-15 {
		t.Errorf("MinDistance = %v, want 0.3", got)
	}
	tests := []struct {
		p    float64
		want float64
	}{
		{1, 1/0.3 + 1/0.4 + 1/0.5},                                                       // hand, rel 1e-14
		{2, math.Sqrt(1/0.09 + 1/0.16 + 1/0.25)},                                         // hand, rel 1e-14
		{50, math.Pow(math.Pow(0.3, -50)+math.Pow(0.4, -50)+math.Pow(0.5, -50), 1.0/50)}, // hand, rel 1e-14
	}
	for _, tt := range tests {
		if got := PhiP(pts, tt.p); math.Abs(got-tt.want) > 1e-14*tt.want {
			t.Errorf("PhiP(p=%v) = %.17g, want %.17g", tt.p, got, tt.want)
		}
	}
	// φ_p → 1/d_min as p → ∞ (Morris & Mitchell 1995); at p = 1000 the
	// other pairs add (0.3/0.4)^1000 ≈ 1e-125, far below rounding.
	if got := PhiP(pts, 1000); math.Abs(got-1/0.3) > 1e-13 {
		t.Errorf("PhiP(p=1000) = %v, want 1/0.3", got)
	}
	if got := MinDistance(pts[:1]); !math.IsInf(got, 1) {
		t.Errorf("MinDistance of one point = %v, want +Inf", got)
	}
}

// Ensure that the centred L2 discrepancy matches SciPy's documented
// example: the 6-point design {(1,3),(2,6),(3,2),(4,5),(5,1),(6,4)} scaled
// from [0.5, 6.5]^2 to the unit square has CD₂² = 0.008142039609053513
// (scipy.stats.qmc.update_discrepancy documentation, SciPy 1.7–1.11;
// qmc.discrepancy returns the squared value), rel 1e-12.
func TestCenteredL2DiscrepancySciPy(t *testing.T) {
	raw := [][2]float64{{1, 3}, {2, 6}, {3, 2}, {4, 5}, {5, 1}, {6, 4}}
	pts := make([][]float64, len(raw))
	for i, r := range raw {
		pts[i] = []float64{(r[0] - 0.5) / 6, (r[1] - 0.5) / 6}
	}
	const want = 0.008142039609053513
	got := CenteredL2Discrepancy(pts)
	if rel := math.Abs(got*got-want) / want; rel > 1e-12 {
		t.Errorf("CD₂² = %.17g, want %.17g (rel %.2g)", got*got, want, rel)
	}
}

// Ensure that a single point at the centre of [0,1]^k has CD₂² =
// (13/12)^k − 2 + 1 (closed form of Hickernell 1998 with z = 0, by hand),
// rel 1e-14.
func TestCenteredL2DiscrepancyCentrePoint(t *testing.T) {
	for k := 1; k <= 6; k++ {
		pt := [][]float64{make([]float64, k)}
		for j := range pt[0] {
			pt[0][j] = 0.5
		}
		want := math.Pow(13.0/12.0, float64(k)) - 1
		got := CenteredL2Discrepancy(pt)
		if math.Abs(got*got-want) > 1e-14*want {
			t.Errorf("k=%d: CD₂² = %v, want %v", k, got*got, want)
		}
	}
}

// Ensure that the mean CD₂² of n independent uniform points matches its
// expectation E[CD₂²] = ((5/4)^k − (13/12)^k)/n, derived by hand from the
// closed form (E[1 + ½z − ½z²] = 13/12, E[1 + z] = 5/4 on the diagonal and
// 13/12 off it, z = |x − ½|). Monte Carlo over 2000 seeded sets; tolerance
// 4 standard errors of the sample mean.
func TestCenteredL2DiscrepancyExpectation(t *testing.T) {
	const n, k, sets = 10, 3, 2000
	src := NewUniformCandidates(k, 7)
	var sum, sum2 float64
	for range sets {
		pts := make([][]float64, n)
		for i := range pts {
			pts[i] = src.Next()
		}
		d := CenteredL2Discrepancy(pts)
		sum += d * d
		sum2 += d * d * d * d
	}
	mean := sum / sets
	se := math.Sqrt((sum2/sets - mean*mean) / (sets - 1))
	want := (math.Pow(1.25, k) - math.Pow(13.0/12.0, k)) / n
	if math.Abs(mean-want) > 4*se {
		t.Errorf("mean CD₂² = %.6g ± %.2g, want %.6g", mean, se, want)
	}
}

func TestQualityPanics(t *testing.T) {
	mustPanic(t, "empty", func() { CenteredL2Discrepancy(nil) })
	mustPanic(t, "outside", func() { CenteredL2Discrepancy([][]float64{{1.5}}) })
	mustPanic(t, "ragged", func() { MinDistance([][]float64{{0}, {0, 1}}) })
	mustPanic(t, "p", func() { PhiP([][]float64{{0}, {1}}, 0) })
}

func BenchmarkCenteredL2Discrepancy256x5(b *testing.B) {
	pts := SobolPoints(256, 5, SobolOptions{})
	for b.Loop() {
		CenteredL2Discrepancy(pts)
	}
}
