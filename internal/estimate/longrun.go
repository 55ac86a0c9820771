// File: The long-run variance of a correlated series and the batch-means
// standard error of its mean (Schmeiser 1982), the early/late comparison
// of a window (Geweke 1992), the least-squares removal of a tone, and the
// Student t quantile.

package estimate

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// MaxACFLength is the longest series whose Autocovariance is computed
// sample by sample; longer ones are first reduced to block means.
const MaxACFLength = 1 << 16

// LongRun returns the long-run variance σ²τ (n times the variance of the
// mean) of x and τ_int in samples, by Geyer's estimator; beyond
// MaxACFLength samples on block means of B samples, σ²τ = B·σ²_B·τ_B.
func LongRun(x []float64) (lrv, tau float64) {
	_, vx := MeanVariance(x)
	if len(x) < 2 || vx == 0 {
		return 0, 1
	}
	bs := (len(x) + MaxACFLength - 1) / MaxACFLength
	xb := x
	if bs > 1 {
		xb = BlockMeans(x, bs)
	}
	g := Autocovariance(xb, len(xb)-1)
	tb, _ := GeyerFromCov(g, len(xb))
	lrv = float64(bs) * g[0] * tb
	// τ in samples relative to the biased variance of x, as γ̂_0 is.
	v0 := vx * float64(len(x)-1) / float64(len(x))
	return lrv, math.Max(lrv/v0, 1/float64(len(x)))
}

// LongRunTone is LongRun of x without its tone of period p samples (the
// least-squares sinusoid at that period), when there is one (p ≥ 2).
func LongRunTone(x []float64, p float64) (lrv, tau float64) {
	if p >= 2 {
		return LongRun(RemoveTone(x, p))
	}
	return LongRun(x)
}

// RemoveTone returns x minus its least-squares sinusoid of period p
// samples (and its mean).
func RemoveTone(x []float64, p float64) []float64 {
	mean, _ := MeanVariance(x)
	w := 2 * math.Pi / p
	var scc, sss, scs, syc, sys float64
	for i, v := range x {
		sn, cs := math.Sincos(w * float64(i))
		d := v - mean
		scc += cs * cs
		sss += sn * sn
		scs += sn * cs
		syc += d * cs
		sys += d * sn
	}
	det := scc*sss - scs*scs
	if det == 0 {
		return x
	}
	a := (syc*sss - sys*scs) / det
	b := (sys*scc - syc*scs) / det
	r := make([]float64, len(x))
	for i, v := range x {
		sn, cs := math.Sincos(w * float64(i))
		r[i] = v - mean - a*cs - b*sn
	}
	return r
}

// BlockMeans returns the means of consecutive blocks of bs samples.
func BlockMeans(x []float64, bs int) []float64 {
	z := make([]float64, len(x)/bs)
	for j := range z {
		var s float64
		for _, v := range x[j*bs : (j+1)*bs] {
			s += v
		}
		z[j] = s / float64(bs)
	}
	return z
}

// BatchStdError returns the batch-means standard error of the mean of N
// samples whose last b·m samples are x, in b batches of m:
//
//	SE² = m S²_B / N,   S²_B the sample variance of the batch means,
//
// m S²_B estimating the long-run variance σ²τ.
func BatchStdError(x []float64, m, b, N int) float64 {
	z := BlockMeans(x, m)[:b]
	_, v := MeanVariance(z)
	return math.Sqrt(float64(m) * v / float64(N))
}

const (
	GewekeZ = 1.959964 // two-sided 95 % normal quantile
	GewekeA = 0.1      // early part and cut step, as a fraction of the window
)

// EarlyLateZ compares the mean of the first tenth of x with the mean of its
// second half, in units of their standard error from the long-run variance
// lrv = σ²τ:
//
//	z = (x̄_A − x̄_B) / √(lrv/n_A + lrv/n_B).
//
// Reference: J. Geweke (1992), as above (first 10 % against last 50 %).
//
// It also returns the difference itself.
func EarlyLateZ(x []float64, lrv float64) (z, diff float64) {
	n := len(x)
	na, nb := int(float64(n)*GewekeA), n/2
	if na < 1 || nb < 1 || lrv <= 0 {
		return 0, 0
	}
	ma, _ := MeanVariance(x[:na])
	mb, _ := MeanVariance(x[n-nb:])
	diff = ma - mb
	return diff / math.Sqrt(lrv/float64(na)+lrv/float64(nb)), diff
}

// MeanVariance returns the mean and the unbiased variance (n−1), by two
// passes for accuracy.
func MeanVariance(x []float64) (mean, variance float64) {
	n := float64(len(x))
	for _, v := range x {
		mean += v
	}
	mean /= n
	if len(x) < 2 {
		return mean, 0
	}
	var ss, s float64
	for _, v := range x {
		d := v - mean
		ss += d * d
		s += d
	}
	return mean, (ss - s*s/n) / (n - 1)
}

// TQuantile returns the two-sided Student t quantile for confidence conf.
func TQuantile(conf, dof float64) float64 {
	if !(dof > 0) {
		return math.NaN()
	}
	p := 0.5 + conf/2
	if math.IsInf(dof, 1) || dof > 1e7 {
		return distuv.UnitNormal.Quantile(p)
	}
	return distuv.StudentsT{Mu: 0, Sigma: 1, Nu: dof}.Quantile(p)
}
