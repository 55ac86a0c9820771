package surface

import (
	"math"
	"math/rand/v2"
)

// SobolOptions configure SobolIndices. The zero value uses N = 4096 base
// samples, 200 bootstrap resamples and seed 0.
type SobolOptions struct {
	// N is the number of base samples; the function is evaluated N·(k+2)
	// times. Zero means 4096.
	N int
	// Bootstrap is the number of bootstrap resamples behind FirstSE and
	// TotalSE. Zero means 200; a negative value skips the bootstrap.
	Bootstrap int
	// Seed seeds the samples and the bootstrap.
	Seed uint64
}

// Indices are variance-based (Sobol') sensitivity indices of a response to
// its parameters, each parameter uniform over its bounds and independent.
type Indices struct {
	// First holds the first-order (main-effect) indices S_i = V[E(y|x_i)]/V(y):
	// the share of the variance that x_i explains alone.
	First []float64
	// Total holds the total-effect indices ST_i = E[V(y|x_~i)]/V(y): the share
	// that involves x_i, alone or in interactions. ST_i − S_i measures the
	// interactions; ST_i ≈ 0 means x_i can be fixed anywhere in its range.
	Total []float64
	// FirstSE and TotalSE are bootstrap standard errors of the estimates
	// (nil when the bootstrap is skipped).
	FirstSE, TotalSE []float64
	// Mean and Variance are the response's mean and variance over the box.
	Mean, Variance float64
	// N is the number of base samples and Evaluations = N·(k+2).
	N, Evaluations int
}

// SobolIndices estimates first-order and total Sobol' indices of f over
// the box b by Monte Carlo. Two independent N×k matrices A and B of uniform
// points are drawn, and for each parameter i the matrix A_B^(i), equal to A
// with column i taken from B. With f_A, f_B, f_ABi the function values on
// their rows and V the variance of f_A and f_B pooled, the estimators are
// (Saltelli et al. 2010, "Variance based sensitivity analysis of model
// output. Design and estimator for the total sensitivity index", Comput.
// Phys. Commun. 181, Table 2, (b) and (f)):
//
//	S_i  = (1/N) Σ_j f_B,j (f_ABi,j − f_A,j) / V,            (Saltelli 2010)
//	ST_i = (1/(2N)) Σ_j (f_A,j − f_ABi,j)² / V,                (Jansen 1999)
//
// In S_i, f_B is centred on the pooled sample mean: this leaves the
// estimator's expectation unchanged (E[f_ABi − f_A] = 0) and removes the
// variance that a large mean response would otherwise add. Samples are
// plain pseudo-random, so the rows are independent and the
// standard errors come from resampling rows with replacement (bootstrap).
// Estimates may fall slightly outside [0, 1] by sampling error; they are
// not clipped. If f is constant, V = 0 and every index is NaN.
//
// It panics if f is nil.
func SobolIndices(f func(x []float64) float64, b Bounds, opts SobolOptions) Indices {
	if f == nil {
		panic("surface: nil function")
	}
	if err := b.check(); err != nil {
		panic("surface: " + err.Error())
	}
	n := opts.N
	if n <= 0 {
		n = 4096
	}
	if n < 2 {
		n = 2
	}
	nb := opts.Bootstrap
	if nb == 0 {
		nb = 200
	}
	k := b.Dim()
	rng := rand.New(rand.NewPCG(opts.Seed, 0x50b01))
	draw := func() [][]float64 {
		m := make([][]float64, n)
		for j := range m {
			m[j] = make([]float64, k)
			for i := range m[j] {
				m[j][i] = rng.Float64()
			}
		}
		return m
	}
	a, bb := draw(), draw()
	fa := make([]float64, n)
	fb := make([]float64, n)
	fab := make([][]float64, k)
	x := make([]float64, k)
	for j := 0; j < n; j++ {
		fa[j] = f(b.fromUnit(a[j]))
		fb[j] = f(b.fromUnit(bb[j]))
	}
	for i := 0; i < k; i++ {
		fab[i] = make([]float64, n)
		for j := 0; j < n; j++ {
			copy(x, a[j])
			x[i] = bb[j][i]
			fab[i][j] = f(b.fromUnit(x))
		}
	}
	idx := make([]int, n)
	for j := range idx {
		idx[j] = j
	}
	out := Indices{N: n, Evaluations: n * (k + 2)}
	out.First, out.Total, out.Mean, out.Variance = sobolEstimate(fa, fb, fab, idx)
	if nb > 0 {
		s1 := make([][]float64, k)
		st := make([][]float64, k)
		for r := 0; r < nb; r++ {
			for j := range idx {
				idx[j] = rng.IntN(n)
			}
			f1, ft, _, _ := sobolEstimate(fa, fb, fab, idx)
			for i := 0; i < k; i++ {
				s1[i] = append(s1[i], f1[i])
				st[i] = append(st[i], ft[i])
			}
		}
		out.FirstSE = make([]float64, k)
		out.TotalSE = make([]float64, k)
		for i := 0; i < k; i++ {
			out.FirstSE[i] = sdOfSample(s1[i])
			out.TotalSE[i] = sdOfSample(st[i])
		}
	}
	return out
}

// Sensitivities returns the Sobol' indices of the model's mean over its
// bounds; see SobolIndices.
func Sensitivities(m Model, opts SobolOptions) Indices {
	return SobolIndices(m.Mean, m.Bounds(), opts)
}

// sobolEstimate evaluates the estimators on the rows listed in idx.
func sobolEstimate(fa, fb []float64, fab [][]float64, idx []int) (first, total []float64, mean, variance float64) {
	n := float64(len(idx))
	for _, j := range idx {
		mean += fa[j] + fb[j]
	}
	mean /= 2 * n
	for _, j := range idx {
		variance += (fa[j]-mean)*(fa[j]-mean) + (fb[j]-mean)*(fb[j]-mean)
	}
	variance /= 2*n - 1
	k := len(fab)
	first = make([]float64, k)
	total = make([]float64, k)
	for i := 0; i < k; i++ {
		var s1, st float64
		for _, j := range idx {
			d := fab[i][j] - fa[j]
			s1 += (fb[j] - mean) * d
			st += d * d
		}
		first[i] = s1 / n / variance
		total[i] = st / (2 * n) / variance
	}
	return first, total, mean, variance
}

func sdOfSample(v []float64) float64 {
	var m, s float64
	for _, x := range v {
		m += x
	}
	m /= float64(len(v))
	for _, x := range v {
		s += (x - m) * (x - m)
	}
	return math.Sqrt(s / float64(len(v)-1))
}
