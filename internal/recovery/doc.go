// Package recovery rebuilds a study's database when it is damaged (an
// emptied or truncated file, a bad copy, a full disk), keeping only what
// it can prove: the variants from the identity file that planning writes
// into every variant directory, and each stage's outcome from the markers
// in its log (see runner.ReadStageLog). It starts from the consistent copy
// of the database that plans and runs keep when that copy is sound, and
// brings it up to date from the directories; without one it builds the
// database from the directories alone. The damaged file is kept aside,
// never deleted.
package recovery
