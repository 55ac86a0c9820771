// File: Reusable FFT plans (gonum/dsp/fourier) for the spectral estimators; no
// method of its own.

package estimate

import (
	"sync"

	"gonum.org/v1/gonum/dsp/fourier"
)

// fftPlans keeps FFT plans by length; a plan is not safe for concurrent
// use, so each is taken out while in use.
var fftPlans sync.Map // int → *sync.Pool

func getFFT(n int) *fourier.FFT {
	p, _ := fftPlans.LoadOrStore(n, &sync.Pool{New: func() any { return fourier.NewFFT(n) }})
	return p.(*sync.Pool).Get().(*fourier.FFT)
}

func putFFT(n int, f *fourier.FFT) {
	if p, ok := fftPlans.Load(n); ok {
		p.(*sync.Pool).Put(f)
	}
}
