// File: Analyze: the steady check, the choice between periodic and broadband
// averaging, the Result and its rounding floor (a uniform rounding error
// of the printed digits, q/√12, common practice).

package harvest

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/sweep-cfd/sweep/internal/compare"
	"github.com/sweep-cfd/sweep/internal/estimate"
	"github.com/sweep-cfd/sweep/internal/history"
	"gonum.org/v1/gonum/stat/distuv"
)

// Verdict says what a harvested average may be used for. Each word means
// one thing, and the same history gets the same verdict wherever it is
// judged (the settle stop of a running solver, harvest, rank, fit, the
// report).
type Verdict string

const (
	// Converged: the confidence half-width is within the tolerance.
	Converged Verdict = "converged"
	// Steady: the signal has settled to a constant within the tolerance;
	// Mean is the last value and the interval is a bound (range and drift
	// over the last quarter), not a statistical interval.
	Steady Verdict = "steady"
	// NotConverged: the interval is honest but wider than the
	// tolerance; ExtraTime says how much longer to average.
	NotConverged Verdict = "not_converged"
	// TooShort: too little of the history lies after the transient to
	// give an honest interval; ExtraTime says how much more is needed.
	TooShort Verdict = "too_short"
	// Drifting: the average is still moving: the transient did not end
	// within the first half of the run.
	Drifting Verdict = "drifting"
	// Running: the run that writes the history has not ended; the numbers
	// are preliminary (set by the study's harvest, not by Analyze).
	Running Verdict = "running"
	// NoData: the run ended but left no history to average (no file
	// matched, or no data row).
	NoData Verdict = "no_data"
	// Failed: the solver run failed (its stage failed, or the history
	// holds NaN or Inf: a diverged run).
	Failed Verdict = "failed"
)

// Usable reports whether the verdict's mean may be ranked and fitted.
func (v Verdict) Usable() bool { return v == Converged || v == Steady }

// Options controls Analyze. The zero value is usable: a 1 % relative
// tolerance at 95 % confidence with automatic transient detection.
type Options struct {
	// Abs is an absolute tolerance on the confidence half-width, in the
	// quantity's unit.
	Abs float64
	// Rel is a tolerance on the half-width relative to the quantity's
	// scale: the larger of |mean| and the rms of its fluctuation, so that
	// a quantity that averages near zero (a lift or side force) gets a
	// tolerance that can be met. If both Abs and Rel are zero, Rel = 0.01.
	// If both are set, the looser of the two applies.
	Rel float64
	// Confidence is the two-sided confidence level; zero means 0.95.
	Confidence float64
	// Start, when not nil, fixes the end of the transient (a time) and
	// turns its detection off.
	Start *float64
	// End, when not nil, averages only the history up to that time: the
	// time at which a run was judged settled and stopped, so that a later
	// harvest judges exactly what the settle stop judged.
	End *float64
	// MinSamples is the least number of samples to average after the
	// transient; values below 100 are raised to 100.
	MinSamples int
}

const (
	defaultRel        = 0.01
	defaultConfidence = 0.95
	minAveraged       = 100  // samples after the transient
	minBatches        = 5    // batches for an interval (Student t on 4 dof)
	maxBatches        = 20   // Schmeiser (1982): 10 to 30 batches
	batchTau          = 10   // least batch size, in τ_int
	uniformTol        = 0.01 // relative spread of time steps seen as uniform
	maxExtraFactor    = 100  // "run longer" estimates beyond this many windows are capped
)

func (o Options) withDefaults() Options {
	if o.Abs < 0 || o.Rel < 0 || math.IsNaN(o.Abs) || math.IsNaN(o.Rel) {
		panic("harvest: negative or NaN tolerance")
	}
	if o.Abs == 0 && o.Rel == 0 {
		o.Rel = defaultRel
	}
	if o.Confidence == 0 {
		o.Confidence = defaultConfidence
	}
	if !(o.Confidence > 0 && o.Confidence < 1) {
		panic("harvest: confidence must lie in (0, 1)")
	}
	o.MinSamples = max(o.MinSamples, minAveraged)
	return o
}

// tolerance returns the absolute tolerance for a quantity of the given
// scale (see Options.Rel).
func (o Options) tolerance(scale float64) float64 {
	return math.Max(o.Abs, o.Rel*math.Abs(scale))
}

// Statistic is a derived statistic of a history with its standard error
// and the degrees of freedom of its Student t interval.
type Statistic struct {
	Value    float64
	StdError float64
	Dof      float64
}

// CycleStats are the statistics of a periodic history's developed cycles:
// each cycle's maximum, minimum, amplitude (maximum − minimum) and rms
// (about the cycle's mean), averaged over the cycles, and the frequency
// (one over the mean cycle length, in 1/time units), each with the
// standard error of its batch means over cycles. Noise on the history
// biases the extremes by about its own level (the largest sample of a
// cycle picks the noise's peaks); the intervals hold the scatter from
// cycle to cycle, not that bias.
type CycleStats struct {
	Cycles    int
	Max       Statistic
	Min       Statistic
	Amplitude Statistic
	RMS       Statistic
	Frequency Statistic
}

// Result is everything known about one harvested average. A value that
// is not known is NaN (null in JSON), never 0. The JSON names are read by
// scripts and must not change.
type Result struct {
	Verdict Verdict
	Message string

	// Mean is the time average after the transient (the last value for a
	// steady signal); HalfWidth the half-width of its confidence interval
	// and StdError its standard error; Dof the degrees of freedom of the
	// Student t interval (+Inf for a steady signal's bound, read as a
	// normal error).
	Mean, HalfWidth, StdError, Dof float64
	Confidence                     float64
	// Tolerance is the absolute tolerance the half-width was held to;
	// Scale what a relative tolerance was relative to.
	Tolerance, Scale float64

	// Samples is the number of samples averaged.
	Samples int
	// TauInt is the integrated autocorrelation time of a broadband history
	// in samples (Geyer's initial monotone sequence estimate),
	// EffectiveSamples = Samples/TauInt, CorrelationTime = TauInt in time
	// units. NaN for a periodic history, whose error comes from its
	// cycles.
	TauInt, EffectiveSamples, CorrelationTime float64
	// Method names how StdError was found: "cycles" (batch means of whole
	// cycles), "batch_means" (broadband), or "bound" (steady).
	Method    string
	Batches   int
	BatchSize int // samples per batch (broadband) or cycles per batch

	// TransientEnd is the time where averaging starts; TransientMethod
	// says how it was found: "cycles" (MSER on the cycles' means,
	// amplitudes and lengths), "mser5" (MSER-5 on the samples), "fixed"
	// (Options.Start) or "steady".
	TransientEnd    float64
	TransientMethod string
	// EndTime is the last time averaged.
	EndTime float64
	// TimeStep is the sampling step; Resampled says that uneven steps
	// were interpolated onto it.
	TimeStep  float64
	Resampled bool

	// Period is the mean cycle length in time units (NaN if the history is
	// not periodic); Periods is how many whole cycles were averaged.
	Period  float64
	Periods int
	// Cycle holds the cycle statistics of a periodic history (nil
	// otherwise). RMS is the rms of the fluctuation about the mean, for
	// every history that was averaged.
	Cycle *CycleStats
	RMS   Statistic

	// Last is the last value of the series. Drift is the change of a
	// least-squares line over the last quarter of the series.
	Last, Drift float64
	// Resolution is the step of the printed digits of the history's last
	// values (4.02501 printed to six digits: 1e-5), NaN if unknown; a
	// value read back from text is uncertain by a uniform rounding error
	// of standard deviation Resolution/√12, a floor under every error.
	Resolution float64

	// ExtraTime is how much longer the run should go, in time units, for a
	// not_converged, too_short or drifting verdict (NaN otherwise); it is
	// capped at a hundred times the averaging window (ExtraCapped).
	ExtraTime   float64
	ExtraCapped bool

	// Files, Overlaps and Notes come from reading (see Harvest).
	Files    []string
	Overlaps []history.Overlap
	Notes    []string
}

// nanStat is a statistic that is not known.
var nanStat = Statistic{math.NaN(), math.NaN(), math.NaN()}

// unknown returns a Result with every number unknown.
func unknown(conf float64) Result {
	nan := math.NaN()
	u := nanStat
	return Result{Mean: nan, HalfWidth: nan, StdError: nan, Dof: nan, Confidence: conf, Tolerance: nan, Scale: nan,
		TauInt: nan, EffectiveSamples: nan, CorrelationTime: nan, TransientEnd: nan, EndTime: nan, TimeStep: nan,
		Period: nan, RMS: u, Last: nan, Drift: nan, ExtraTime: nan, Resolution: nan}
}

// Estimate returns the mean, standard error and degrees of freedom for
// comparisons and fits. A steady result's interval is a bound, not a
// statistical interval: it is read as a normal error (infinite dof) of
// half-width/1.96, so steady variants can still be told apart by more
// than their bounds. The standard error is never below the rounding of
// the printed digits, Resolution/√12 (a uniform error): a history printed
// to six digits that never changes is not known better than its last
// digit, and no run may weigh infinitely in a fit.
func (r Result) Estimate() compare.Estimate {
	e := compare.Estimate{Mean: r.Mean, StdError: r.StdError, Dof: r.Dof}
	if r.Method == "bound" {
		e = compare.Estimate{Mean: r.Mean, StdError: r.HalfWidth / distuv.UnitNormal.Quantile(0.975), Dof: math.Inf(1)}
	}
	if q := r.Resolution / math.Sqrt(12); q > e.StdError {
		e.StdError = q
	}
	return e
}

// resolution returns the finest step of the decimal digits with which the
// values are written in their shortest form (4.025 → 1e-3, 4.02501 →
// 1e-5), NaN for none. Values read from a text history are exactly their
// printed decimals, so the finest step is the printing's resolution
// (trailing zeros are lost in the shortest form, which can only make the
// step coarser: the floor errs on the safe side).
func resolution(ys []float64) float64 {
	q := math.NaN()
	for _, v := range ys {
		if v == 0 || math.IsNaN(v) || math.IsInf(v, 0) {
			continue
		}
		s := strconv.FormatFloat(v, 'e', -1, 64)
		i := strings.IndexByte(s, 'e')
		exp, _ := strconv.Atoi(s[i+1:])
		digits := 0
		if j := strings.IndexByte(s[:i], '.'); j >= 0 {
			digits = i - j - 1
		}
		if step := math.Pow(10, float64(exp-digits)); !(step >= q) {
			q = step
		}
	}
	return q
}

// Analyze turns a history (t_i, y_i), time non-decreasing, into an average
// with its confidence interval and a verdict.
//
//  1. Even steps. If the time steps spread by more than 1 % of the mean
//     step, y is linearly interpolated onto n points with the mean step, so
//     that every sample stands for the same time and the average is a time
//     average (Resampled is set).
//  2. Steady check on the last quarter of the series: if its range and its
//     drift (least-squares slope times its length) are both within the
//     tolerance, the verdict is Steady, Mean is the last value and
//     HalfWidth = max(range/2, |drift|) is a bound.
//  3. Periodic or broadband. A history that crosses its mean level at
//     regular intervals (vortex shedding) is averaged over whole cycles
//     (periodic.go): the transient is cut where the cycles' means,
//     amplitudes and lengths have settled (MSER on each), and the error
//     comes from the scatter of batches of whole cycles. Any other
//     history is broadband (broadband.go): MSER-5 and an early/late check
//     cut the transient, Geyer's initial monotone sequence gives τ_int,
//     and the error comes from batch means of at least 5 τ_int.
//  4. Verdict (verdict.go).
//
// Analyze panics if t and y differ in length or the options are invalid.
func Analyze(t, y []float64, opts Options) Result {
	if len(t) != len(y) {
		panic("harvest: time and value lengths differ")
	}
	o := opts.withDefaults()
	r := unknown(o.Confidence)
	fail := func(v Verdict, format string, args ...any) Result {
		r.Verdict = v
		r.Message = fmt.Sprintf(format, args...)
		r.Mean, r.HalfWidth, r.StdError = math.NaN(), math.NaN(), math.NaN()
		return r
	}
	if o.End != nil {
		k := 0
		for k < len(t) && t[k] <= *o.End {
			k++
		}
		t, y = t[:k], y[:k]
	}
	n := len(y)
	if n == 0 {
		return fail(NoData, "no data")
	}
	for i := range y {
		if math.IsNaN(y[i]) || math.IsInf(y[i], 0) || math.IsNaN(t[i]) || math.IsInf(t[i], 0) {
			return fail(Failed, "non-finite value at sample %d: the run diverged", i+1)
		}
		if i > 0 && t[i] < t[i-1] {
			return fail(Failed, "time decreases at sample %d (%g after %g)", i+1, t[i], t[i-1])
		}
	}
	r.Last, r.EndTime = y[n-1], t[n-1]
	r.Resolution = resolution(y[max(0, n-1000):])
	if n < 2 || t[n-1] <= t[0] {
		r.ExtraTime = math.NaN()
		return fail(TooShort, "%d sample(s) spanning no time", n)
	}

	// 1. Even time steps.
	ys, dt, resampled := uniformGrid(t, y)
	r.TimeStep, r.Resampled = dt, resampled
	timeAt := func(i float64) float64 { return t[0] + i*dt }

	// 2. Steady check on the last quarter.
	if w := n / 4; w >= 5 {
		lo, hi := ys[n-w], ys[n-w]
		for _, v := range ys[n-w:] {
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
		r.Drift = drift(ys[n-w:])
		tol := o.tolerance(r.Last)
		// A settled history needs no minimum length beyond the five samples of
		// its last quarter (a steady solver may write a line per hundred
		// iterations), only the one the caller asks for.
		if n >= opts.MinSamples && hi-lo <= tol && math.Abs(r.Drift) <= tol {
			r.Verdict = Steady
			r.Mean = r.Last
			r.HalfWidth = math.Max((hi-lo)/2, math.Abs(r.Drift))
			r.StdError = r.HalfWidth / distuv.UnitNormal.Quantile(0.5+o.Confidence/2)
			r.Dof = math.Inf(1)
			r.Tolerance, r.Scale = tol, math.Abs(r.Last)
			r.Samples = w
			r.Method = "bound"
			r.TransientEnd = timeAt(float64(n - w))
			r.TransientMethod = "steady"
			r.Message = fmt.Sprintf("settled: the last %d samples stay within %.3g and drift by %.3g", w, hi-lo, r.Drift)
			return r
		}
	}

	// 3. Transient, then the mean and its error.
	start := -1
	if o.Start != nil {
		r.TransientMethod = "fixed"
		start = 0
		for start < n && timeAt(float64(start)) < *o.Start {
			start++
		}
		if start >= n-1 {
			return fail(TooShort, "start time %g is at or after the last sample (t = %g)", *o.Start, t[n-1])
		}
	}
	var a analysis
	// Whether the history is periodic is judged on its developed part:
	// the second half of the run, or all of it after a given start.
	from := n / 2
	if start >= 0 {
		from = start
	}
	p := estimate.DevelopedPeriod(ys, from)
	if cs, periodic := estimate.FindCycles(ys, from, p); periodic {
		a = analyzeCycles(ys, cs, start, o)
	} else {
		a = analyzeBroadband(ys, start, o, p)
	}
	if r.TransientMethod == "" {
		r.TransientMethod = a.cutMethod
	}
	r.TransientEnd = timeAt(a.cut)
	r.Notes = append(r.Notes, a.notes...)
	judge(&r, a, o, dt)
	return r
}

// analysis is what an estimator found on an evenly sampled series.
type analysis struct {
	cut       float64 // first sample averaged (fractional for cycles)
	cutMethod string
	n         int // samples averaged
	mean      float64
	se, dof   float64
	method    string
	batches   int
	batchSize int
	tau       float64 // τ_int in samples (broadband), NaN for cycles
	rms       Statistic
	cycle     *CycleStats
	period    float64 // mean cycle length in samples, NaN if none
	periods   int
	// The change of a least-squares line through the batch means over
	// the averaging window, and its standard deviation (NaN when there
	// are too few batches to fit one).
	trend, trendSD float64
	// Why no honest interval could be made, and the samples still needed.
	short    string
	needMore float64
	drifting string
	notes    []string
}

// drift returns the change over y of its least-squares line,
// slope·(len(y)−1), in samples.
func drift(y []float64) float64 {
	n := len(y)
	if n < 2 {
		return 0
	}
	xm := float64(n-1) / 2
	var ym float64
	for _, v := range y {
		ym += v
	}
	ym /= float64(n)
	var sxy, sxx float64
	for i, v := range y {
		dx := float64(i) - xm
		sxy += dx * (v - ym)
		sxx += dx * dx
	}
	return sxy / sxx * float64(n-1)
}

// uniformGrid returns y on an even time grid. If the steps are already even
// within uniformTol of the mean step, y itself is returned; otherwise y is
// linearly interpolated onto n points from t_0 with the mean step
// (t_{n−1} − t_0)/(n−1). Repeated times keep the last value.
func uniformGrid(t, y []float64) (ys []float64, dt float64, resampled bool) {
	n := len(t)
	dt = (t[n-1] - t[0]) / float64(n-1)
	even := true
	for i := 1; i < n; i++ {
		if math.Abs((t[i]-t[i-1])-dt) > uniformTol*dt {
			even = false
			break
		}
	}
	if even {
		return y, dt, false
	}
	ys = make([]float64, n)
	j := 0
	for i := range ys {
		ti := t[0] + float64(i)*dt
		if i == n-1 {
			ti = t[n-1]
		}
		for j+1 < n-1 && t[j+1] <= ti {
			j++
		}
		t0, t1 := t[j], t[j+1]
		if t1 <= t0 || ti >= t1 {
			ys[i] = y[j+1]
			continue
		}
		f := (ti - t0) / (t1 - t0)
		ys[i] = y[j] + f*(y[j+1]-y[j])
	}
	return ys, dt, true
}

// batchTrend fits a least-squares line through batch means y at batch
// centres x and returns its change over the window w and that change's
// standard deviation, from the residual scatter (NaN for fewer than four
// batches).
func batchTrend(x, y []float64, w float64) (change, sd float64) {
	b := len(y)
	if b < 4 {
		return math.NaN(), math.NaN()
	}
	xm, _ := estimate.MeanVariance(x)
	ym, _ := estimate.MeanVariance(y)
	var sxx, sxy float64
	for j := range y {
		sxx += (x[j] - xm) * (x[j] - xm)
		sxy += (x[j] - xm) * (y[j] - ym)
	}
	beta := sxy / sxx
	var rss float64
	for j := range y {
		r := y[j] - ym - beta*(x[j]-xm)
		rss += r * r
	}
	return beta * w, w * math.Sqrt(rss/float64(b-2)/sxx)
}
