// File: The average of a periodic history over whole cycles: MSER on the series
// of cycle means, amplitudes and lengths (White 1997) for the transient,
// batch means of whole cycles for the interval.

package harvest

import (
	"fmt"
	"math"

	"github.com/sweep-cfd/sweep/internal/estimate"
)

// analyzeCycles averages a periodic history over whole cycles (see
// cycles.go for how cycles are found).
//
//   - Transient. A developing cycle grows in amplitude and its mean moves
//     while it builds up (the onset of vortex shedding), which a cut on
//     the raw samples does not see: MSER-5 stops where five-sample means
//     settle, inside the build-up. Here the truncation rule is applied to
//     the series of cycle means, of cycle amplitudes and of cycle lengths
//     (MSER with batches of one cycle, White 1997), the latest of the
//     three cuts is kept and extended by half; then the early/late check (first tenth of the
//     cycles against the last half, Geweke 1992) moves it on while the
//     mean still differs, by more than its noise and by more than a tenth
//     of the tolerance (a smaller change is no transient for the user). A cut beyond half the cycles: the average
//     drifts.
//
//   - Mean: the time average over the whole cycles after the cut, the
//     cycles grouped into b consecutive batches of g cycles (g at least
//     twice the integrated autocorrelation time of the cycle means, by
//     Geyer's estimator, and b ≤ 30); the standard error is that of the
//     ratio of batch integrals to batch lengths,
//
//     SE² = Σ_j (L_j/L̄)² (M_j − M)² / (b(b−1)),
//
//     with b − 1 degrees of freedom (M_j the mean of batch j, L_j its
//     length, M the overall mean). At least 8 cycles and 5 batches are
//     needed.
//
//   - Cycle statistics: each cycle's maximum, minimum, amplitude and rms,
//     and its length, averaged per batch; each statistic's error is that
//     of its batch means, the frequency's by the delta method,
//     se(1/L) = se(L)/L².
func analyzeCycles(ys []float64, cs []estimate.Cycle, start int, o Options) analysis {
	a := analysis{method: "cycles", tau: math.NaN(), period: math.NaN(), rms: nanStat}
	if start >= 0 {
		a.cutMethod = "fixed"
		k := 0
		for k < len(cs) && cs[k].Start < float64(start) {
			k++
		}
		cs = cs[k:]
	} else {
		a.cutMethod = "cycles"
		// The cut never passes the middle of the run (in time).
		half := 0
		for half < len(cs) && cs[half].Start <= float64(len(ys))/2 {
			half++
		}
		// A cut that only removes cycles no different from the rest
		// (deterministic histories, whose cycles differ by rounding) is
		// no cut.
		neg := negligible(o, cs)
		means := estimate.CycleSeries(cs, func(c estimate.Cycle) float64 { return c.Mean })
		amps := estimate.CycleSeries(cs, func(c estimate.Cycle) float64 { return c.Max - c.Min })
		lens := estimate.CycleSeries(cs, estimate.Cycle.Length)
		meanLen, _ := estimate.MeanVariance(lens)
		dM := cutIfReal(means, neg)
		dA := cutIfReal(amps, neg)
		dL := cutIfReal(lens, 1e-3*meanLen)
		// MSER stops where the transient has fallen to the scatter of
		// single cycles, which still leaves a bias of about that scatter
		// times the transient's decay over the window; half as many cycles
		// again take most of it (measured on the shedding family of
		// TestCoverage: the mean error fell from 0.22 to 0.15 standard
		// errors).
		d := max(dM, dA, dL)
		d += d / 2
		if d >= half {
			d = max(half-1, 0)
			a.notes = append(a.notes, "the cycles' cut fell at the half-run limit")
		}
		for len(cs)-d >= estimate.MinCycles {
			z, diff := cycleEarlyLateZ(cs[d:])
			if math.Abs(z) <= estimate.GewekeZ || math.Abs(diff) <= negligible(o, cs[d:]) {
				break
			}
			step := max(1, int(float64(len(cs)-d)*estimate.GewekeA))
			if d+step >= half {
				if 2*math.Abs(diff) > 10*negligible(o, cs[d:]) {
					a.drifting = fmt.Sprintf("the mean of the first cycles differs from that of the last half by %.3g (z = %.1f, more than half the tolerance) even when the first half of the run is discarded", diff, z)
				}
				a.notes = append(a.notes, fmt.Sprintf("the transient was cut at the half-run limit; the first cycles still differ from the last half by %.3g (z = %.1f)", diff, z))
				break
			}
			d += step
		}
		cs = cs[d:]
	}
	if len(cs) > 0 {
		a.cut = cs[0].Start
	} else {
		a.cut = float64(len(ys) - 1)
	}
	K := len(cs)
	meanLen := 0.0
	if K > 0 {
		meanLen, _ = estimate.MeanVariance(estimate.CycleSeries(cs, estimate.Cycle.Length))
		a.mean = cycleMean(cs)
	}
	if K < estimate.MinCycles {
		a.short = fmt.Sprintf("%d whole cycles, need %d", K, estimate.MinCycles)
		a.needMore = float64(estimate.MinCycles-K) * math.Max(meanLen, 1)
		return a
	}
	tauC := 1.0
	if m := estimate.CycleSeries(cs, func(c estimate.Cycle) float64 { return c.Mean }); K >= 16 {
		// Cycle means that differ by less than a hundredth of the
		// tolerance (a deterministic history) leave nothing to correlate;
		// otherwise their correlation sizes the batches, but no more than
		// five batches' worth.
		if _, v := estimate.MeanVariance(m); math.Sqrt(v) > negligible(o, cs)/10 {
			tauC, _ = estimate.GeyerTime(m)
			tauC = math.Min(tauC, 1+float64(K)/float64(estimate.CycleTau*minBatches))
		}
	}
	g, b := estimate.CycleBatchPlan(K, tauC, maxBatches)
	if b < minBatches {
		a.short = fmt.Sprintf("%d whole cycles in %d batches of %d (the cycle means are correlated over %.1f cycles), need %d batches", K, b, g, tauC, minBatches)
		a.needMore = float64(minBatches*g-K) * meanLen
		return a
	}
	used := cs
	means, lens := estimate.WeightedBatches(used, g, b, func(c estimate.Cycle) float64 { return c.Mean })
	var total, integral float64
	for j := range means {
		total += lens[j]
		integral += means[j] * lens[j]
	}
	mean := integral / total
	lbar := total / float64(b)
	var ss float64
	for j := range means {
		w := lens[j] / lbar
		ss += w * w * (means[j] - mean) * (means[j] - mean)
	}
	bx := make([]float64, b)
	for j := range bx {
		batch := estimate.BatchOf(used, g, b, j)
		bx[j] = (batch[0].Start + batch[len(batch)-1].End) / 2
	}
	a.trend, a.trendSD = batchTrend(bx, means, used[len(used)-1].End-used[0].Start)
	a.cut = used[0].Start
	a.mean = mean
	a.se = math.Sqrt(ss / float64(b*(b-1)))
	a.dof = float64(b - 1)
	a.batches, a.batchSize = b, g
	a.n = int(math.Round(total))
	a.period, a.periods = total/float64(len(used)), len(used)
	dof := float64(b - 1)
	stat := func(f func(estimate.Cycle) float64) Statistic {
		var v []float64
		for j := range b {
			var s float64
			batch := estimate.BatchOf(used, g, b, j)
			for _, c := range batch {
				s += f(c)
			}
			v = append(v, s/float64(len(batch)))
		}
		m, se := estimate.MeanSE(v)
		return Statistic{Value: m, StdError: se, Dof: dof}
	}
	cst := &CycleStats{Cycles: len(used),
		Max:       stat(func(c estimate.Cycle) float64 { return c.Max }),
		Min:       stat(func(c estimate.Cycle) float64 { return c.Min }),
		Amplitude: stat(func(c estimate.Cycle) float64 { return c.Max - c.Min }),
		RMS:       stat(func(c estimate.Cycle) float64 { return math.Sqrt(c.MS) }),
	}
	l := stat(estimate.Cycle.Length)
	cst.Frequency = Statistic{Value: 1 / l.Value, StdError: l.StdError / (l.Value * l.Value), Dof: dof}
	a.cycle = cst
	a.rms = cst.RMS
	return a
}

// cycleMean returns the time average over whole cycles.
func cycleMean(cs []estimate.Cycle) float64 {
	var s, l float64
	for _, c := range cs {
		s += c.Mean * c.Length()
		l += c.Length()
	}
	return s / l
}

// cycleEarlyLateZ compares the mean of the first tenth of the cycles (at
// least one) with that of their last half: it returns the difference and
// its size in standard errors from the scatter of the cycle means and
// their correlation over cycles.
func cycleEarlyLateZ(cs []estimate.Cycle) (z, diff float64) {
	K := len(cs)
	na, nb := max(1, int(float64(K)*estimate.GewekeA)), K/2
	m := estimate.CycleSeries(cs, func(c estimate.Cycle) float64 { return c.Mean })
	_, v := estimate.MeanVariance(m)
	if v == 0 || nb < 1 {
		return 0, 0
	}
	tau := 1.0
	if K >= 16 {
		tau, _ = estimate.GeyerTime(m)
	}
	diff = cycleMean(cs[:na]) - cycleMean(cs[K-nb:])
	return diff / math.Sqrt(v*tau*(1/float64(na)+1/float64(nb))), diff
}

// negligible is the change of the mean too small to count as a
// transient: a tenth of the tolerance on the cycles' scale (the larger of
// |mean| and their rms).
func negligible(o Options, cs []estimate.Cycle) float64 {
	m := cycleMean(cs)
	rms, _ := estimate.MeanVariance(estimate.CycleSeries(cs, func(c estimate.Cycle) float64 { return math.Sqrt(c.MS) }))
	return o.tolerance(math.Max(math.Abs(m), rms)) / 10
}

// cutIfReal returns the MSER cut (batches of one) of the series x, or 0
// when the values it would remove differ from the mean of the rest by no
// more than neg.
func cutIfReal(x []float64, neg float64) int {
	d, _ := estimate.MSER(x, 1)
	if d == 0 {
		return 0
	}
	rest, _ := estimate.MeanVariance(x[d:])
	for _, v := range x[:d] {
		if math.Abs(v-rest) > neg {
			return d
		}
	}
	return 0
}
