package records

import (
	"encoding/json"
	"math"
	"reflect"
	"testing"

	"github.com/sweep-cfd/sweep/internal/harvest"
	"github.com/sweep-cfd/sweep/internal/history"
	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/store"
)

// same reports whether two results are equal, NaN equal to NaN.
func same(a, b harvest.Result) bool {
	ja, _ := json.Marshal(a)
	jb, _ := json.Marshal(b)
	return string(ja) == string(jb) && (math.IsInf(a.Dof, 1) == math.IsInf(b.Dof, 1))
}

// Ensure that a result goes into the database and back unchanged, through
// the record's JSON: a periodic one with cycle statistics and an overlap,
// a steady one whose bound has infinite degrees of freedom (null in the
// database), and a failed one whose numbers are unknown (NaN, never 0).
func TestResultRoundTrip(t *testing.T) {
	nan := math.NaN()
	periodic := harvest.Result{Verdict: harvest.Converged, Mean: 3.44, HalfWidth: 0.002, StdError: 0.0009, Dof: 13, Confidence: 0.95,
		Tolerance: 0.03, Scale: 3.44, Samples: 4000, TauInt: nan, EffectiveSamples: nan, CorrelationTime: nan, Method: "cycles",
		Batches: 14, BatchSize: 1, TransientEnd: 4.9, TransientMethod: "cycles", EndTime: 20, TimeStep: 0.005, Period: 0.33,
		Periods: 14, Cycle: &harvest.CycleStats{Cycles: 14, Max: harvest.Statistic{Value: 3.5, StdError: 0.001, Dof: 13}},
		RMS: harvest.Statistic{Value: 0.01, StdError: 0.0001, Dof: 13}, Last: 3.45, Drift: 1e-4, Resolution: 1e-6, ExtraTime: nan,
		Files: []string{"forces.dat"}, Overlaps: []history.Overlap{{Earlier: "a", Later: "b", From: 1, To: 2, Samples: 20}}, Notes: []string{"n"}}
	steady := harvest.Result{Verdict: harvest.Steady, Mean: 4.025, HalfWidth: 1e-5, StdError: 5e-6, Dof: math.Inf(1), Method: "bound",
		Confidence: 0.95, Tolerance: 0.04, Scale: 4.025, TauInt: nan, EffectiveSamples: nan, CorrelationTime: nan, TransientEnd: 100,
		EndTime: 400, TimeStep: 1, Period: nan, RMS: harvest.Statistic{Value: nan, StdError: nan, Dof: nan}, Last: 4.025, Drift: 0,
		Resolution: 1e-5, ExtraTime: nan}
	failed := harvest.Result{Verdict: harvest.Failed, Message: "the solve stage failed", Mean: nan, HalfWidth: nan, StdError: nan, Dof: nan,
		Confidence: 0.95, Tolerance: nan, Scale: nan, TauInt: nan, EffectiveSamples: nan, CorrelationTime: nan, TransientEnd: nan,
		EndTime: nan, TimeStep: nan, Period: nan, RMS: harvest.Statistic{Value: nan, StdError: nan, Dof: nan}, Last: nan, Drift: nan,
		Resolution: nan, ExtraTime: nan}
	in := map[string]harvest.Result{"drag": periodic, "lift": steady, "side": failed}
	b, err := json.Marshal(store.Results{Quantities: Averages(in)})
	if err != nil {
		t.Fatal(err)
	}
	var back store.Results
	if err := json.Unmarshal(b, &back); err != nil {
		t.Fatal(err)
	}
	out := Results(back.Quantities)
	for q, r := range in {
		if !same(r, out[q]) {
			t.Errorf("%s: wrote %+v\nread %+v", q, r, out[q])
		}
	}
	if !math.IsInf(out["lift"].Dof, 1) || !math.IsNaN(out["side"].Mean) {
		t.Errorf("steady dof %g, failed mean %g", out["lift"].Dof, out["side"].Mean)
	}
}

// Ensure that parameter values of both kinds go into the database form and
// back unchanged.
func TestValuesRoundTrip(t *testing.T) {
	in := []recipe.Value{recipe.Num(0.1), recipe.Num(-3e-7), recipe.Word("round")}
	if out := RecipeValues(Values(in)); !reflect.DeepEqual(in, out) {
		t.Errorf("%v -> %v", in, out)
	}
	if Values(nil) != nil || RecipeValues(nil) != nil {
		t.Errorf("nil values are not nil")
	}
}
