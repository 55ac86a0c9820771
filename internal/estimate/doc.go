// Package estimate holds the estimators that turn one evenly sampled
// history into an average and its error: where the start-up transient
// ends (MSER-5), how correlated the samples are (Geyer's initial monotone
// sequence on an FFT autocovariance), the long-run variance and batch
// means, the early/late check of a window (Geweke), the removal of a weak
// tone, the Student t quantile, and the cycles of a periodic history
// (a periodogram peak, then crossings of the mean level). Each file names
// the published method it implements. The judge that picks among them
// and gives a verdict is internal/harvest.
package estimate
