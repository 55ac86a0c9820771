// Package study offers the workflows the commands run on a study: open it,
// describe its status, harvest it, rank its variants or weigh their
// trade-off, fit its surfaces, propose and plan new points, analyse its
// mesh levels and build its report. Each command parses its flags, makes
// one call here and prints what comes back; the policies (which model, how
// the report samples a surface, when a job is orphaned) live here or in
// the packages below, never in the commands.
package study
