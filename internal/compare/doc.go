// Package compare tells averages apart: the difference of two averages
// with its confidence interval by Welch's unequal-variance t test, and a
// ranking whose compact letter groups say which variants cannot be told
// apart at the chosen confidence.
package compare
