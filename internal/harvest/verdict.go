// File: The judge: from what an estimator found and the tolerance, the verdict,
// the interval (Student t) and the further run time a short run needs;
// a trend beyond the batch scatter at 99.9 % widens the interval.

package harvest

import (
	"fmt"
	"math"
	"strconv"

	"github.com/sweep-cfd/sweep/internal/estimate"
)

// judge fills a Result from an estimator's analysis and gives the
// verdict:
//
//   - too_short when no honest interval can be made yet, with the time
//     still needed to reach the minimum (25 τ_int or 8 cycles in 5
//     batches, and MinSamples);
//   - drifting when the average still moves (the transient did not end
//     within the first half of the run), with the advice to run at least
//     as long again;
//   - converged when the half-width is within the tolerance, else
//     not_converged with ExtraTime = N·((h/tol)² − 1)·Δt, the averaging
//     still needed since the half-width falls like 1/√N (the change of
//     the t quantile ignored), capped at a hundred times the window.
//
// The tolerance is Abs, or Rel times the quantity's scale, the larger of
// |mean| and the rms of its fluctuation (so a lift that averages zero is
// judged against its own oscillation, not against zero).
func judge(r *Result, a analysis, o Options, dt float64) {
	r.Method, r.Batches, r.BatchSize = a.method, a.batches, a.batchSize
	r.Samples = a.n
	r.Mean = a.mean
	r.RMS = a.rms
	r.Cycle = a.cycle
	if a.cycle != nil {
		f := a.cycle.Frequency
		a.cycle.Frequency = Statistic{Value: f.Value / dt, StdError: f.StdError / dt, Dof: f.Dof}
	}
	if !math.IsNaN(a.period) {
		r.Period, r.Periods = a.period*dt, a.periods
	}
	if !math.IsNaN(a.tau) {
		r.TauInt, r.CorrelationTime = a.tau, a.tau*dt
		if a.n > 0 {
			r.EffectiveSamples = float64(a.n) / a.tau
		}
	}
	window := (r.EndTime - r.TransientEnd)
	switch {
	case a.short != "":
		r.Verdict = TooShort
		r.HalfWidth, r.StdError = math.NaN(), math.NaN()
		r.ExtraTime = math.Max(a.needMore*dt, dt)
		r.Message = fmt.Sprintf("too short to judge: %s after the transient at t = %s; run about %s time units longer",
			a.short, num(r.TransientEnd), num(r.ExtraTime))
		return
	case a.drifting != "":
		r.Verdict = Drifting
		r.HalfWidth, r.StdError = math.NaN(), math.NaN()
		r.ExtraTime = math.Max(r.EndTime-r.TransientEnd, dt)
		r.Message = fmt.Sprintf("the average still drifts: %s; run at least %s time units longer, or give the quantity a start time",
			a.drifting, num(r.ExtraTime))
		return
	}
	r.StdError, r.Dof = a.se, a.dof
	r.HalfWidth = estimate.TQuantile(o.Confidence, a.dof) * a.se
	r.Scale = math.Max(math.Abs(r.Mean), a.rms.Value)
	if math.IsNaN(r.Scale) {
		r.Scale = math.Abs(r.Mean)
	}
	r.Tolerance = o.tolerance(r.Scale)
	// A trend through the batch means far beyond their scatter (beyond
	// the two-sided 99.9 % Student t quantile on batches − 2 degrees of
	// freedom: a deterministic history still settling, whose cycles barely
	// scatter) is not covered by a standard error. Half the change over the
	// window is then the least half-width; a change beyond twice the
	// tolerance means the average drifts.
	if !math.IsNaN(a.trend) && math.Abs(a.trend) > estimate.TQuantile(0.999, float64(a.batches-2))*a.trendSD {
		if math.Abs(a.trend) > 2*r.Tolerance {
			r.Verdict = Drifting
			r.HalfWidth, r.StdError = math.NaN(), math.NaN()
			r.ExtraTime = math.Max(window, dt)
			r.Message = fmt.Sprintf("the average still drifts: it changes by %.3g over the averaging window, beyond the tolerance %.3g; run at least %s time units longer",
				a.trend, r.Tolerance, num(r.ExtraTime))
			return
		}
		if h := math.Abs(a.trend) / 2; h > r.HalfWidth {
			r.HalfWidth = h
			r.Notes = append(r.Notes, fmt.Sprintf("the average still moves by %.3g over the window (far beyond the scatter of its batches); the half-width covers that change", a.trend))
		}
	}
	if r.HalfWidth <= r.Tolerance {
		r.Verdict = Converged
		r.Message = fmt.Sprintf("half-width %.3g within tolerance %.3g", r.HalfWidth, r.Tolerance)
		return
	}
	r.Verdict = NotConverged
	if !(r.Tolerance > 0) {
		r.Message = fmt.Sprintf("half-width %.3g; the quantity is exactly constant around zero, so only an absolute tolerance can judge it", r.HalfWidth)
		return
	}
	ratio := (r.HalfWidth / r.Tolerance) * (r.HalfWidth / r.Tolerance)
	extra := (ratio - 1) * window
	if ratio-1 > maxExtraFactor {
		extra, r.ExtraCapped = maxExtraFactor*window, true
	}
	r.ExtraTime = extra
	if r.ExtraCapped {
		r.Message = fmt.Sprintf("half-width %.3g is %.0f times the tolerance %.3g: the run would need more than %d times its averaging window (%s time units); loosen the tolerance or check the quantity",
			r.HalfWidth, r.HalfWidth/r.Tolerance, r.Tolerance, maxExtraFactor, num(window))
		return
	}
	r.Message = fmt.Sprintf("half-width %.3g above tolerance %.3g: run about %s time units longer (an averaging window of %s instead of %s)",
		r.HalfWidth, r.Tolerance, num(extra), num(window+extra), num(window))
}

// num formats a time for messages with four significant digits.
func num(x float64) string { return strconv.FormatFloat(x, 'g', 4, 64) }
