// Package history reads the force and coefficient histories a solver
// writes: plain columns of numbers under optional comment headers.
//
// A Quantity names the files (a glob in the variant directory), the time
// column, the column or sum of columns that forms the value, the comment
// marker and an optional scale such as C = F/(½ρU²A). ReadSeries streams
// every matching file, tolerates the untidiness of files still being
// written (an unfinished last line, CR-LF ends, blank lines, a repeated
// header), merges restart files by time (the later file wins from its
// first time on, and the overlap is reported) and fails with a typed error
// naming file and line for a NaN, a time going backwards or a broken row.
// No solver's own format is assumed.
package history
