package tradeoff

import (
	"math"
	"math/rand/v2"
)

// Feasibility returns the probability that a normal value with the given
// mean and standard deviation lies within [lo, hi] (either may be
// infinite). With no spread it is 1 or 0.
func Feasibility(mean, sd, lo, hi float64) float64 {
	if !(sd > 0) {
		if mean >= lo && mean <= hi {
			return 1
		}
		return 0
	}
	return phi((hi-mean)/sd) - phi((lo-mean)/sd)
}

// phi is the standard normal distribution function.
func phi(z float64) float64 { return 0.5 * math.Erfc(-z/math.Sqrt2) }

// Limit keeps column Col of a point within [Lo, Hi].
type Limit struct {
	Col    int
	Lo, Hi float64
}

// Problem names, among the columns of the points, the objectives (all
// minimised) and the limits.
type Problem struct {
	Objectives []int
	Limits     []Limit
}

// feasible reports whether a point keeps every limit.
func (p Problem) feasible(y []float64) bool {
	for _, l := range p.Limits {
		if !(y[l.Col] >= l.Lo && y[l.Col] <= l.Hi) {
			return false
		}
	}
	return true
}

// objectives returns the objective columns of y.
func (p Problem) objectives(y []float64) []float64 {
	out := make([]float64, len(p.Objectives))
	for j, c := range p.Objectives {
		out[j] = y[c]
	}
	return out
}

// FeasibleFront returns the indices of the points that keep every limit
// and that no other such point dominates in the objectives.
func (p Problem) FeasibleFront(ys [][]float64) []int {
	var idx []int
	var obj [][]float64
	for i, y := range ys {
		if p.feasible(y) {
			idx = append(idx, i)
			obj = append(obj, p.objectives(y))
		}
	}
	var out []int
	for _, k := range Front(obj) {
		out = append(out, idx[k])
	}
	return out
}

// Chances estimates, for points whose every column is only known as a
// normal value (mean, sd; independent of each other), the probability
// that each point is on the feasible front and that it keeps the limits,
// from draws samples (Monte Carlo; the standard error of a chance p is
// √(p(1 − p)/draws)). Columns of one point are drawn independently, which
// treats quantities averaged from the same run as uncorrelated.
func (p Problem) Chances(mean, sd [][]float64, draws int, seed uint64) (onFront, feasible []float64) {
	n := len(mean)
	onFront, feasible = make([]float64, n), make([]float64, n)
	if n == 0 || draws <= 0 {
		return onFront, feasible
	}
	rng := rand.New(rand.NewPCG(seed, 0x7ade0ff))
	ys := make([][]float64, n)
	for i := range ys {
		ys[i] = make([]float64, len(mean[i]))
	}
	for range draws {
		for i := range ys {
			for j := range ys[i] {
				s := sd[i][j]
				if !(s > 0) {
					s = 0
				}
				ys[i][j] = mean[i][j] + s*rng.NormFloat64()
			}
			if p.feasible(ys[i]) {
				feasible[i]++
			}
		}
		for _, i := range p.FeasibleFront(ys) {
			onFront[i]++
		}
	}
	for i := range onFront {
		onFront[i] /= float64(draws)
		feasible[i] /= float64(draws)
	}
	return onFront, feasible
}
