package tradeoff

import (
	"math/rand/v2"
)

// EHVI estimates the expected hypervolume improvement of a normal
// prediction over a front (Emmerich, Giannakoglou and Naujoks 2006,
// "Single- and multiobjective evolutionary optimization assisted by
// Gaussian random field metamodels", IEEE Trans. Evol. Comput. 10(4)): the
// mean, over the prediction's distribution, of the hypervolume the
// predicted point would add to the front within the reference point. It
// is estimated by Monte Carlo with one fixed set of standard normal draws
// (common random numbers), so that the estimate is a smooth, repeatable
// function of the prediction and candidates are compared without the
// noise of fresh draws.
type EHVI struct {
	Front [][]float64
	Ref   []float64
	z     [][]float64
}

// NewEHVI prepares the estimate for a front of points with len(ref)
// objectives, with the given number of draws.
func NewEHVI(front [][]float64, ref []float64, draws int, seed uint64) *EHVI {
	rng := rand.New(rand.NewPCG(seed, 0xe4f1))
	z := make([][]float64, draws)
	for s := range z {
		z[s] = make([]float64, len(ref))
		for j := range z[s] {
			z[s][j] = rng.NormFloat64()
		}
	}
	return &EHVI{Front: front, Ref: ref, z: z}
}

// At returns the expected improvement for a prediction with mean mu and
// standard deviation sd in each objective (independent).
func (e *EHVI) At(mu, sd []float64) float64 {
	y := make([]float64, len(mu))
	sum := 0.0
	for _, z := range e.z {
		for j := range y {
			y[j] = mu[j] + sd[j]*z[j]
		}
		sum += Improvement(e.Front, y, e.Ref)
	}
	return sum / float64(len(e.z))
}
