package harvest

import (
	"math"
	"math/rand/v2"
	"os"
	"sort"
	"testing"
)

// ar1 returns n samples of stationary AR(1) noise x_i = φ x_{i−1} + e_i,
// e_i ~ N(0, s²), started from its stationary law. Its variance is
// s²/(1−φ²) and its integrated autocorrelation time (1+φ)/(1−φ)
// (textbook result, e.g. Sokal 1997, sec. 3).
func ar1(rng *rand.Rand, n int, phi, s float64) []float64 {
	x := make([]float64, n)
	v := rng.NormFloat64() * s / math.Sqrt(1-phi*phi)
	for i := range x {
		if i > 0 {
			v = phi*v + s*rng.NormFloat64()
		}
		x[i] = v
	}
	return x
}

// family is one class of synthetic histories with a known true mean.
type family struct {
	name  string
	count int
	// gen returns the series (true mean mu), the transient that was
	// added to it, and the standard deviation of its stationary
	// fluctuation (the noise level).
	gen func(rng *rand.Rand, i, n int) (y, transient []float64, noise float64)
}

const (
	covN  = 20000 // samples per series: 100 τ_int for φ = 0.99
	covMu = 1.0   // the true mean
)

// withTransient adds A·exp(−i/T) to x, with |A| from 2 to 10 times the
// noise level (random sign) and T from 0.5 % to 5 % of the series.
func withTransient(rng *rand.Rand, x []float64, noise float64) (y, tr []float64) {
	a := noise * (2 + 8*rng.Float64())
	if rng.IntN(2) == 0 {
		a = -a
	}
	T := float64(len(x)) * (0.005 + 0.045*rng.Float64())
	y = make([]float64, len(x))
	tr = make([]float64, len(x))
	for i := range x {
		tr[i] = a * math.Exp(-float64(i)/T)
		y[i] = covMu + x[i] + tr[i]
	}
	return y, tr
}

var coverageFamilies = []family{
	{
		// (a) AR(1) noise, φ cycling through 0.5, 0.9 and 0.99, with (c)
		// an exponential initial transient.
		name: "ar1", count: 1002,
		gen: func(rng *rand.Rand, i, n int) ([]float64, []float64, float64) {
			phi := []float64{0.5, 0.9, 0.99}[i%3]
			noise := 1 / math.Sqrt(1-phi*phi)
			y, tr := withTransient(rng, ar1(rng, n, phi, 1), noise)
			return y, tr, noise
		},
	},
	{
		// (b) a sinusoid of random phase and 10 to 100 periods, plus AR(1)
		// noise (φ = 0.5), with (c) an exponential initial transient.
		name: "sine", count: 1000,
		gen: func(rng *rand.Rand, i, n int) ([]float64, []float64, float64) {
			period := float64(n) / (10 + 90*rng.Float64())
			phase := 2 * math.Pi * rng.Float64()
			x := ar1(rng, n, 0.5, 0.5)
			for j := range x {
				x[j] += math.Sin(2*math.Pi*float64(j)/period + phase)
			}
			noise := math.Sqrt(0.5 + 0.25/0.75)
			y, tr := withTransient(rng, x, noise)
			return y, tr, noise
		},
	},
}

// Ensure that the 95 % intervals cover the true mean in 93 % to 97 % of
// synthetic series, and that the transient is cut where it should be.
//
// The interval: Schmeiser (1982), "Batch size effects in the analysis of
// simulation output", for 10–30 batches with Student t on batches−1
// degrees of freedom; Sokal (1997), "Monte Carlo methods in statistical
// mechanics: foundations and new algorithms", for τ_int with a
// self-consistent window. The transient: White (1997) and Spratt (1998)
// for MSER-5, with the early/late check of Geweke (1992).
//
// With 1,000 series the binomial standard deviation of a 95 % coverage is
// 0.7 %, so the 93–97 % band is ±2.9 standard deviations. Per AR
// coefficient (334 series, 1.2 %) the floor is 90 %: a method that
// covers 70 % of the time fails by far. Measured with these seeds: AR(1)
// 94.3 % (φ = 0.5: 95.5 %, 0.9: 92.8 %, 0.99: 94.6 %), sinusoid 95.9 %;
// longer series (TestCoverageLong): AR(1) 94.7 %, sinusoid 96.3 %.
func TestCoverage(t *testing.T) {
	checkCoverage(t, covN, 1)
}

// Ensure the same of series five times longer, whose autocorrelation is
// computed on block means (see correlation); 300 series per family, so
// the binomial standard deviation is 1.3 % and the band is widened to
// 91–98.5 %. Slow: set SWEEP_TEST_LONG=1.
func TestCoverageLong(t *testing.T) {
	if testing.Short() || os.Getenv("SWEEP_TEST_LONG") == "" {
		t.Skip("set SWEEP_TEST_LONG=1 to run")
	}
	checkCoverage(t, 5*covN, 0.3)
}

func checkCoverage(t *testing.T, covN int, frac float64) {
	for fi, fam := range coverageFamilies {
		fam.count = int(float64(fam.count) * frac)
		lo, hi := 0.93, 0.97
		if frac < 1 {
			lo, hi = 0.91, 0.985
		}
		t.Run(fam.name, func(t *testing.T) {
			rng := rand.New(rand.NewPCG(20240601, uint64(fi)+uint64(covN)))
			times := make([]float64, covN)
			for i := range times {
				times[i] = float64(i)
			}
			var covered, failed int
			perGroup := map[int][2]int{}
			var bias, left []float64
			for i := 0; i < fam.count; i++ {
				y, tr, noise := fam.gen(rng, i, covN)
				r := Analyze(times, y, Options{})
				if r.Verdict == Failed {
					failed++
					t.Logf("series %d failed: %s", i, r.Message)
					continue
				}
				in := math.Abs(r.Mean-covMu) <= r.HalfWidth
				if in {
					covered++
				}
				g := perGroup[i%3]
				g[1]++
				if in {
					g[0]++
				}
				perGroup[i%3] = g

				cut := int(math.Round(r.TransientEnd))
				if cut > covN/2 {
					t.Errorf("series %d: transient cut at %d, in the second half", i, cut)
				}
				// What is left of the transient: its bias on the
				// mean, in standard errors, and its size at the cut
				// in noise levels.
				var b float64
				for _, v := range tr[cut:] {
					b += v
				}
				b /= float64(covN - cut)
				bias = append(bias, math.Abs(b)/r.StdError)
				left = append(left, math.Abs(tr[cut])/noise)
			}
			// A series whose estimated τ_int leaves fewer than 20
			// correlation times is refused as too short; that is an
			// honest answer, but it must stay rare (≤ 0.5 %).
			if failed > fam.count/200 {
				t.Errorf("%d of %d series failed", failed, fam.count)
			}
			cov := float64(covered) / float64(fam.count-failed)
			t.Logf("%s: coverage %.1f %% of %d series", fam.name, 100*cov, fam.count-failed)
			if cov < lo || cov > hi {
				t.Errorf("%s: 95 %% intervals cover the true mean in %.1f %% of series, want %.1f–%.1f %%", fam.name, 100*cov, 100*lo, 100*hi)
			}
			if fam.name == "ar1" && frac == 1 {
				for g, phi := range []float64{0.5, 0.9, 0.99} {
					c := float64(perGroup[g][0]) / float64(perGroup[g][1])
					t.Logf("  φ = %v: coverage %.1f %%", phi, 100*c)
					if c < 0.90 {
						t.Errorf("φ = %v: coverage %.1f %%, want at least 90 %%", phi, 100*c)
					}
				}
			}
			// A leftover bias of 0.35 standard errors would by itself
			// lower a 95 % coverage to 94.3 %; the median must stay below
			// it and nine in ten below one standard error.
			q := func(v []float64, p float64) float64 {
				s := append([]float64(nil), v...)
				sort.Float64s(s)
				return s[int(p*float64(len(s)-1))]
			}
			t.Logf("  leftover bias/SE: median %.2f, 90th %.2f, max %.2f; transient at the cut/noise: median %.2f, 90th %.2f",
				q(bias, 0.5), q(bias, 0.9), q(bias, 1), q(left, 0.5), q(left, 0.9))
			if m := q(bias, 0.5); m > 0.35 {
				t.Errorf("median leftover transient bias %.2f standard errors, want ≤ 0.35", m)
			}
			if m := q(bias, 0.9); m > 1 {
				t.Errorf("90th percentile of leftover transient bias %.2f standard errors, want ≤ 1", m)
			}
			// In most series the transient has decayed below the noise
			// level where averaging starts.
			if m := q(left, 0.5); m > 1 {
				t.Errorf("median transient at the cut %.2f noise levels, want below 1", m)
			}
		})
	}
}
