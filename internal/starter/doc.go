// Package starter holds the starter study that `sweep new` writes: a
// commented recipe and a template case whose "solver" is a short shell
// script, so that a newcomer sees a study plan, run and finish with
// nothing installed but this program.
package starter
