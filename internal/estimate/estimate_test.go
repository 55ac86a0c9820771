package estimate

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/sweep-cfd/sweep/internal/studytest"
	"gonum.org/v1/gonum/stat"
)

func seq(n int) []float64 {
	t := make([]float64, n)
	for i := range t {
		t[i] = float64(i)
	}
	return t
}

// Ensure that MSER-5 keeps a constant series whole: MSER(d) = 0 for every
// d, and ties go to the smallest d (the definition in White 1997 /
// Spratt 1998; the kim-convergence implementation returns 0 too).
func TestMSER5Constant(t *testing.T) {
	for _, c := range []float64{0, 1, 0.1, -3.7e5} {
		y := make([]float64, 1003)
		for i := range y {
			y[i] = c
		}
		if got := MSER5(y); got != 0 {
			t.Errorf("constant %v: MSER5 = %d, want 0", c, got)
		}
	}
}

// Ensure that MSER-5 cuts a clean step exactly at its end. Derived by hand
// from the definition: y = 1 for the first 100 samples and 0 for the next
// 900 gives batch means Z = 1 for j < 20 and 0 after, so MSER(20) = 0 while
// MSER(d) > 0 for d < 20 (the remaining batches are not all equal);
// 20 ≤ k/2 = 100, so d* = 20 and 100 samples go.
func TestMSER5Step(t *testing.T) {
	y := make([]float64, 1000)
	for i := range 100 {
		y[i] = 1
	}
	if got := MSER5(y); got != 100 {
		t.Errorf("MSER5 = %d, want 100", got)
	}
}

// Ensure that the search stops at half the run. For a ramp y_i = i the
// batch means are Z_j = 5j + 2 and, by hand, MSER(d) = 25((k−d)² − 1) /
// (12 (k−d)), which falls with d: the minimum is at the limit d = ⌊k/2⌋.
func TestMSER5HalfRunLimit(t *testing.T) {
	y := seq(1000) // k = 200
	d, atLimit := MSER(y, 5)
	if d != 100 || !atLimit {
		t.Errorf("ramp: d* = %d (at limit %v), want 100 at the limit", d, atLimit)
	}
	if got := MSER5(y); got != 500 {
		t.Errorf("ramp: MSER5 = %d, want 500", got)
	}
}

// Ensure that τ_int of AR(1) noise matches the analytic (1+φ)/(1−φ)
// (textbook result, e.g. Sokal 1997, sec. 3) within 10 % for long series,
// by Geyer's initial monotone sequence estimator (Geyer 1992). Its
// relative standard deviation is about √(2(2M+1)/n) for a sum of M lags
// (Madras and Sokal 1988): below 5 % for these cases at n = 2^20, so 10 %
// is at least two standard deviations.
func TestGeyerTimeAR1(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 1))
	n := 1 << 20
	for _, phi := range []float64{0, 0.5, 0.9, 0.99} {
		x := studytest.AR1(rng, n, phi, 1)
		tau, lags := GeyerTime(x)
		want := (1 + phi) / (1 - phi)
		t.Logf("φ = %v: τ = %.3f (analytic %.3f), %d lags", phi, tau, want, lags)
		if math.Abs(tau/want-1) > 0.10 {
			t.Errorf("φ = %v: τ = %.3f, want %.3f ± 10 %%", phi, tau, want)
		}
	}
}

// Ensure that the blocked estimate used for long series agrees with the
// analytic long-run variance σ²τ = s²(1+φ)/((1−φ)(1−φ²)) of AR(1) noise
// (textbook, as above), within 10 %.
func TestLongRunBlocked(t *testing.T) {
	rng := rand.New(rand.NewPCG(2, 2))
	phi := 0.9
	x := studytest.AR1(rng, 3*MaxACFLength+7, phi, 1) // blocks of 4
	lrv, tau := LongRun(x)
	want := (1 + phi) / (1 - phi) / (1 - phi*phi)
	if math.Abs(lrv/want-1) > 0.10 {
		t.Errorf("long-run variance %.3f, want %.3f ± 10 %%", lrv, want)
	}
	if math.Abs(tau/((1+phi)/(1-phi))-1) > 0.10 {
		t.Errorf("τ = %.3f, want %.3f ± 10 %%", tau, (1+phi)/(1-phi))
	}
}

// Ensure that the mean and variance agree with gonum's stat package
// (two-pass formulas), rel 1e-12.
func TestMeanVarianceGonum(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 3))
	for _, n := range []int{2, 3, 10, 1000, 100001} {
		x := make([]float64, n)
		for i := range x {
			x[i] = 1e6 + rng.NormFloat64()
		}
		m, v := MeanVariance(x)
		gm, gv := stat.MeanVariance(x, nil)
		if math.Abs(m-gm) > 1e-12*math.Abs(gm) || math.Abs(v-gv) > 1e-12*gv {
			t.Errorf("n = %d: (%v, %v), gonum (%v, %v)", n, m, v, gm, gv)
		}
	}
}

// Ensure that the cycles of a sinusoid in AR(1) noise are found, with
// the mean cycle length within 0.05 % of the period (of 137.3 samples),
// and that 60 series of AR(1) noise alone (φ = 0.9, and φ = 0.98 whose
// correlation time is 99 samples) are not taken for periodic.
func TestCycleDetection(t *testing.T) {
	rng := rand.New(rand.NewPCG(4, 4))
	const p = 137.3
	for k := 0; k < 5; k++ {
		x := studytest.AR1(rng, 20000, 0.5, 0.5)
		ph := rng.Float64() * 2 * math.Pi
		for i := range x {
			x[i] += math.Sin(2*math.Pi*float64(i)/p + ph)
		}
		cs, periodic := FindCycles(x, len(x)/2, DevelopedPeriod(x, len(x)/2))
		if !periodic {
			t.Fatalf("sinusoid not found periodic")
		}
		l := (cs[len(cs)-1].End - cs[0].Start) / float64(len(cs))
		if math.Abs(l/p-1) > 5e-4 {
			t.Errorf("mean cycle length %.4f, want %v ± 0.05 %%", l, p)
		}
	}
	for k := 0; k < 60; k++ {
		phi := []float64{0.9, 0.98}[k%2]
		x := studytest.AR1(rng, 20000, phi, 1)
		if cs, periodic := FindCycles(x, len(x)/2, DevelopedPeriod(x, len(x)/2)); periodic {
			t.Errorf("AR(1) noise (φ = %v) taken for periodic with %d cycles", phi, len(cs))
		}
	}
}
