// Package plan turns a recipe into variants: it generates the design's
// points, gives each new point a stable identity, renders one case
// directory per variant from the template, and records variants and their
// stage jobs in the study database.
//
// Planning is idempotent. A point that is already planned (matched by its
// name when the design gives one, otherwise by its parameter values) keeps
// its variant, directory and results; new points are added; a named point
// whose values changed is refused.
package plan
