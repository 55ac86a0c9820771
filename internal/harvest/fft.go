package harvest

import (
	"math"
	"sync"

	"gonum.org/v1/gonum/dsp/fourier"
)

// autocorrelation returns ρ_k for k = 0..maxLag of x, with the sample mean
// removed and the unbiased normalisation
//
//	ĉ_k = 1/(n−k) Σ_{i=0}^{n−1−k} (x_i − x̄)(x_{i+k} − x̄),   ρ_k = ĉ_k/ĉ_0,
//
// computed through a zero-padded FFT (Wiener–Khinchin), O(n log n). It
// returns nil if x has fewer than two samples or zero variance.
func autocorrelation(x []float64, maxLag int) []float64 {
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
	if sums[0] <= 0 {
		return nil
	}
	rho := make([]float64, maxLag+1)
	c0 := sums[0] / float64(n)
	for k := 0; k <= maxLag; k++ {
		rho[k] = sums[k] / float64(n-k) / c0
	}
	rho[0] = 1
	return rho
}

// fftPlans keeps FFT plans by length; a plan is not safe for concurrent
// use, so each is taken out while in use.
var fftPlans sync.Map // int → *sync.Pool

func getFFT(n int) *fourier.FFT {
	p, _ := fftPlans.LoadOrStore(n, &sync.Pool{New: func() any { return fourier.NewFFT(n) }})
	return p.(*sync.Pool).Get().(*fourier.FFT)
}

func putFFT(n int, f *fourier.FFT) {
	if p, ok := fftPlans.Load(n); ok {
		p.(*sync.Pool).Put(f)
	}
}

// sokalWindow is Sokal's c for τ = 1 + 2Σρ (c = 6 in Sokal's convention
// τ = ½ + Σρ, which is half of ours).
const sokalWindow = 3

// IntegratedTime estimates the integrated autocorrelation time of a
// stationary series, in samples,
//
//	τ_int = 1 + 2 Σ_{k≥1} ρ_k,
//
// so that Var(x̄) ≈ σ² τ_int / n and the effective sample count is
// n/τ_int. For AR(1) noise with coefficient φ, τ_int = (1+φ)/(1−φ).
//
// The sum is truncated at Sokal's self-consistent window: the smallest
// M ≥ 1 with M ≥ 3 τ̂(M), where τ̂(M) = 1 + 2 Σ_{k=1}^{M} ρ̂_k (Sokal's
// c = 6 written for his τ = ½ + Σρ). The bias of ρ̂_k from the estimated
// mean is corrected with Wolff's factor, τ̂ ← τ̂ (1 + (2M+1)/n). The
// estimate's relative standard deviation is about √(2(2M+1)/n), so the
// variance estimate σ̂²τ̂/n behaves like a χ² with ν ≈ n/(2M+1) degrees of
// freedom; dof returns that ν.
//
// ok is false when no window satisfies the rule below n/2 (the series is
// too short for its correlation, or not stationary); τ is then the value
// at M = n/2, an underestimate. For n < 2 or a constant series it returns
// τ = 1, window 0, ok = true. It takes O(n log n) time and holds about six
// n-sized float64 buffers (Analyze averages long series in blocks first).
//
// References: A. D. Sokal, "Monte Carlo methods in statistical mechanics:
// foundations and new algorithms", Cargèse lectures 1996, in Functional
// Integration, NATO ASI Series B 361 (1997), sec. 3; N. Madras and
// A. D. Sokal, J. Stat. Phys. 50 (1988) 109–186, for the variance formula;
// U. Wolff, "Monte Carlo errors with less errors", Comput. Phys. Commun.
// 156 (2004) 143–153, for the bias correction.
func IntegratedTime(x []float64) (tau float64, window int, dof float64, ok bool) {
	rho := autocorrelation(x, len(x)/2)
	return integratedTimeFromRho(rho, len(x))
}

func integratedTimeFromRho(rho []float64, n int) (tau float64, window int, dof float64, ok bool) {
	if len(rho) < 2 {
		return 1, 0, float64(max(n-1, 0)), true
	}
	tau = 1
	m := 0
	for m = 1; m < len(rho); m++ {
		tau += 2 * rho[m]
		if float64(m) >= sokalWindow*tau {
			ok = true
			break
		}
	}
	if !ok {
		m = len(rho) - 1
	}
	tau *= 1 + float64(2*m+1)/float64(n)
	dof = float64(n) / float64(2*m+1)
	return tau, m, dof, ok
}

// detectPeriod looks for a dominant period in ρ (lags in samples). After
// the first lag where ρ < 0, the first lobe where ρ reaches
// minPeakCorrelation is taken; the lobe ends where ρ falls below half that
// (the hysteresis keeps noise near a slow zero crossing from splitting it)
// and must end within the first third of the series. Its maximum at lag k
// is refined at multiples j·k (j = 2, 4, 8, ...) while the peaks stay
// clear, so the error shrinks like 1/j. It returns the period in samples,
// or 0.
func detectPeriod(rho []float64, n int) float64 {
	lim := min(len(rho)-1, n/3)
	k := 1
	for k <= lim && rho[k] >= 0 {
		k++
	}
	for k <= lim && rho[k] < minPeakCorrelation {
		k++
	}
	if k > lim {
		return 0
	}
	best := k
	for ; k <= lim && rho[k] >= minPeakCorrelation/2; k++ {
		if rho[k] > rho[best] {
			best = k
		}
	}
	if k > lim {
		return 0 // the lobe does not end inside the series' first third
	}
	p := peakAt(rho, best)
	for j := 2; ; j *= 2 {
		c := int(math.Round(float64(j) * p))
		w := max(1, int(p/4))
		if c+w > lim {
			break
		}
		bk := c - w
		for i := c - w; i <= c+w; i++ {
			if rho[i] > rho[bk] {
				bk = i
			}
		}
		if rho[bk] < minPeakCorrelation/2 || bk == c-w || bk == c+w {
			break
		}
		p = peakAt(rho, bk) / float64(j)
	}
	return p
}

// refinePeriod sharpens a period estimate p (samples) from the phase drift
// of the signal's component at frequency 1/p between the two halves of x:
// with c_h = Σ_{i∈half h} (x_i − x̄) e^{−2πi·i/p}, the phase of c_2/c_1
// grows by 2π (1/p_true − 1/p)·(n/2), so 1/p_true = 1/p + arg(c_2/c_1)/(πn).
// It returns p unchanged if the drift is ambiguous (beyond ±π/2) or the
// component is too weak to measure.
func refinePeriod(x []float64, p float64) float64 {
	n := len(x)
	if p <= 0 || float64(n) < 4*p {
		return p
	}
	mean, _ := meanVariance(x)
	for iter := 0; iter < 2; iter++ {
		w := 2 * math.Pi / p
		h := n / 2
		var r1, i1, r2, i2 float64
		for i, v := range x[:2*h] {
			s, c := math.Sincos(w * float64(i))
			d := v - mean
			if i < h {
				r1 += d * c
				i1 -= d * s
			} else {
				r2 += d * c
				i2 -= d * s
			}
		}
		// arg(c2 · conj(c1))
		dphi := math.Atan2(i2*r1-r2*i1, r2*r1+i2*i1)
		if math.Hypot(r1, i1) == 0 || math.Abs(dphi) > math.Pi/2 {
			return p
		}
		f := 1/p + dphi/(2*math.Pi*float64(h))
		if f <= 0 {
			return p
		}
		p = 1 / f
	}
	return p
}

// minPeakCorrelation is the autocorrelation a lobe must reach to count as a
// period.
const minPeakCorrelation = 0.3

// peakAt refines an interior local maximum of r at i by a parabola through
// three points.
func peakAt(r []float64, i int) float64 {
	if i <= 0 || i >= len(r)-1 {
		return float64(i)
	}
	a, b, c := r[i-1], r[i], r[i+1]
	den := a - 2*b + c
	if den >= 0 {
		return float64(i)
	}
	d := 0.5 * (a - c) / den
	if math.Abs(d) > 0.5 {
		return float64(i)
	}
	return float64(i) + d
}
