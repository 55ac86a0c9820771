// Package fit fits response surfaces through a study's harvested averages
// (or a plain table), and reports what a team needs from them: the model
// with its cross-validated error set against the runs' own uncertainty,
// the predicted optimum with its interval, the parameters that matter
// (Sobol' indices on the surface), and where to run next.
//
// The numerics live in package surface; this package chooses the data
// (converged variants only), the models and the checks.
package fit
