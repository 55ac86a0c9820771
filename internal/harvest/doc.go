// Package harvest judges a history: it reads it (internal/history),
// averages it with the estimators of internal/estimate (over whole cycles
// for a periodic history, by batch means sized by the autocorrelation
// otherwise, or as a bound for one that settled to a constant) and gives
// the verdict that says what the average may be used for: converged,
// steady, not_converged, too_short, drifting, running, no_data or failed.
// The same history gets the same verdict wherever it is judged: the
// settle check of a running solver (Settled), harvest, rank, fit and the
// report. The intervals are calibrated on synthetic histories with known
// means (TestCoverage).
package harvest
