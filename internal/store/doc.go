// Package store keeps a study's variants and jobs in its bbolt database
// (.sweep/study.db) and guards the study with a lock file.
//
// The database is the truth: every change of a job's state is a committed
// transaction before anything acts on it. Records are JSON, so a database
// can be inspected with any bbolt browser. Writers hold the study lock
// (Acquire) for as long as they work; the database file itself is opened
// for one transaction at a time when Options.Brief is set, so that readers
// such as `sweep status` can look in while a run goes on.
package store
