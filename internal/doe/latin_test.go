package doe

import (
	"math"
	"testing"
)

// Ensure that random and optimised Latin hypercubes keep the Latin property
// (McKay, Beckman & Conover 1979): each of the n equal intervals of every
// coordinate holds exactly one point; and that cell centres sit exactly at
// (i + ½)/n.
func TestLatinHypercubeLatinProperty(t *testing.T) {
	for _, tc := range []struct{ n, k int }{{1, 3}, {2, 2}, {7, 1}, {20, 3}, {33, 5}} {
		for _, jitter := range []bool{false, true} {
			for seed := uint64(1); seed <= 3; seed++ {
				r := RandomLatinHypercube(tc.n, tc.k, seed, jitter)
				o, _ := LatinHypercube(tc.n, tc.k, LatinHypercubeOptions{Seed: seed, Jitter: jitter, OuterIterations: 5})
				for name, pts := range map[string][][]float64{"random": r, "optimised": o} {
					if len(pts) != tc.n || len(pts[0]) != tc.k {
						t.Fatalf("%s n=%d k=%d: shape %dx%d", name, tc.n, tc.k, len(pts), len(pts[0]))
					}
					if !latinOK(pts) {
						t.Errorf("%s n=%d k=%d jitter=%v seed=%d: not a Latin hypercube", name, tc.n, tc.k, jitter, seed)
					}
					if jitter {
						continue
					}
					for _, p := range pts {
						for _, x := range p {
							cell := math.Floor(x * float64(tc.n))
							if x != (cell+0.5)/float64(tc.n) {
								t.Errorf("%s: %v is not a cell centre", name, x)
							}
						}
					}
				}
			}
		}
	}
}

// Ensure that the maximin-optimised Latin hypercube spreads its points
// further than the random Latin hypercube it starts from, for the same n, k
// and seed, over ten seeds (the purpose of the optimisation, Jin, Chen &
// Sudjianto 2005; Morris & Mitchell 1995), and further than the best of
// those ten random designs.
func TestLatinHypercubeBeatsRandom(t *testing.T) {
	for _, tc := range []struct{ n, k int }{{20, 3}, {40, 4}} {
		var sumOpt, sumRnd, bestRnd, worstOpt float64
		worstOpt = math.Inf(1)
		for seed := uint64(1); seed <= 10; seed++ {
			rnd := MinDistance(RandomLatinHypercube(tc.n, tc.k, seed, false))
			pts, opt := LatinHypercube(tc.n, tc.k, LatinHypercubeOptions{Seed: seed})
			if got := MinDistance(pts); got != opt {
				t.Errorf("reported d_min %v, design has %v", opt, got)
			}
			if opt <= rnd {
				t.Errorf("n=%d k=%d seed %d: optimised d_min %.4f ≤ random %.4f", tc.n, tc.k, seed, opt, rnd)
			}
			sumOpt += opt
			sumRnd += rnd
			bestRnd = max(bestRnd, rnd)
			worstOpt = min(worstOpt, opt)
		}
		if worstOpt <= bestRnd {
			t.Errorf("n=%d k=%d: worst optimised d_min %.4f ≤ best random %.4f", tc.n, tc.k, worstOpt, bestRnd)
		}
		t.Logf("n=%d k=%d: mean d_min optimised %.4f (worst %.4f), random %.4f (best %.4f)",
			tc.n, tc.k, sumOpt/10, worstOpt, sumRnd/10, bestRnd)
	}
}

// Ensure that the search finds the true maximin Latin hypercube of small
// sizes, found here by enumerating every design (exhaustive search over
// the permutations of the columns after the first), for five seeds.
func TestLatinHypercubeExhaustive(t *testing.T) {
	for _, tc := range []struct{ n, k int }{{6, 2}, {7, 2}, {5, 3}} {
		best := exhaustiveMaximin(tc.n, tc.k)
		for seed := uint64(1); seed <= 5; seed++ {
			_, d := LatinHypercube(tc.n, tc.k, LatinHypercubeOptions{Seed: seed})
			cells := d * float64(tc.n) // distance in cells
			if math.Abs(cells*cells-float64(best)) > 1e-9 {
				t.Errorf("n=%d k=%d seed %d: d_min² = %.6g cells², optimum %d", tc.n, tc.k, seed, cells*cells, best)
			}
		}
		t.Logf("n=%d k=%d: maximin d_min² = %d cells² reached", tc.n, tc.k, best)
	}
}

// Ensure that the default search reaches the maximin optimum of
// two-dimensional Latin hypercubes of 8 to 10 points, found here by a
// complete branch-and-bound search over all n! designs (d_min² = 8, 10, 10
// cells²), for five seeds each.
func TestLatinHypercubeMaximin2D(t *testing.T) {
	for n := 8; n <= 10; n++ {
		best := maximin2D(n)
		for seed := uint64(1); seed <= 5; seed++ {
			_, d := LatinHypercube(n, 2, LatinHypercubeOptions{Seed: seed})
			cells := d * float64(n)
			if math.Abs(cells*cells-float64(best)) > 1e-9 {
				t.Errorf("n=%d seed %d: d_min² = %.6g cells², optimum %d", n, seed, cells*cells, best)
			}
		}
		t.Logf("n=%d k=2: maximin d_min² = %d cells² reached", n, best)
	}
}

// maximin2D returns the largest minimum squared cell distance over all
// n-point Latin hypercubes in two dimensions, by depth-first search over
// the second column, pruning partial designs no better than the best found.
func maximin2D(n int) int {
	perm := make([]int, n)
	used := make([]bool, n)
	best := 0
	var rec func(i, dmin int)
	rec = func(i, dmin int) {
		if i == n {
			best = dmin
			return
		}
		for v := range n {
			if used[v] {
				continue
			}
			d := dmin
			for j := range i {
				dx, dy := i-j, v-perm[j]
				d = min(d, dx*dx+dy*dy)
			}
			if d <= best {
				continue
			}
			used[v], perm[i] = true, v
			rec(i+1, d)
			used[v] = false
		}
	}
	rec(0, math.MaxInt)
	return best
}

// exhaustiveMaximin returns the largest minimum squared cell distance over
// all n-point Latin hypercubes in k dimensions.
func exhaustiveMaximin(n, k int) int {
	perms := permutations(n)
	best := 0
	idx := make([]int, k-1)
	for {
		cols := [][]int{perms[0]}
		for _, i := range idx {
			cols = append(cols, perms[i])
		}
		dmin := math.MaxInt
		for a := range n {
			for b := a + 1; b < n; b++ {
				var d int
				for _, c := range cols {
					v := c[a] - c[b]
					d += v * v
				}
				dmin = min(dmin, d)
			}
		}
		best = max(best, dmin)
		i := len(idx) - 1
		for ; i >= 0; i-- {
			idx[i]++
			if idx[i] < len(perms) {
				break
			}
			idx[i] = 0
		}
		if i < 0 {
			return best
		}
	}
}

func permutations(n int) [][]int {
	if n == 1 {
		return [][]int{{0}}
	}
	var out [][]int
	for _, p := range permutations(n - 1) {
		for pos := 0; pos <= len(p); pos++ {
			q := append(append(append([]int{}, p[:pos]...), n-1), p[pos:]...)
			out = append(out, q)
		}
	}
	return out
}

// Ensure that the O(n) update of the φ_p sum after a swap equals the sum
// recomputed from scratch (internal consistency of the ESE bookkeeping),
// within 1e-12 of the larger sum over 2000 random swaps.
func TestESEIncrementalUpdate(t *testing.T) {
	rng := newRand(3, 99)
	for _, p := range []float64{2, 50} {
		cols := randomCells(30, 4, rng)
		e := newESE(cols, p, rng)
		for range 2000 {
			c, a, b := rng.IntN(4), rng.IntN(30), rng.IntN(30)
			if a == b {
				continue
			}
			ds := e.delta(c, a, b)
			before := e.exact(e.cols)
			e.swap(c, a, b, ds)
			after := e.exact(e.cols)
			if math.Abs((after-before)-ds) > 1e-12*max(before, after) {
				t.Fatalf("p=%v: ΔS = %.17g, recomputed %.17g", p, ds, after-before)
			}
			e.s = after
		}
	}
}

// Ensure that a seed reproduces the design and different seeds differ.
func TestLatinHypercubeSeeds(t *testing.T) {
	a, _ := LatinHypercube(15, 3, LatinHypercubeOptions{Seed: 42, Jitter: true})
	b, _ := LatinHypercube(15, 3, LatinHypercubeOptions{Seed: 42, Jitter: true})
	c, _ := LatinHypercube(15, 3, LatinHypercubeOptions{Seed: 43, Jitter: true})
	if !sameRuns(a, b, 0) {
		t.Error("same seed gave different designs")
	}
	if sameRuns(a, c, 1e-12) {
		t.Error("different seeds gave the same design")
	}
}

func TestLatinHypercubePanics(t *testing.T) {
	mustPanic(t, "n", func() { LatinHypercube(0, 2, LatinHypercubeOptions{}) })
	mustPanic(t, "k", func() { RandomLatinHypercube(3, 0, 1, false) })
	mustPanic(t, "p", func() { LatinHypercube(3, 2, LatinHypercubeOptions{P: -1}) })
}

func BenchmarkLatinHypercube20x3(b *testing.B) {
	for b.Loop() {
		LatinHypercube(20, 3, LatinHypercubeOptions{Seed: 1})
	}
}

func BenchmarkLatinHypercube100x5(b *testing.B) {
	for b.Loop() {
		LatinHypercube(100, 5, LatinHypercubeOptions{Seed: 1})
	}
}
