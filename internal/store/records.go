package store

import (
	"encoding/json"
	"math"
	"strconv"
)

// The records below are the database's own: the analysis packages convert
// their types to and from them (internal/records), so a change to an
// analysis type changes the database only through FormatVersion and a
// migration.

// Value is one parameter value of a variant: a number, or a word for a
// choice. It is a JSON number or a JSON string.
type Value struct {
	Num  float64
	Text string // non-empty for a word
}

// MarshalJSON writes a word as a string and a number as the shortest
// decimal that reads back to it.
func (v Value) MarshalJSON() ([]byte, error) {
	if v.Text != "" {
		return json.Marshal(v.Text)
	}
	return []byte(strconv.FormatFloat(v.Num, 'g', -1, 64)), nil
}

// UnmarshalJSON reads what MarshalJSON writes.
func (v *Value) UnmarshalJSON(b []byte) error {
	if len(b) > 0 && b[0] == '"' {
		*v = Value{}
		return json.Unmarshal(b, &v.Text)
	}
	x, err := strconv.ParseFloat(string(b), 64)
	if err != nil {
		return err
	}
	*v = Value{Num: x}
	return nil
}

// Number is a float64 that is null in JSON when it is not finite, and NaN
// when it is null or missing: an unknown number is never read back as 0.
type Number float64

// MarshalJSON writes null for NaN and the infinities.
func (x Number) MarshalJSON() ([]byte, error) {
	f := float64(x)
	if math.IsNaN(f) || math.IsInf(f, 0) {
		return []byte("null"), nil
	}
	return json.Marshal(f)
}

// UnmarshalJSON reads null as NaN.
func (x *Number) UnmarshalJSON(b []byte) error {
	if string(b) == "null" {
		*x = Number(math.NaN())
		return nil
	}
	var f float64
	if err := json.Unmarshal(b, &f); err != nil {
		return err
	}
	*x = Number(f)
	return nil
}

// Statistic is a derived statistic with its standard error and degrees of
// freedom.
type Statistic struct {
	Value    Number `json:"value"`
	StdError Number `json:"std_error"`
	Dof      Number `json:"dof"`
}

// unknownStatistic is a statistic with nothing known.
func unknownStatistic() Statistic {
	nan := Number(math.NaN())
	return Statistic{nan, nan, nan}
}

// CycleStats are the statistics of a periodic history's cycles.
type CycleStats struct {
	Cycles    int       `json:"cycles"`
	Max       Statistic `json:"max"`
	Min       Statistic `json:"min"`
	Amplitude Statistic `json:"amplitude"`
	RMS       Statistic `json:"rms"`
	Frequency Statistic `json:"frequency"`
}

// Overlap records samples of an earlier history file dropped where a
// later (restarted) one covers the same times.
type Overlap struct {
	Earlier string  `json:"earlier"`
	Later   string  `json:"later"`
	From    float64 `json:"from"`
	To      float64 `json:"to"`
	Samples int     `json:"samples"`
}

// Average is one quantity's harvested average as the database keeps it.
// A number not known is NaN (null), never 0.
type Average struct {
	Verdict          string      `json:"verdict"`
	Message          string      `json:"message,omitempty"`
	Mean             Number      `json:"mean"`
	HalfWidth        Number      `json:"half_width"`
	StdError         Number      `json:"std_error"`
	Dof              Number      `json:"dof"`
	Confidence       Number      `json:"confidence"`
	Tolerance        Number      `json:"tolerance"`
	Scale            Number      `json:"scale"`
	Samples          int         `json:"samples"`
	TauInt           Number      `json:"tau_int"`
	EffectiveSamples Number      `json:"effective_samples"`
	CorrelationTime  Number      `json:"correlation_time"`
	Method           string      `json:"method,omitempty"`
	Batches          int         `json:"batches,omitempty"`
	BatchSize        int         `json:"batch_size,omitempty"`
	TransientEnd     Number      `json:"transient_end"`
	TransientMethod  string      `json:"transient_method,omitempty"`
	EndTime          Number      `json:"end_time"`
	TimeStep         Number      `json:"time_step"`
	Resampled        bool        `json:"resampled,omitempty"`
	Period           Number      `json:"period"`
	Periods          int         `json:"periods,omitempty"`
	Cycle            *CycleStats `json:"cycle,omitempty"`
	RMS              Statistic   `json:"rms"`
	Last             Number      `json:"last"`
	Drift            Number      `json:"drift"`
	Resolution       Number      `json:"resolution"`
	ExtraTime        Number      `json:"extra_time"`
	ExtraCapped      bool        `json:"extra_capped,omitempty"`
	Files            []string    `json:"files,omitempty"`
	Overlaps         []Overlap   `json:"overlaps,omitempty"`
	Notes            []string    `json:"notes,omitempty"`
}

// UnmarshalJSON reads an average; a number it lacks is NaN.
func (a *Average) UnmarshalJSON(b []byte) error {
	type plain Average
	nan := Number(math.NaN())
	w := plain{Mean: nan, HalfWidth: nan, StdError: nan, Dof: nan, Confidence: nan, Tolerance: nan, Scale: nan,
		TauInt: nan, EffectiveSamples: nan, CorrelationTime: nan, TransientEnd: nan, EndTime: nan, TimeStep: nan,
		Period: nan, Last: nan, Drift: nan, Resolution: nan, ExtraTime: nan, RMS: unknownStatistic()}
	if err := json.Unmarshal(b, &w); err != nil {
		return err
	}
	*a = Average(w)
	return nil
}

// UnmarshalJSON reads a statistic; a number it lacks is NaN.
func (s *Statistic) UnmarshalJSON(b []byte) error {
	type plain Statistic
	w := plain(unknownStatistic())
	if err := json.Unmarshal(b, &w); err != nil {
		return err
	}
	*s = Statistic(w)
	return nil
}
