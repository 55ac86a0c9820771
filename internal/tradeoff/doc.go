// Package tradeoff holds the mathematics of several objectives at once:
// Pareto dominance and fronts, the hypervolume a front dominates, the
// chance that a point is on the front or within its limits when its values
// are only known to within their uncertainty, and the expected
// hypervolume improvement of a prediction (Emmerich, Giannakoglou and
// Naujoks 2006). Every objective is minimised: negate one where higher
// values are better.
package tradeoff
