// File: The JSON form of results: unknown numbers are null. No method.

package harvest

import (
	"encoding/json"
	"math"

	"github.com/sweep-cfd/sweep/internal/history"
)

// In JSON an unknown number (NaN, or an infinite number of degrees of
// freedom) is null, never 0: a consumer that reads the mean of a failed
// run as 0 would rank it first.

// jnum is a float64 that is null in JSON when it is not finite.
type jnum float64

func (x jnum) MarshalJSON() ([]byte, error) {
	f := float64(x)
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return []byte("null"), nil
	}
	return json.Marshal(f)
}

func (x *jnum) UnmarshalJSON(b []byte) error {
	if string(b) == "null" {
		*x = jnum(math.NaN())
		return nil
	}
	var f float64
	if err := json.Unmarshal(b, &f); err != nil {
		return err
	}
	*x = jnum(f)
	return nil
}

type statisticJSON struct {
	Value    jnum `json:"value"`
	StdError jnum `json:"std_error"`
	Dof      jnum `json:"dof"`
}

// MarshalJSON writes a statistic with null for what is not known.
func (s Statistic) MarshalJSON() ([]byte, error) {
	return json.Marshal(statisticJSON{jnum(s.Value), jnum(s.StdError), jnum(s.Dof)})
}

// UnmarshalJSON reads what MarshalJSON writes.
func (s *Statistic) UnmarshalJSON(b []byte) error {
	var w statisticJSON
	if err := json.Unmarshal(b, &w); err != nil {
		return err
	}
	*s = Statistic{float64(w.Value), float64(w.StdError), float64(w.Dof)}
	return nil
}

type cycleStatsJSON struct {
	Cycles    int       `json:"cycles"`
	Max       Statistic `json:"max"`
	Min       Statistic `json:"min"`
	Amplitude Statistic `json:"amplitude"`
	RMS       Statistic `json:"rms"`
	Frequency Statistic `json:"frequency"`
}

func (c CycleStats) MarshalJSON() ([]byte, error) {
	return json.Marshal(cycleStatsJSON(c))
}

func (c *CycleStats) UnmarshalJSON(b []byte) error {
	var w cycleStatsJSON
	if err := json.Unmarshal(b, &w); err != nil {
		return err
	}
	*c = CycleStats(w)
	return nil
}

// resultJSON is Result as written to JSON; the names are stable.
type resultJSON struct {
	Verdict          Verdict           `json:"verdict"`
	Message          string            `json:"message,omitempty"`
	Mean             jnum              `json:"mean"`
	HalfWidth        jnum              `json:"half_width"`
	StdError         jnum              `json:"std_error"`
	Dof              jnum              `json:"dof"`
	Confidence       jnum              `json:"confidence"`
	Tolerance        jnum              `json:"tolerance"`
	Scale            jnum              `json:"scale"`
	Samples          int               `json:"samples"`
	TauInt           jnum              `json:"tau_int"`
	EffectiveSamples jnum              `json:"effective_samples"`
	CorrelationTime  jnum              `json:"correlation_time"`
	Method           string            `json:"method,omitempty"`
	Batches          int               `json:"batches,omitempty"`
	BatchSize        int               `json:"batch_size,omitempty"`
	TransientEnd     jnum              `json:"transient_end"`
	TransientMethod  string            `json:"transient_method,omitempty"`
	EndTime          jnum              `json:"end_time"`
	TimeStep         jnum              `json:"time_step"`
	Resampled        bool              `json:"resampled,omitempty"`
	Period           jnum              `json:"period"`
	Periods          int               `json:"periods,omitempty"`
	Cycle            *CycleStats       `json:"cycle,omitempty"`
	RMS              Statistic         `json:"rms"`
	Last             jnum              `json:"last"`
	Drift            jnum              `json:"drift"`
	Resolution       jnum              `json:"resolution"`
	ExtraTime        jnum              `json:"extra_time"`
	ExtraCapped      bool              `json:"extra_capped,omitempty"`
	Files            []string          `json:"files,omitempty"`
	Overlaps         []history.Overlap `json:"overlaps,omitempty"`
	Notes            []string          `json:"notes,omitempty"`
}

// MarshalJSON writes the result with null for every number not known.
func (r Result) MarshalJSON() ([]byte, error) {
	return json.Marshal(resultJSON{r.Verdict, r.Message, jnum(r.Mean), jnum(r.HalfWidth), jnum(r.StdError), jnum(r.Dof),
		jnum(r.Confidence), jnum(r.Tolerance), jnum(r.Scale), r.Samples, jnum(r.TauInt), jnum(r.EffectiveSamples),
		jnum(r.CorrelationTime), r.Method, r.Batches, r.BatchSize, jnum(r.TransientEnd), r.TransientMethod,
		jnum(r.EndTime), jnum(r.TimeStep), r.Resampled, jnum(r.Period), r.Periods, r.Cycle, r.RMS, jnum(r.Last),
		jnum(r.Drift), jnum(r.Resolution), jnum(r.ExtraTime), r.ExtraCapped, r.Files, r.Overlaps, r.Notes})
}

// UnmarshalJSON reads what MarshalJSON writes; a missing number is NaN.
func (r *Result) UnmarshalJSON(b []byte) error {
	nan := jnum(math.NaN())
	w := resultJSON{Mean: nan, HalfWidth: nan, StdError: nan, Dof: nan, Confidence: nan, Tolerance: nan, Scale: nan,
		TauInt: nan, EffectiveSamples: nan, CorrelationTime: nan, TransientEnd: nan, EndTime: nan, TimeStep: nan,
		Period: nan, Last: nan, Drift: nan, Resolution: nan, ExtraTime: nan,
		RMS: Statistic{math.NaN(), math.NaN(), math.NaN()}}
	if err := json.Unmarshal(b, &w); err != nil {
		return err
	}
	*r = Result{Verdict: w.Verdict, Message: w.Message, Mean: float64(w.Mean), HalfWidth: float64(w.HalfWidth),
		StdError: float64(w.StdError), Dof: float64(w.Dof), Confidence: float64(w.Confidence),
		Tolerance: float64(w.Tolerance), Scale: float64(w.Scale), Samples: w.Samples, TauInt: float64(w.TauInt),
		EffectiveSamples: float64(w.EffectiveSamples), CorrelationTime: float64(w.CorrelationTime), Method: w.Method,
		Batches: w.Batches, BatchSize: w.BatchSize, TransientEnd: float64(w.TransientEnd),
		TransientMethod: w.TransientMethod, EndTime: float64(w.EndTime), TimeStep: float64(w.TimeStep),
		Resampled: w.Resampled, Period: float64(w.Period), Periods: w.Periods, Cycle: w.Cycle, RMS: w.RMS,
		Last: float64(w.Last), Drift: float64(w.Drift), Resolution: float64(w.Resolution), ExtraTime: float64(w.ExtraTime), ExtraCapped: w.ExtraCapped,
		Files: w.Files, Overlaps: w.Overlaps, Notes: w.Notes}
	if r.Method == "bound" && math.IsNaN(r.Dof) {
		r.Dof = math.Inf(1)
	}
	return nil
}
