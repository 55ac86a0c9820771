package doe

import "math"

// MorrisOptions sets up a Morris screening design. The zero value is not
// usable: Trajectories must be at least 1.
type MorrisOptions struct {
	// Levels is the number p of grid levels per factor, 0, 1/(p−1), …, 1.
	// It must be even so that the step Δ = p/(2(p−1)) joins levels; zero
	// means 4 (Morris 1991's choice in his examples, Δ = 2/3).
	Levels int
	// Trajectories is the number r of trajectories; each gives one
	// elementary effect per factor. Campolongo et al. (2007) suggest 10 to
	// 50 when runs are cheap; with an expensive solver 4 to 10 is common.
	Trajectories int
	// Seed makes the design reproducible.
	Seed uint64
}

// MorrisDelta returns the step of a Morris design with p levels,
// Δ = p/(2(p−1)) (Morris 1991). It panics if p is odd or below 2.
func MorrisDelta(p int) float64 {
	checkLevels(p)
	return float64(p) / (2 * float64(p-1))
}

func checkLevels(p int) {
	if p < 2 || p%2 != 0 {
		panic("doe: Morris design needs an even number of levels ≥ 2")
	}
}

// Morris returns r = opts.Trajectories random one-at-a-time trajectories
// for elementary-effects screening of k factors (Morris 1991, "Factorial
// sampling plans for preliminary computational experiments",
// Technometrics 33). Trajectory t occupies rows t(k+1) … t(k+1)+k. It is
// built as Morris's randomised orientation of the sampling matrix,
//
//	B* = ( 1 x* + (Δ/2) [ (2B − J) D* + J ] ) P*
//
// with B the (k+1)×k strictly lower triangular matrix of ones, J the matrix
// of ones, x* a random base point whose coordinates are drawn uniformly
// from the levels {0, 1/(p−1), …, 1 − Δ}, D* a diagonal of random ±1 and
// P* a random permutation. Consecutive rows differ in exactly one factor,
// by ±Δ, and every factor moves once per trajectory. Each coordinate is a
// grid level l/(p−1); with p even and Δ = p/(2(p−1)) all p levels are
// equally likely.
//
// It panics if k < 1, opts.Trajectories < 1 or opts.Levels is odd or
// negative.
func Morris(k int, opts MorrisOptions) [][]float64 {
	p := opts.Levels
	if p == 0 {
		p = 4
	}
	checkLevels(p)
	if k < 1 {
		panic("doe: need at least one factor")
	}
	r := opts.Trajectories
	if r < 1 {
		panic("doe: Morris design needs at least one trajectory")
	}
	rng := newRand(opts.Seed, streamMorris)
	half := p / 2 // Δ in grid steps
	scale := float64(p - 1)
	rows := make([][]float64, 0, r*(k+1))
	base := make([]int, k)
	up := make([]bool, k)
	for range r {
		for j := range k {
			base[j] = rng.IntN(half) // levels 0 … p/2−1, i.e. 0 … 1−Δ
			up[j] = rng.IntN(2) == 1
		}
		order := rng.Perm(k) // order[s] is the factor moved at step s+1
		level := make([]int, k)
		for j := range k {
			if up[j] {
				level[j] = base[j]
			} else {
				level[j] = base[j] + half
			}
		}
		rows = append(rows, levelsToPoint(level, scale))
		for _, j := range order {
			if up[j] {
				level[j] += half
			} else {
				level[j] -= half
			}
			rows = append(rows, levelsToPoint(level, scale))
		}
	}
	return rows
}

func levelsToPoint(level []int, scale float64) []float64 {
	p := make([]float64, len(level))
	for j, l := range level {
		p[j] = float64(l) / scale
	}
	return p
}

// ElementaryEffects summarises the elementary effects of each factor.
type ElementaryEffects struct {
	// Mu is the mean elementary effect μ_j (Morris 1991).
	Mu []float64
	// MuStar is the mean absolute elementary effect μ*_j (Campolongo,
	// Cariboni & Saltelli 2007), which does not let effects of opposite
	// sign cancel.
	MuStar []float64
	// Sigma is the sample standard deviation σ_j of the elementary effects
	// (divisor N_j − 1): large when the factor interacts or acts
	// nonlinearly. NaN when N_j < 2.
	Sigma []float64
	// N counts the effects behind each summary. Steps whose responses are
	// not finite (a failed run reported as NaN) are left out.
	N []int
	// Effects lists the elementary effects of each factor, in trajectory
	// order.
	Effects [][]float64
}

// MorrisEffects computes the elementary effects of a Morris design (see
// Morris) with k factors from the responses y, one per row:
//
//	d_j = [ y(x + Δ e_j) − y(x) ] / Δ
//
// taken from each pair of consecutive rows of a trajectory, which differ in
// factor j alone (a downward step gives the same formula read backwards),
// and summarises them per factor as
//
//	μ_j = (1/N) Σ d_j,   μ*_j = (1/N) Σ |d_j|,
//	σ_j = sqrt( Σ (d_j − μ_j)² / (N − 1) )
//
// (Morris 1991; μ* from Campolongo, Cariboni & Saltelli 2007, "An effective
// screening design for sensitivity analysis of large models", Environ.
// Model. Softw. 22). Factors are compared by μ* (importance) and σ
// (interaction or curvature). Effects are in response units per unit-cube
// distance; multiply by a parameter's range to express them per unit of
// the parameter.
//
// A step with a non-finite response is skipped. It panics if len(y) !=
// len(points), the number of rows is not a multiple of k+1, or two
// consecutive rows of a trajectory do not differ in exactly one factor.
func MorrisEffects(points [][]float64, y []float64, k int) ElementaryEffects {
	if k < 1 {
		panic("doe: need at least one factor")
	}
	if len(y) != len(points) {
		panic("doe: Morris responses and points differ in length")
	}
	if len(points)%(k+1) != 0 {
		panic("doe: Morris design rows are not a multiple of k+1")
	}
	checkRows(points)
	if len(points) > 0 && len(points[0]) != k {
		panic("doe: Morris design rows do not have k coordinates")
	}
	ee := ElementaryEffects{
		Mu:      make([]float64, k),
		MuStar:  make([]float64, k),
		Sigma:   make([]float64, k),
		N:       make([]int, k),
		Effects: make([][]float64, k),
	}
	for t := 0; t < len(points); t += k + 1 {
		for s := t; s < t+k; s++ {
			a, b := points[s], points[s+1]
			j := -1
			for i := range a {
				if a[i] != b[i] {
					if j >= 0 {
						panic("doe: Morris trajectory step changes more than one factor")
					}
					j = i
				}
			}
			if j < 0 {
				panic("doe: Morris trajectory step changes no factor")
			}
			if math.IsNaN(y[s]) || math.IsInf(y[s], 0) || math.IsNaN(y[s+1]) || math.IsInf(y[s+1], 0) {
				continue
			}
			ee.Effects[j] = append(ee.Effects[j], (y[s+1]-y[s])/(b[j]-a[j]))
		}
	}
	for j, d := range ee.Effects {
		n := len(d)
		ee.N[j] = n
		if n == 0 {
			ee.Mu[j], ee.MuStar[j], ee.Sigma[j] = math.NaN(), math.NaN(), math.NaN()
			continue
		}
		var sum, abs float64
		for _, v := range d {
			sum += v
			abs += math.Abs(v)
		}
		mu := sum / float64(n)
		ee.Mu[j], ee.MuStar[j] = mu, abs/float64(n)
		if n < 2 {
			ee.Sigma[j] = math.NaN()
			continue
		}
		var ss float64
		for _, v := range d {
			ss += (v - mu) * (v - mu)
		}
		ee.Sigma[j] = math.Sqrt(ss / float64(n-1))
	}
	return ee
}
