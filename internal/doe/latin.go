package doe

import (
	"math"
	"math/rand/v2"
)

// LatinHypercubeOptions tunes LatinHypercube. The zero value gives cell
// centres, φ_50 and the default search length, with seed 0.
type LatinHypercubeOptions struct {
	// Seed makes the design reproducible: the same seed, n, k and options
	// give the same points.
	Seed uint64
	// Jitter places each point uniformly at random inside its cell,
	// ((i + U)/n with U ~ U[0,1)), instead of at the cell centre (i + ½)/n.
	// The optimisation works on the cells; jitter is applied afterwards, so
	// it can lower the minimum distance slightly.
	Jitter bool
	// P is the exponent of the Morris–Mitchell criterion φ_p. Zero means 50,
	// large enough that φ_p orders designs as the maximin criterion does
	// except for near ties (Morris & Mitchell 1995 use p up to 100).
	P float64
	// OuterIterations is the number of outer iterations of the enhanced
	// stochastic evolutionary search. One costs about J·M·2n updates of a
	// distance term (J, M as in LatinHypercube). Zero means a budget of
	// about 2·10^7 updates, at least 50 and at most 2000 outer iterations:
	// small designs, cheap per iteration, get many (they need them to
	// reach the maximin optimum reliably), large ones at least 50.
	OuterIterations int
}

// RandomLatinHypercube returns a random Latin hypercube sample of n points
// in [0,1]^k (McKay, Beckman & Conover 1979, "A comparison of three methods
// for selecting values of input variables in the analysis of output from a
// computer code", Technometrics 21): each coordinate takes an independent
// random permutation π of the n cells and sits at (π(i) + ½)/n, or at
// (π(i) + U)/n with U ~ U[0,1) if jitter is set. Each of the n equal
// intervals of every coordinate holds exactly one point. It is the
// unoptimised baseline of LatinHypercube.
//
// It panics if n < 1 or k < 1.
func RandomLatinHypercube(n, k int, seed uint64, jitter bool) [][]float64 {
	checkSize(n, k)
	rng := newRand(seed, streamLatin)
	cols := randomCells(n, k, rng)
	return cellsToPoints(cols, n, jitter, rng)
}

// LatinHypercube returns a Latin hypercube design of n points in [0,1]^k
// optimised for space filling, and its minimum pairwise distance d_min (see
// MinDistance).
//
// It starts from a random Latin hypercube and improves it with the enhanced
// stochastic evolutionary (ESE) algorithm of Jin, Chen & Sudjianto (2005),
// "An efficient algorithm for constructing optimal design of computer
// experiments", J. Statist. Plann. Inference 134, minimising the
// Morris–Mitchell criterion φ_p (see PhiP), which for large p maximises the
// minimum distance. A move swaps two entries of one column, so every
// intermediate design stays a Latin hypercube. Each inner iteration tries
// J = min(n_e/5, 50) distinct swaps in column (i mod k), n_e = n(n−1)/2, and
// keeps the best; it is accepted if φ_p(new) − φ_p(old) ≤ T·U, U ~ U[0,1).
// Each outer iteration runs M = min(2·n_e·k/J, 100) inner iterations and
// then adapts the threshold T (initially 0.005·φ_p of the start design):
// while the best design improves, T shrinks by 0.8 when more than 10 % of
// trials were accepted but fewer improved the best, and grows by 1/0.8 when
// fewer than 10 % were accepted; otherwise T grows by 1/0.7 until more than
// 80 % are accepted, then shrinks by 0.9 until fewer than 10 % are. The
// change in φ_p of a swap is computed in O(n) from the stored pairwise
// distances. The best design seen is returned.
//
// The points sit at cell centres (i + ½)/n unless opts.Jitter is set; each
// of the n equal intervals of every coordinate holds exactly one point.
//
// Cost. The search keeps the n×n matrices of squared distances and terms
// (16·n² bytes: 64 MB for n = 2000) and, with the default OuterIterations,
// at least 50 outer iterations of about 10^4·n term updates each, so its
// time also grows as n² (about 45 s for n = 2000 on one core). Callers
// bound n; a study's recipe allows at most 2000 points.
//
// It panics if n < 1, k < 1, opts.P < 0 or opts.OuterIterations < 0.
func LatinHypercube(n, k int, opts LatinHypercubeOptions) (pts [][]float64, minDist float64) {
	checkSize(n, k)
	p := opts.P
	if p == 0 {
		p = 50
	}
	outer := opts.OuterIterations
	if p < 0 || math.IsNaN(p) || outer < 0 {
		panic("doe: Latin hypercube options out of range")
	}
	rng := newRand(opts.Seed, streamLatin)
	cols := randomCells(n, k, rng)
	if n > 2 && k > 1 {
		// With one factor every Latin hypercube is the same set of cells,
		// and with two points every pair of cells is equally far apart.
		e := newESE(cols, p, rng)
		if outer == 0 {
			outer = min(max(eseBudget/(e.pairsJ*e.innerM*2*n), 50), 2000)
		}
		e.run(outer)
		cols = e.best
	}
	pts = cellsToPoints(cols, n, opts.Jitter, rng)
	return pts, MinDistance(pts)
}

// checkSize panics on a design size no design can have.
func checkSize(n, k int) {
	if n < 1 {
		panic("doe: need at least one point")
	}
	if k < 1 {
		panic("doe: need at least one factor")
	}
}

// randomCells returns k independent random permutations of 0..n-1.
func randomCells(n, k int, rng *rand.Rand) [][]int {
	cols := make([][]int, k)
	for c := range cols {
		cols[c] = rng.Perm(n)
	}
	return cols
}

// cellsToPoints turns column-wise cell indices into rows of unit-cube
// coordinates, at cell centres or jittered within the cells.
func cellsToPoints(cols [][]int, n int, jitter bool, rng *rand.Rand) [][]float64 {
	pts := make([][]float64, n)
	flat := make([]float64, n*len(cols))
	for i := range pts {
		pts[i] = flat[i*len(cols) : (i+1)*len(cols) : (i+1)*len(cols)]
	}
	for i := range pts {
		for c := range cols {
			off := 0.5
			if jitter {
				off = rng.Float64()
			}
			pts[i][c] = (float64(cols[c][i]) + off) / float64(n)
		}
	}
	return pts
}

// ese holds the state of the enhanced stochastic evolutionary search on the
// integer cell grid. Distances are squared and in cells, so every pairwise
// distance is an integer D ≥ k (two rows differ by at least one cell in
// every column); the φ_p terms are stored as t = (D/k)^(−p/2) ≤ 1, which
// cannot overflow. The search minimises S = Σ_{i<j} t_ij, a monotone
// function of φ_p = k^(−1/2) S^(1/p) (in cell units).
type ese struct {
	n, k   int
	p      float64
	cols   [][]int   // current design, cols[c][i] = cell of row i in column c
	d      []int     // squared cell distances, n×n
	t      []float64 // φ_p terms, n×n
	s      float64   // Σ_{i<j} t_ij of the current design
	best   [][]int
	bestS  float64
	table  []float64 // t as a function of D, when small enough to tabulate
	rng    *rand.Rand
	pairsJ int // J, candidate swaps per inner iteration
	innerM int // M, inner iterations per outer iteration
}

// eseBudget is the default work of the search, in distance-term updates.
const eseBudget = 20_000_000

// maxTable bounds the length of the tabulated t(D).
const maxTable = 1 << 20

func newESE(cols [][]int, p float64, rng *rand.Rand) *ese {
	n, k := len(cols[0]), len(cols)
	e := &ese{n: n, k: k, p: p, cols: cols, rng: rng}
	if dmax := k * (n - 1) * (n - 1); dmax < maxTable {
		e.table = make([]float64, dmax+1)
		for d := k; d <= dmax; d++ {
			e.table[d] = math.Pow(float64(d)/float64(k), -p/2)
		}
	}
	e.d = make([]int, n*n)
	e.t = make([]float64, n*n)
	for i := range n {
		for j := i + 1; j < n; j++ {
			var s int
			for c := range k {
				v := cols[c][i] - cols[c][j]
				s += v * v
			}
			e.d[i*n+j], e.d[j*n+i] = s, s
			tv := e.term(s)
			e.t[i*n+j], e.t[j*n+i] = tv, tv
		}
	}
	e.s = e.sum()
	e.best = copyCols(cols)
	e.bestS = e.s
	ne := n * (n - 1) / 2
	e.pairsJ = max(1, min(ne/5, 50))
	e.innerM = max(1, min(2*ne*k/e.pairsJ, 100))
	return e
}

func (e *ese) term(d int) float64 {
	if e.table != nil {
		return e.table[d]
	}
	return math.Pow(float64(d)/float64(e.k), -e.p/2)
}

// sum recomputes S exactly, clearing the rounding of the O(n) updates.
func (e *ese) sum() float64 {
	var s float64
	for i := range e.n {
		for j := i + 1; j < e.n; j++ {
			s += e.t[i*e.n+j]
		}
	}
	return s
}

// exact returns S of the design cols, computed from scratch.
func (e *ese) exact(cols [][]int) float64 {
	var s float64
	for i := range e.n {
		for j := i + 1; j < e.n; j++ {
			var d int
			for c := range e.k {
				v := cols[c][i] - cols[c][j]
				d += v * v
			}
			s += e.term(d)
		}
	}
	return s
}

// delta returns the change of S if rows a and b swap their cells in
// column c. Only distances from a and b to the other rows change; D_ab
// does not.
func (e *ese) delta(c, a, b int) float64 {
	col := e.cols[c]
	va, vb := col[a], col[b]
	n := e.n
	var ds float64
	for j := range n {
		if j == a || j == b {
			continue
		}
		xa, xb := va-col[j], vb-col[j]
		diff := xb*xb - xa*xa
		ds += e.term(e.d[a*n+j]+diff) - e.t[a*n+j]
		ds += e.term(e.d[b*n+j]-diff) - e.t[b*n+j]
	}
	return ds
}

// swap applies the swap of rows a and b in column c and updates D and t.
func (e *ese) swap(c, a, b int, ds float64) {
	col := e.cols[c]
	va, vb := col[a], col[b]
	n := e.n
	for j := range n {
		if j == a || j == b {
			continue
		}
		xa, xb := va-col[j], vb-col[j]
		diff := xb*xb - xa*xa
		da, db := e.d[a*n+j]+diff, e.d[b*n+j]-diff
		e.d[a*n+j], e.d[j*n+a] = da, da
		e.d[b*n+j], e.d[j*n+b] = db, db
		ta, tb := e.term(da), e.term(db)
		e.t[a*n+j], e.t[j*n+a] = ta, ta
		e.t[b*n+j], e.t[j*n+b] = tb, tb
	}
	col[a], col[b] = vb, va
	e.s += ds
}

// phi maps S to S^(1/p), proportional to φ_p; the threshold test of the
// ESE algorithm works on this scale.
func (e *ese) phi(s float64) float64 {
	return math.Pow(s, 1/e.p)
}

func (e *ese) run(outer int) {
	n := e.n
	threshold := 0.005 * e.phi(e.s)
	warming := false
	type pair struct{ a, b int }
	tried := make([]pair, 0, e.pairsJ)
	for range outer {
		oldBest := e.bestS
		nAcc, nImp := 0, 0
		for i := range e.innerM {
			c := i % e.k
			// The best of J distinct random swaps in column c.
			tried = tried[:0]
			bestDS, bestA, bestB := math.Inf(1), -1, -1
			for len(tried) < e.pairsJ {
				a, b := e.rng.IntN(n), e.rng.IntN(n)
				if a == b {
					continue
				}
				if a > b {
					a, b = b, a
				}
				dup := false
				for _, q := range tried {
					if q.a == a && q.b == b {
						dup = true
						break
					}
				}
				if dup {
					// J ≤ n_e, so a fresh pair is always left to draw.
					continue
				}
				tried = append(tried, pair{a, b})
				if ds := e.delta(c, a, b); ds < bestDS {
					bestDS, bestA, bestB = ds, a, b
				}
			}
			// Rounding of the O(n) update can leave a hair below zero when
			// the swap removes the dominant terms; S is positive.
			sTry := max(e.s+bestDS, 0)
			if e.phi(sTry)-e.phi(e.s) <= threshold*e.rng.Float64() {
				e.swap(c, bestA, bestB, bestDS)
				nAcc++
				if e.s < e.bestS {
					e.bestS = e.s
					copyColsTo(e.best, e.cols)
					nImp++
				}
			}
		}
		// Clear the rounding of the O(n) updates once per outer iteration.
		e.s = e.sum()
		e.bestS = e.exact(e.best)
		if e.s < e.bestS {
			e.bestS = e.s
			copyColsTo(e.best, e.cols)
		}
		acc := float64(nAcc) / float64(e.innerM)
		if e.bestS < oldBest*(1-1e-12) {
			// Improving: aim for an acceptance that still improves the best.
			switch {
			case acc > 0.1 && nImp < nAcc:
				threshold *= 0.8
			case acc > 0.1 && nImp == nAcc:
			default:
				threshold /= 0.8
			}
		} else {
			// Exploring: warm fast until most moves pass, then cool slowly
			// until few do.
			if acc < 0.1 {
				warming = true
			} else if acc > 0.8 {
				warming = false
			}
			if warming {
				threshold /= 0.7
			} else {
				threshold *= 0.9
			}
		}
	}
}

func copyCols(src [][]int) [][]int {
	dst := make([][]int, len(src))
	for c := range src {
		dst[c] = append([]int(nil), src[c]...)
	}
	return dst
}

func copyColsTo(dst, src [][]int) {
	for c := range src {
		copy(dst[c], src[c])
	}
}
