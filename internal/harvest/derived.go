// File: Statistics of a history's cycles (maxima, minima, amplitude, rms,
// frequency, Strouhal number) as averages of their own, each with its
// Student t interval over batches of cycles.

package harvest

import (
	"fmt"
	"math"

	"github.com/sweep-cfd/sweep/internal/estimate"
)

// Derived returns a statistic of r's history as a result of its own, so
// that it can be judged, ranked and fitted like a mean: "max", "min",
// "amplitude" or "frequency" of its developed cycles (see CycleStats),
// "rms" of its fluctuation, or "strouhal", the frequency times
// length/speed. The interval is the statistic's own (Student t on its
// batches' degrees of freedom) and the verdict comes from opts' tolerance
// on it; a history that gave no interval passes its verdict on, and one
// without regular cycles has no cycle statistics (NoData, saying so).
func (r Result) Derived(stat string, opts Options, length, speed float64) Result {
	o := opts.withDefaults()
	d := unknown(o.Confidence)
	d.TransientEnd, d.TransientMethod, d.EndTime, d.TimeStep = r.TransientEnd, r.TransientMethod, r.EndTime, r.TimeStep
	d.Samples, d.Method, d.Period, d.Periods, d.Files = r.Samples, r.Method, r.Period, r.Periods, r.Files
	switch r.Verdict {
	case Converged, NotConverged:
	case Steady:
		d.Verdict, d.Message = NoData, "the history is steady: it has no cycles and no fluctuation to measure"
		return d
	default:
		d.Verdict, d.Message, d.ExtraTime, d.ExtraCapped = r.Verdict, r.Message, r.ExtraTime, r.ExtraCapped
		return d
	}
	var s Statistic
	switch {
	case stat == "rms":
		s = r.RMS
	case r.Cycle == nil:
		d.Verdict, d.Message = NoData, fmt.Sprintf("the history has no regular cycle, so it has no %s", stat)
		return d
	case stat == "max":
		s = r.Cycle.Max
	case stat == "min":
		s = r.Cycle.Min
	case stat == "amplitude":
		s = r.Cycle.Amplitude
	case stat == "frequency":
		s = r.Cycle.Frequency
	case stat == "strouhal":
		k := length / speed
		s = Statistic{Value: r.Cycle.Frequency.Value * k, StdError: r.Cycle.Frequency.StdError * k, Dof: r.Cycle.Frequency.Dof}
	default:
		panic("harvest: unknown statistic " + stat)
	}
	d.Mean, d.StdError, d.Dof = s.Value, s.StdError, s.Dof
	if math.IsNaN(s.StdError) {
		d.Verdict, d.Message = NoData, fmt.Sprintf("the %s has no interval", stat)
		return d
	}
	d.HalfWidth = estimate.TQuantile(o.Confidence, s.Dof) * s.StdError
	d.Scale = math.Abs(s.Value)
	d.Tolerance = o.tolerance(d.Scale)
	if r.Cycle != nil {
		d.Cycle = r.Cycle
	}
	if d.HalfWidth <= d.Tolerance {
		d.Verdict = Converged
		d.Message = fmt.Sprintf("half-width %.3g within tolerance %.3g", d.HalfWidth, d.Tolerance)
		return d
	}
	d.Verdict = NotConverged
	window := r.EndTime - r.TransientEnd
	ratio := (d.HalfWidth / d.Tolerance) * (d.HalfWidth / d.Tolerance)
	d.ExtraTime = (ratio - 1) * window
	if ratio-1 > maxExtraFactor {
		d.ExtraTime, d.ExtraCapped = maxExtraFactor*window, true
	}
	d.Message = fmt.Sprintf("half-width %.3g above tolerance %.3g: run about %s time units longer", d.HalfWidth, d.Tolerance, num(d.ExtraTime))
	return d
}

// HalfWidth returns the half-width of a statistic's confidence interval
// at confidence conf (Student t on its degrees of freedom).
func HalfWidth(s Statistic, conf float64) float64 {
	return estimate.TQuantile(conf, s.Dof) * s.StdError
}
