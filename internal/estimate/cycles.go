// File: The cycles of a periodic history: the dominant period from the peak of
// a zero-padded periodogram (Schuster 1898), cycles between upward
// crossings of the mean level with hysteresis, each cycle's extremes
// refined by a parabola through three samples, and batches of whole
// cycles.

package estimate

import (
	"math"
	"math/cmplx"
	"slices"
)

// Cycles of a periodic or quasi-periodic history (vortex shedding, a
// pitching body): found from the crossings of the signal's mean level,
// then averaged over whole cycles.
//
// Detection. The dominant frequency of the second half of the series (the
// part most likely developed) is the highest peak of its periodogram above
// three cycles per half. The series is smoothed with a moving average of a
// sixth of that period, and a cycle begins at each upward crossing of the
// second half's mean level, with hysteresis: after a crossing, the
// smoothed signal must fall below the level minus half its standard
// deviation before the next crossing counts. A history is periodic when
// the second half holds at least minHalfCycles cycles whose lengths vary
// by at most maxCycleCV (coefficient of variation): broadband noise, even
// strongly correlated, crosses its mean at irregular intervals.
//
// Statistics of a cycle come from the raw samples: its mean is the time
// average between its two crossing times (trapezoidal rule, the ends
// interpolated), its maximum and minimum are the largest and smallest
// samples refined by a parabola through their neighbours (sampling a peak
// at 20 points per period alone misses it by up to 1.2 % of the
// amplitude), and its rms is that of the samples about the cycle's mean.

const (
	minHalfCycles = 8   // cycles in the second half for a history to count as periodic
	maxCycleCV    = 0.2 // largest spread of cycle lengths (std/mean) for a periodic history
	MinCycles     = 8   // cycles after the transient for an interval from cycles
	hysteresis    = 0.5 // in standard deviations of the smoothed signal
	minSpectralFr = 3.0 // cycles per half below which a spectral peak is not a period
	minPeakRatio  = 20  // least power of a spectral peak over its band's mean
	CycleTau      = 5   // least batch size, in integrated autocorrelation times of the cycle means
)

// Cycle is one period of the signal: Start and End are the fractional
// sample indices of its bounding upward crossings, Mean its time average,
// Max and Min its extremes and MS its mean square about its mean.
type Cycle struct {
	Start, End         float64
	Mean, Max, Min, MS float64
}

// Length returns the cycle's length in samples.
func (c Cycle) Length() float64 { return c.End - c.Start }

// DominantPeriod returns the period, in samples, of the highest peak of
// the periodogram of x (mean removed, zero-padded to four times its
// length), among frequencies of at least minSpectralFr cycles over x; 0 if
// x is too short or flat, or if the peak does not stand out: its power
// must be at least minPeakRatio times the mean power of the band from half
// to twice its frequency, outside the peak itself. (For noise the largest
// of N periodogram ordinates is about ln N times the mean.)
func DominantPeriod(x []float64) float64 {
	n := len(x)
	if n < 16 {
		return 0
	}
	mean, _ := MeanVariance(x)
	size := 1
	for size < 4*n {
		size <<= 1
	}
	seq := make([]float64, size)
	for i, v := range x {
		seq[i] = v - mean
	}
	fft := getFFT(size)
	defer putFFT(size, fft)
	coef := fft.Coefficients(nil, seq)
	kmin := int(math.Ceil(minSpectralFr * float64(size) / float64(n)))
	best, bestP := -1, 0.0
	for k := max(kmin, 1); k < len(coef)-1; k++ {
		p := real(coef[k])*real(coef[k]) + imag(coef[k])*imag(coef[k])
		if p > bestP {
			best, bestP = k, p
		}
	}
	if best < 1 || bestP == 0 {
		return 0
	}
	// The peak must stand out from the band around it.
	pad := size / n
	var band float64
	cnt := 0
	for k := best / 2; k <= min(2*best, len(coef)-1); k++ {
		if k >= best-4*pad && k <= best+4*pad {
			continue
		}
		band += real(coef[k])*real(coef[k]) + imag(coef[k])*imag(coef[k])
		cnt++
	}
	if cnt == 0 || bestP < minPeakRatio*band/float64(cnt) {
		return 0
	}
	// Parabolic refinement of the peak in log power.
	a, b, c := cmplx.Abs(coef[best-1]), cmplx.Abs(coef[best]), cmplx.Abs(coef[best+1])
	d := 0.0
	if a > 0 && b > 0 && c > 0 {
		la, lb, lc := math.Log(a), math.Log(b), math.Log(c)
		if den := la - 2*lb + lc; den < 0 {
			d = math.Max(-0.5, math.Min(0.5, 0.5*(la-lc)/den))
		}
	}
	return float64(size) / (float64(best) + d)
}

// DevelopedPeriod returns the dominant period, in samples, of the last
// MaxACFLength samples of y[from:] (see DominantPeriod), or 0.
func DevelopedPeriod(y []float64, from int) float64 {
	half := y[from:]
	if len(half) > MaxACFLength {
		half = half[len(half)-MaxACFLength:]
	}
	return DominantPeriod(half)
}

// movingAverage returns the centred moving average of x over w samples
// (w odd; the ends average what is there).
func movingAverage(x []float64, w int) []float64 {
	if w <= 1 {
		return x
	}
	h := w / 2
	out := make([]float64, len(x))
	var s float64
	lo, hi := 0, -1
	for i := range x {
		for hi < min(len(x)-1, i+h) {
			hi++
			s += x[hi]
		}
		for lo < i-h {
			s -= x[lo]
			lo++
		}
		out[i] = s / float64(hi-lo+1)
	}
	return out
}

// FindCycles returns the cycles of y over its whole length (see the
// comment at the top of the file) and whether y is periodic; the level is
// taken from y[from:], its developed part.
//
// p is the dominant period of the developed part (DevelopedPeriod).
func FindCycles(y []float64, from int, p float64) ([]Cycle, bool) {
	n := len(y)
	if p < 6 {
		return nil, false // no period, or under 6 samples: too coarse to follow
	}
	s := movingAverage(y, max(1, int(p/6))|1)
	level, v := MeanVariance(s[from:])
	h := hysteresis * math.Sqrt(v)
	if !(h > 0) {
		return nil, false
	}
	var ups []float64
	armed := false
	for i := 1; i < n; i++ {
		if s[i] < level-h {
			armed = true
		}
		if armed && s[i-1] < level && s[i] >= level {
			u := float64(i-1) + (level-s[i-1])/(s[i]-s[i-1])
			// A crossing within half a period of the last is noise on
			// the level (chatter the hysteresis did not absorb).
			if len(ups) == 0 || u-ups[len(ups)-1] >= 0.5*p {
				ups = append(ups, u)
			}
			armed = false
		}
	}
	if len(ups) < 2 {
		return nil, false
	}
	cs := make([]Cycle, 0, len(ups)-1)
	for k := 1; k < len(ups); k++ {
		cs = append(cs, cycleStats(y, ups[k-1], ups[k]))
	}
	// Periodic when the developed part has enough regular cycles.
	var lens []float64
	for _, c := range cs {
		if c.Start >= float64(from) {
			lens = append(lens, c.Length())
		}
	}
	if len(lens) < minHalfCycles {
		return cs, false
	}
	m, vl := MeanVariance(lens)
	if math.Sqrt(vl)/m > maxCycleCV {
		return cs, false
	}
	// Cycles that alternate (the drag of an off-centre body sheds twice
	// per lift cycle, the two halves a little unlike): the true cycle is
	// the pair.
	dev := cs[len(cs)-len(lens):]
	if alternates(CycleSeries(dev, Cycle.Length)) || alternates(CycleSeries(dev, func(c Cycle) float64 { return c.Mean })) {
		cs = pairCycles(cs)
	}
	return cs, true
}

// alternates reports whether the even and the odd members of x differ by
// more than four standard errors of their difference: a pattern that
// repeats every two cycles. (Jitter of the crossings alone makes
// neighbouring lengths anticorrelated, but not different on average.)
func alternates(x []float64) bool {
	var even, odd []float64
	for i, v := range x {
		if i%2 == 0 {
			even = append(even, v)
		} else {
			odd = append(odd, v)
		}
	}
	if len(even) < 3 || len(odd) < 3 {
		return false
	}
	me, ve := MeanVariance(even)
	mo, vo := MeanVariance(odd)
	d := math.Abs(me - mo)
	se := math.Sqrt(ve/float64(len(even)) + vo/float64(len(odd)))
	return d > 4*se && d > 1e-12*math.Max(math.Abs(me), math.Abs(mo))
}

// pairCycles merges consecutive cycles two by two, from the last one
// back (an unpaired first cycle is dropped).
func pairCycles(cs []Cycle) []Cycle {
	out := make([]Cycle, 0, len(cs)/2)
	for k := len(cs) % 2; k+1 < len(cs); k += 2 {
		a, b := cs[k], cs[k+1]
		la, lb := a.Length(), b.Length()
		ma := (a.Mean*la + b.Mean*lb) / (la + lb)
		// Mean squares about the pair's mean, from each half's own.
		ms := (la*(a.MS+(a.Mean-ma)*(a.Mean-ma)) + lb*(b.MS+(b.Mean-ma)*(b.Mean-ma))) / (la + lb)
		out = append(out, Cycle{Start: a.Start, End: b.End, Mean: ma, Max: math.Max(a.Max, b.Max), Min: math.Min(a.Min, b.Min), MS: ms})
	}
	return out
}

// at returns y at a fractional index, linearly interpolated.
func at(y []float64, f float64) float64 {
	i := int(f)
	if i >= len(y)-1 {
		return y[len(y)-1]
	}
	w := f - float64(i)
	return y[i] + w*(y[i+1]-y[i])
}

// cycleStats measures y over [a, b] (fractional indices).
func cycleStats(y []float64, a, b float64) Cycle {
	c := Cycle{Start: a, End: b}
	i0, i1 := int(math.Ceil(a)), int(math.Floor(b))
	// Trapezoidal integral from a to b through the interior samples.
	ya, yb := at(y, a), at(y, b)
	var integral float64
	prevT, prevY := a, ya
	for i := i0; i <= i1; i++ {
		integral += 0.5 * (y[i] + prevY) * (float64(i) - prevT)
		prevT, prevY = float64(i), y[i]
	}
	integral += 0.5 * (yb + prevY) * (b - prevT)
	c.Mean = integral / (b - a)
	c.Max, c.Min = math.Max(ya, yb), math.Min(ya, yb)
	imax, imin := -1, -1
	var ss float64
	cnt := 0
	for i := i0; i <= i1; i++ {
		if y[i] > c.Max {
			c.Max, imax = y[i], i
		}
		if y[i] < c.Min {
			c.Min, imin = y[i], i
		}
		d := y[i] - c.Mean
		ss += d * d
		cnt++
	}
	if imax > 0 && imax < len(y)-1 {
		c.Max = parabolaExtremum(y[imax-1], y[imax], y[imax+1])
	}
	if imin > 0 && imin < len(y)-1 {
		c.Min = parabolaExtremum(y[imin-1], y[imin], y[imin+1])
	}
	if cnt > 0 {
		c.MS = ss / float64(cnt)
	}
	return c
}

// parabolaExtremum returns the extreme value of the parabola through
// three equally spaced points whose middle one is the extreme sample.
func parabolaExtremum(a, b, c float64) float64 {
	den := a - 2*b + c
	if den == 0 {
		return b
	}
	d := 0.5 * (a - c) / den
	if math.Abs(d) > 1 {
		return b
	}
	return b - 0.25*(a-c)*d
}

// CycleSeries returns one statistic of every cycle.
func CycleSeries(cs []Cycle, f func(Cycle) float64) []float64 {
	out := make([]float64, len(cs))
	for i, c := range cs {
		out[i] = f(c)
	}
	return out
}

// BatchOf returns batch j of b batches of g cycles; the last batch also
// takes the cycles left over, so every cycle after the cut is used.
func BatchOf(cs []Cycle, g, b, j int) []Cycle {
	if j == b-1 {
		return cs[j*g:]
	}
	return cs[j*g : (j+1)*g]
}

// WeightedBatches returns, for b batches of g cycles (see BatchOf), each
// batch's length-weighted average of f and its length.
func WeightedBatches(cs []Cycle, g, b int, f func(Cycle) float64) (means, lens []float64) {
	for j := range b {
		var s, l float64
		for _, c := range BatchOf(cs, g, b, j) {
			s += f(c) * c.Length()
			l += c.Length()
		}
		means = append(means, s/l)
		lens = append(lens, l)
	}
	return means, lens
}

// CycleBatchPlan picks the batch size (in cycles) and count for K cycles
// whose means have an integrated autocorrelation time tauC (in cycles):
// one cycle per batch for independent cycles, CycleTau more for each unit
// of tauC above 1, and at most maxBatches batches.
func CycleBatchPlan(K int, tauC float64, maxBatches int) (g, b int) {
	g = 1 + max(0, int(math.Ceil(CycleTau*(tauC-1))))
	if K/g > maxBatches {
		g = (K + maxBatches - 1) / maxBatches
	}
	return g, K / g
}

// MeanSE returns the mean of batch values and its standard error,
// SE² = S²/b.
func MeanSE(v []float64) (mean, se float64) {
	m, s2 := MeanVariance(v)
	return m, math.Sqrt(s2 / float64(len(v)))
}

// median returns the median of v (v is not changed).
func median(v []float64) float64 {
	s := slices.Clone(v)
	slices.Sort(s)
	n := len(s)
	if n == 0 {
		return math.NaN()
	}
	if n%2 == 1 {
		return s[n/2]
	}
	return (s[n/2-1] + s[n/2]) / 2
}
