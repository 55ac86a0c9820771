// File: Geyer's initial monotone sequence estimate of the integrated
// autocorrelation time (Geyer 1992), on the autocovariance computed by FFT
// (Wiener–Khinchin).

package estimate

import "math"

// Autocovariance returns γ̂_k for k = 0..maxLag of x with the sample mean
// removed and the biased normalisation
//
//	γ̂_k = 1/n Σ_{i=0}^{n−1−k} (x_i − x̄)(x_{i+k} − x̄),
//
// through a zero-padded FFT (Wiener–Khinchin), O(n log n). The 1/n
// normalisation (not 1/(n−k)) keeps the sequence positive definite and
// does not inflate the estimates at long lags, where few pairs remain.
// It returns nil for fewer than two samples.
func Autocovariance(x []float64, maxLag int) []float64 {
	n := len(x)
	if n < 2 {
		return nil
	}
	maxLag = min(maxLag, n-1)
	var mean float64
	for _, v := range x {
		mean += v
	}
	mean /= float64(n)
	size := 1
	for size < n+maxLag+1 {
		size <<= 1
	}
	seq := make([]float64, size)
	for i, v := range x {
		seq[i] = v - mean
	}
	fft := getFFT(size)
	defer putFFT(size, fft)
	coef := fft.Coefficients(nil, seq)
	for i, c := range coef {
		coef[i] = complex(real(c)*real(c)+imag(c)*imag(c), 0)
	}
	sums := fft.Sequence(seq, coef) // unnormalised: size · Σ x_i x_{i+k}
	g := make([]float64, maxLag+1)
	for k := range g {
		g[k] = sums[k] / float64(size) / float64(n)
	}
	return g
}

// GeyerTime estimates the integrated autocorrelation time of a stationary
// series, in samples,
//
//	τ_int = 1 + 2 Σ_{k≥1} ρ_k,
//
// so that Var(x̄) ≈ σ² τ_int / n, by Geyer's initial monotone sequence
// estimator: with Γ_m = γ̂_{2m} + γ̂_{2m+1} (sums of adjacent
// autocovariances, which are positive and decreasing for a reversible
// process), the sum is truncated at the first m with Γ_m ≤ 0, each Γ_m is
// replaced by the least of Γ_0..Γ_m so the sequence is monotone, and
//
//	σ²τ = −γ̂_0 + 2 Σ_{m<M} Γ_m,   τ = σ²τ/γ̂_0.
//
// Unlike a windowed sum (Sokal's automatic window) it has no tuning
// constant and cannot feed on its own estimate on short series; it is
// slightly conservative. For AR(1) noise with coefficient φ,
// τ_int = (1+φ)/(1−φ). It returns τ (at least 1/n) and the lag 2M at
// which the sum stopped; a constant series gives τ = 1.
//
// Reference: C. J. Geyer, "Practical Markov chain Monte Carlo",
// Statistical Science 7(4) (1992) 473–483, sec. 3.3.
func GeyerTime(x []float64) (tau float64, lags int) {
	g := Autocovariance(x, len(x)-1)
	return GeyerFromCov(g, len(x))
}

func GeyerFromCov(g []float64, n int) (tau float64, lags int) {
	if len(g) < 2 || !(g[0] > 0) {
		return 1, 0
	}
	sum := -g[0]
	prev := math.Inf(1)
	m := 0
	for ; 2*m+1 < len(g); m++ {
		gm := g[2*m] + g[2*m+1]
		if gm <= 0 {
			break
		}
		gm = math.Min(gm, prev)
		prev = gm
		sum += 2 * gm
	}
	tau = sum / g[0]
	return math.Max(tau, 1/float64(n)), 2 * m
}
