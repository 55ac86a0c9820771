// Package records converts between the analysis types (recipe values,
// harvested results) and the database's own records (internal/store):
// the one place where the two meet, so that a change to an analysis type
// cannot change what a study database holds unnoticed.
package records

import (
	"math"

	"github.com/sweep-cfd/sweep/internal/harvest"
	"github.com/sweep-cfd/sweep/internal/history"
	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/store"
)

// Values returns the database's form of parameter values.
func Values(vs []recipe.Value) []store.Value {
	if vs == nil {
		return nil
	}
	out := make([]store.Value, len(vs))
	for i, v := range vs {
		out[i] = store.Value{Num: v.Num, Text: v.Text}
	}
	return out
}

// RecipeValues returns parameter values from their database form.
func RecipeValues(vs []store.Value) []recipe.Value {
	if vs == nil {
		return nil
	}
	out := make([]recipe.Value, len(vs))
	for i, v := range vs {
		out[i] = recipe.Value{Num: v.Num, Text: v.Text}
	}
	return out
}

func stat(s harvest.Statistic) store.Statistic {
	return store.Statistic{Value: store.Number(s.Value), StdError: store.Number(s.StdError), Dof: store.Number(s.Dof)}
}

func harvestStat(s store.Statistic) harvest.Statistic {
	return harvest.Statistic{Value: float64(s.Value), StdError: float64(s.StdError), Dof: float64(s.Dof)}
}

// Average returns the database's form of a harvested result.
func Average(r harvest.Result) store.Average {
	a := store.Average{Verdict: string(r.Verdict), Message: r.Message, Mean: store.Number(r.Mean), HalfWidth: store.Number(r.HalfWidth),
		StdError: store.Number(r.StdError), Dof: store.Number(r.Dof), Confidence: store.Number(r.Confidence),
		Tolerance: store.Number(r.Tolerance), Scale: store.Number(r.Scale), Samples: r.Samples, TauInt: store.Number(r.TauInt),
		EffectiveSamples: store.Number(r.EffectiveSamples), CorrelationTime: store.Number(r.CorrelationTime), Method: r.Method,
		Batches: r.Batches, BatchSize: r.BatchSize, TransientEnd: store.Number(r.TransientEnd), TransientMethod: r.TransientMethod,
		EndTime: store.Number(r.EndTime), TimeStep: store.Number(r.TimeStep), Resampled: r.Resampled, Period: store.Number(r.Period),
		Periods: r.Periods, RMS: stat(r.RMS), Last: store.Number(r.Last), Drift: store.Number(r.Drift),
		Resolution: store.Number(r.Resolution), ExtraTime: store.Number(r.ExtraTime), ExtraCapped: r.ExtraCapped,
		Files: r.Files, Notes: r.Notes}
	if c := r.Cycle; c != nil {
		a.Cycle = &store.CycleStats{Cycles: c.Cycles, Max: stat(c.Max), Min: stat(c.Min), Amplitude: stat(c.Amplitude), RMS: stat(c.RMS), Frequency: stat(c.Frequency)}
	}
	for _, o := range r.Overlaps {
		a.Overlaps = append(a.Overlaps, store.Overlap(o))
	}
	return a
}

// Result returns a harvested result from its database form.
func Result(a store.Average) harvest.Result {
	r := harvest.Result{Verdict: harvest.Verdict(a.Verdict), Message: a.Message, Mean: float64(a.Mean), HalfWidth: float64(a.HalfWidth),
		StdError: float64(a.StdError), Dof: float64(a.Dof), Confidence: float64(a.Confidence), Tolerance: float64(a.Tolerance),
		Scale: float64(a.Scale), Samples: a.Samples, TauInt: float64(a.TauInt), EffectiveSamples: float64(a.EffectiveSamples),
		CorrelationTime: float64(a.CorrelationTime), Method: a.Method, Batches: a.Batches, BatchSize: a.BatchSize,
		TransientEnd: float64(a.TransientEnd), TransientMethod: a.TransientMethod, EndTime: float64(a.EndTime),
		TimeStep: float64(a.TimeStep), Resampled: a.Resampled, Period: float64(a.Period), Periods: a.Periods,
		RMS: harvestStat(a.RMS), Last: float64(a.Last), Drift: float64(a.Drift), Resolution: float64(a.Resolution),
		ExtraTime: float64(a.ExtraTime), ExtraCapped: a.ExtraCapped, Files: a.Files, Notes: a.Notes}
	if c := a.Cycle; c != nil {
		r.Cycle = &harvest.CycleStats{Cycles: c.Cycles, Max: harvestStat(c.Max), Min: harvestStat(c.Min), Amplitude: harvestStat(c.Amplitude),
			RMS: harvestStat(c.RMS), Frequency: harvestStat(c.Frequency)}
	}
	for _, o := range a.Overlaps {
		r.Overlaps = append(r.Overlaps, history.Overlap(o))
	}
	// A steady result's bound is read as a normal error: infinite degrees
	// of freedom, which the database keeps as null.
	if r.Method == "bound" && math.IsNaN(r.Dof) {
		r.Dof = math.Inf(1)
	}
	return r
}

// Averages returns the database's form of a variant's results.
func Averages(rs map[string]harvest.Result) map[string]store.Average {
	if rs == nil {
		return nil
	}
	out := make(map[string]store.Average, len(rs))
	for q, r := range rs {
		out[q] = Average(r)
	}
	return out
}

// Results returns a variant's results from their database form.
func Results(as map[string]store.Average) map[string]harvest.Result {
	if as == nil {
		return nil
	}
	out := make(map[string]harvest.Result, len(as))
	for q, a := range as {
		out[q] = Result(a)
	}
	return out
}
