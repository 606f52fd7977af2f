// Package studyview is the read model of a study that the report and the
// regression gate share: the plan, the input and the score tables of one
// study directory, already read into memory and put in the form people
// read (parameter values as written in the plan, every score a
// stability.MedianIQR across the runs or pairs of runs of a setting, the
// consensus layouts and per-point spreads, the KL traces).
//
// sweep.Open reads the files; FromSweep adapts the result, and Open does
// both. The view sits above sweep and beside its two users, so that the
// gate compares studies without importing the HTML report.
package studyview
