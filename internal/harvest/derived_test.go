package harvest

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/sweep-cfd/sweep/internal/studytest"
)

// Ensure that the cycle statistics of a sinusoid in noise are recovered
// within their intervals: for y = 1 + A sin(2πt/P) the cycle maximum is
// 1 + A, the minimum 1 − A, the amplitude 2A, the rms of the fluctuation
// A/√2, the frequency 1/P, and the Strouhal number f L/U (plain
// trigonometry). The noise is a thousandth of A: the extremes of noisy
// samples are biased by about the noise level (the largest of a cycle's
// samples picks its noise's peaks), a bias the intervals do not hold.
func TestDerivedStatistics(t *testing.T) {
	rng := rand.New(rand.NewPCG(31, 7))
	const A, P, dt = 0.5, 2.0, 0.05
	n := 8000
	tt := make([]float64, n)
	y := make([]float64, n)
	noise := studytest.AR1(rng, n, 0.5, 0.0005)
	for i := range y {
		tt[i] = float64(i) * dt
		y[i] = 1 + A*math.Sin(2*math.Pi*tt[i]/P+0.3) + noise[i]
	}
	r := Analyze(tt, y, Options{})
	if r.Method != "cycles" || r.Cycle == nil {
		t.Fatalf("a sinusoid was not averaged over cycles: %s, %s", r.Method, r.Message)
	}
	opts := Options{Rel: 0.01}
	for _, c := range []struct {
		stat string
		want float64
	}{
		{"max", 1 + A}, {"min", 1 - A}, {"amplitude", 2 * A}, {"rms", A / math.Sqrt2},
		{"frequency", 1 / P}, {"strouhal", (1 / P) * 0.1 / 1.5},
	} {
		d := r.Derived(c.stat, opts, 0.1, 1.5)
		t.Logf("%s = %.5f ± %.2g (want %.5f), %s", c.stat, d.Mean, d.HalfWidth, c.want, d.Verdict)
		if !d.Verdict.Usable() {
			t.Errorf("%s: verdict %s (%s)", c.stat, d.Verdict, d.Message)
		}
		// The truth within the interval, allowing the bias of the
		// extremes (about the noise level, 6e-4).
		slack := 0.0
		if c.stat == "max" || c.stat == "min" || c.stat == "amplitude" {
			slack = 1.2e-3
		}
		if math.Abs(d.Mean-c.want) > d.HalfWidth+slack {
			t.Errorf("%s = %.6f ± %.2g, want %.6f", c.stat, d.Mean, d.HalfWidth, c.want)
		}
	}
	// A broadband history has an rms but no cycle statistics; a steady
	// one has neither.
	b := Analyze(tt, studytest.AR1(rng, n, 0.5, 1), Options{Abs: 1})
	if d := b.Derived("max", opts, 1, 1); d.Verdict != NoData || d.Message != "the history has no regular cycle, so it has no max" {
		t.Errorf("broadband max: %s %q", d.Verdict, d.Message)
	}
	if d := b.Derived("rms", opts, 1, 1); math.IsNaN(d.HalfWidth) || math.Abs(d.Mean-1/math.Sqrt(0.75)) > d.HalfWidth {
		t.Errorf("broadband rms %v ± %v (%s), want %.4f", d.Mean, d.HalfWidth, d.Verdict, 1/math.Sqrt(0.75))
	}
	flat := make([]float64, n)
	for i := range flat {
		flat[i] = 2
	}
	if d := Analyze(tt, flat, Options{}).Derived("rms", opts, 1, 1); d.Verdict != NoData {
		t.Errorf("steady rms: %s", d.Verdict)
	}
}
