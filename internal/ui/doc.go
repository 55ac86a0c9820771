// Package ui prints what the commands report: aligned tables, JSON, and a
// run's progress line.
package ui
