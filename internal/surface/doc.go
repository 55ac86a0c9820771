// Package surface fits response surfaces through the results of a study's
// runs and answers the questions asked of them: how well does the surface
// predict a run it has not seen, where is its optimum and how sure is that
// prediction, which parameters matter, and where to run next.
//
// # Inputs
//
// A study gives n runs at points X (n×k, the parameters' natural units) inside
// a box of bounds, each with a mean response y and, optionally, the standard
// error se of that mean (see [Data]). Every model maps the box to the unit
// cube internally; results are reported in natural units.
//
// # Models
//
// [FitPoly] fits a polynomial by weighted or ordinary least squares through a
// Householder QR factorisation of a coded, column-equilibrated design (never
// the normal equations), and reports coefficients with standard errors,
// residual SD, R², the leave-one-out PRESS and the condition number. Terms come
// from [LinearTerms], [InteractionTerms], [QuadraticTerms] or [ParseTerms].
//
// [FitKriging] fits a Gaussian-process (universal kriging) model with a
// constant or linear trend, a Matérn 5/2 or squared-exponential kernel with
// one length scale per parameter, heteroscedastic noise from the runs'
// standard errors and an estimated nugget; its hyperparameters maximise the
// likelihood.
//
// Both satisfy [Model], on which the analysis functions work:
// [FindOptimum] (bounded, constrained multi-start search with an interval and
// warnings), [Sensitivities] (first-order and total Sobol' indices), and, for
// kriging, [Propose] (expected improvement or maximum variance infill).
//
// # Errors and panics
//
// Problems with the data (too few runs, dependent terms, a bad term string)
// are returned as errors that wrap the sentinels of this package. Caller bugs,
// such as a point of the wrong dimension, panic with a message that starts
// with "surface: ".
package surface
