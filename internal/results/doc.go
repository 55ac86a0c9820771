// Package results harvests every variant of a study into averaged
// quantities with their confidence intervals and verdicts, keeps them in
// the study database and in results/summary.{json,csv}, and ranks the
// variants by an objective with significance groups.
package results
