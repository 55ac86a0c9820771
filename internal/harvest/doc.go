// Package harvest turns the force and coefficient histories a solver
// writes into honest averages: a mean, its confidence interval, and a
// verdict on whether the run was long enough.
//
// # Reading
//
// A Quantity names the files (a glob in the variant directory), the time
// column, the column or sum of columns that forms the value, the comment
// marker and an optional scale such as C = F/(½ρU²A). ReadSeries streams
// every matching file, tolerates the untidiness of files still being
// written (an unfinished last line, CR-LF ends, blank lines, a repeated
// header), merges restart files by time (the later file wins from its
// first time on, and the overlap is reported) and fails with a typed error
// naming file and line for a NaN, a time going backwards or a broken row.
//
// # Statistics
//
// Analyze removes the initial transient (MSER-5, then an early/late check
// of the remaining window), estimates the correlation of the signal
// (integrated autocorrelation time with Sokal's window, and a dominant
// period when there is one, such as vortex shedding), and gives the
// standard error of the mean by batch means and by the autocorrelation,
// reporting the more conservative. The intervals are calibrated: on
// synthetic AR(1) and periodic signals with known means they cover the
// true mean in 94–96 % of cases at 95 % confidence (TestCoverage). The
// verdict is converged, not_converged (with the averaging time still
// needed), steady (a signal that settled to a constant) or failed (with the
// reason).
//
// # Comparing
//
// Compare gives the difference of two averages with its interval by
// Welch's test; Rank sorts variants and labels them with letters so that
// variants sharing a letter cannot be told apart at the chosen confidence.
//
// # Stopping a settled run
//
// Settled harvests a running case and says whether its average already
// meets the tolerance.
package harvest
