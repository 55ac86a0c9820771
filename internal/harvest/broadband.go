// File: The average of a history without a regular cycle: MSER-5 and the
// early/late check for the transient, Geyer's τ_int, batch means of at
// least ten τ_int (Schmeiser 1982).

package harvest

import (
	"fmt"
	"math"

	"github.com/sweep-cfd/sweep/internal/estimate"
)

// analyzeBroadband averages a history without a regular cycle (turbulent
// or noisy forces, the slow approach of a steady solution): the transient
// is cut by MSER-5 and an early/late check, τ_int comes from Geyer's
// initial monotone sequence, and the standard error from batch means.
//
//   - Transient. MSER-5 (see MSER5) gives a first cut. MSER-5 stops where
//     the transient has fallen to the noise of five-sample means, which
//     can leave a bias of the order of the standard error when the
//     transient is long compared with √(n·τ). So the mean of the first
//     tenth of the remaining window is then compared with the mean of its
//     second half, z = (x̄_A − x̄_B)/√(σ²τ/n_A + σ²τ/n_B) (Geweke 1992);
//     while |z| > 1.96, and the difference exceeds a tenth of the
//     tolerance, the cut moves on by a tenth of the window (Heidelberger
//     and Welch 1983). A cut that would pass half the run
//     means the average still drifts.
//   - Correlation. τ_int by Geyer's estimator (see GeyerTime); beyond
//     65,536 samples on block means, σ²τ = B·σ²_B·τ_B.
//   - Standard error. Batch means: b batches of m samples with m ≥ 5 τ and
//     5 ≤ b ≤ 30 (Schmeiser 1982), SE² = m S²_B/N with b − 1 degrees of
//     freedom; and the autocorrelation estimate SE² = σ²τ/N (normal). The
//     wider of the two intervals is reported. A window that holds fewer
//     than five batches of 5 τ (25 τ_int) is too short to judge.
//
// References: B. Schmeiser, "Batch size effects in the analysis of
// simulation output", Operations Research 30(3) (1982) 556–568;
// J. Geweke, "Evaluating the accuracy of sampling-based approaches to the
// calculation of posterior moments", in Bayesian Statistics 4 (1992)
// 169–193; P. Heidelberger and P. D. Welch, "Simulation run length control
// in the presence of an initial transient", Operations Research 31(6)
// (1983) 1109–1144; see estimate.MSER5 and estimate.GeyerTime for the others.
//
// p is the period, in samples, of a clear spectral peak of the developed
// part (0 if none).
func analyzeBroadband(ys []float64, start int, o Options, p float64) analysis {
	a := analysis{method: "batch_means", tau: math.NaN(), period: math.NaN(), rms: nanStat}
	n := len(ys)
	cut := start
	if start < 0 {
		d, lim := estimate.MSER(ys, 5)
		cut, a.cutMethod = 5*d, "mser5"
		if lim {
			a.notes = append(a.notes, "the MSER-5 cut fell at the half-run limit")
		}
	}
	a.cut = float64(cut)
	if n-cut < o.MinSamples {
		a.short = fmt.Sprintf("%d samples, need %d", n-cut, o.MinSamples)
		a.needMore = float64(o.MinSamples - (n - cut))
		a.mean, _ = estimate.MeanVariance(ys[cut:])
		return a
	}
	lrv, tau := estimate.LongRunTone(ys[cut:], p)
	if start < 0 {
		for {
			z, diff := estimate.EarlyLateZ(ys[cut:], lrv)
			if math.Abs(z) <= estimate.GewekeZ || math.Abs(diff) <= negligibleChange(o, ys[cut:]) {
				break
			}
			next := cut + int(float64(n-cut)*estimate.GewekeA)
			if next > n/2 {
				a.drifting = driftNote(o, ys[cut:], diff, z, "the first tenth of the averaging window differs from its second half")
				a.notes = append(a.notes, fmt.Sprintf("the transient was cut at the half-run limit; the first tenth of the window still differs from its second half by %.3g (z = %.1f)", diff, z))
				break
			}
			cut = next
			lrv, tau = estimate.LongRunTone(ys[cut:], p)
		}
	}
	a.cut = float64(cut)
	x := ys[cut:]
	N := len(x)
	a.n, a.tau = N, tau
	mean, v := estimate.MeanVariance(x)
	a.mean = mean
	m := max(1, int(math.Ceil(batchTau*tau)))
	b := N / m
	if b < minBatches {
		a.short = fmt.Sprintf("%d samples span %.1f correlation times (τ_int = %.3g samples), need %d", N, float64(N)/tau, tau, minBatches*batchTau)
		a.needMore = float64(minBatches*m - N)
		return a
	}
	if b > maxBatches {
		m = (N + maxBatches - 1) / maxBatches
		b = N / m
	}
	a.batches, a.batchSize = b, m
	seBM := estimate.BatchStdError(x[N-m*b:], m, b, N)
	bx := make([]float64, b)
	for j := range bx {
		bx[j] = (float64(j) + 0.5) * float64(m)
	}
	a.trend, a.trendSD = batchTrend(bx, estimate.BlockMeans(x[N-m*b:], m)[:b], float64(N))
	seAC := math.Sqrt(lrv / float64(N))
	a.se, a.dof = seBM, float64(b-1)
	if z := estimate.TQuantile(o.Confidence, math.Inf(1)); z*seAC > estimate.TQuantile(o.Confidence, a.dof)*seBM {
		a.se, a.dof = seAC, math.Inf(1)
	}
	// The rms of the fluctuation, with the batch-means error of the mean
	// square: se(rms) = se(ms)/(2 rms).
	sq := make([]float64, m*b)
	for i, y := range x[N-m*b:] {
		sq[i] = (y - mean) * (y - mean)
	}
	rms := math.Sqrt(v)
	seMS := estimate.BatchStdError(sq, m, b, len(sq))
	a.rms = Statistic{Value: rms, StdError: seMS / (2 * rms), Dof: float64(b - 1)}
	if rms == 0 {
		a.rms.StdError = 0
	}
	return a
}

// driftNote says why the average drifts when the early part of the
// window still differs from its second half by diff at the half-run
// limit, and the difference matters: more than half the tolerance.
// Otherwise it returns "" (the average stands, with a note).
func driftNote(o Options, x []float64, diff, z float64, what string) string {
	m, v := estimate.MeanVariance(x)
	if math.Abs(diff) <= o.tolerance(math.Max(math.Abs(m), math.Sqrt(v)))/2 {
		return ""
	}
	return fmt.Sprintf("%s by %.3g (z = %.1f, more than half the tolerance) even when the first half of the run is discarded", what, diff, z)
}

// negligibleChange is the change of the mean too small to count as a
// transient: a tenth of the tolerance on the window's scale (the larger of
// |mean| and its rms).
func negligibleChange(o Options, x []float64) float64 {
	m, v := estimate.MeanVariance(x)
	return o.tolerance(math.Max(math.Abs(m), math.Sqrt(v))) / 10
}
