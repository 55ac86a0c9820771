// Package recipe reads and checks a study recipe (study.toml).
//
// A recipe names the parameters of a study, the design that picks points in
// their space, the template case and which of its files are rendered, and
// the ordered stages that run on each variant. Load refuses a recipe that
// could not run, before anything is written, and every error names the
// file and line it comes from and says what to change.
package recipe
