// File: Read and judge a variant's history, and the settle check of a running
// solver. No method of its own.

package harvest

import (
	"errors"
	"fmt"

	"github.com/sweep-cfd/sweep/internal/history"
)

// Harvest reads the history of q in the variant directory dir (see
// history.ReadSeries) and analyses it (see Analyze). The Result is always usable:
// on a read error its verdict is NoData (no file, no data row) or Failed
// (NaN or Inf, a diverged run; a broken file), its message is the error's
// text, and the error is returned as well so that callers can test it
// with errors.Is.
func Harvest(dir string, q history.Quantity, opts Options) (Result, error) {
	s, err := history.ReadSeries(dir, q)
	if err != nil {
		r := unknown(opts.withDefaults().Confidence)
		r.Verdict, r.Message = Failed, err.Error()
		if errors.Is(err, history.ErrNoFiles) || errors.Is(err, history.ErrNoData) {
			r.Verdict = NoData
		}
		if s != nil {
			r.Files, r.Overlaps, r.Notes = s.Files, s.Overlaps, s.Notes
		}
		return r, err
	}
	r := Analyze(s.Time, s.Value, opts)
	r.Files = s.Files
	r.Overlaps = s.Overlaps
	r.Notes = append(s.Notes, r.Notes...)
	if len(s.Overlaps) > 0 && r.Verdict != Failed {
		r.Message += fmt.Sprintf(" (%d restart overlap(s) resolved, later file kept)", len(s.Overlaps))
	}
	return r, nil
}

// Settled is meant for a runner that polls a running case: it harvests
// the history so far with the quantity's own options, so its verdict is
// the one a later harvest of the same history gives, and reports whether
// the case may be stopped: the verdict is converged or steady and at
// least minSamples samples were averaged.
//
// A history that does not exist yet or holds no data row is not an error
// here: stop is false and the Result says why. Other read errors are
// returned; history.ErrNonFinite means the run has diverged.
//
// Each call re-reads the files from the start, which costs well under a
// second for a history of tens of MB (see BenchmarkReadHistory) and is
// negligible beside a solver's time step.
func Settled(dir string, q history.Quantity, opts Options, minSamples int) (stop bool, r Result, err error) {
	r, err = Harvest(dir, q, opts)
	if errors.Is(err, history.ErrNoFiles) || errors.Is(err, history.ErrNoData) {
		return false, r, nil
	}
	if err != nil {
		return false, r, err
	}
	return r.Verdict.Usable() && r.Samples >= minSamples, r, nil
}
