package tradeoff

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// unionByInclusionExclusion returns the volume of the union of the boxes
// [y, ref] by inclusion–exclusion over every subset: a method independent
// of the slicing one, exact and affordable for a few points.
func unionByInclusionExclusion(ys [][]float64, ref []float64) float64 {
	n, m := len(ys), len(ref)
	total := 0.0
	for mask := 1; mask < 1<<n; mask++ {
		corner := make([]float64, m)
		for j := range corner {
			corner[j] = math.Inf(-1)
		}
		bits := 0
		for i := range n {
			if mask&(1<<i) != 0 {
				bits++
				for j := range m {
					corner[j] = math.Max(corner[j], ys[i][j])
				}
			}
		}
		v := 1.0
		for j := range m {
			v *= math.Max(ref[j]-corner[j], 0)
		}
		if bits%2 == 1 {
			total += v
		} else {
			total -= v
		}
	}
	return total
}

// Ensure that the hypervolume of random point sets in two to four
// objectives equals the union of their boxes computed by
// inclusion–exclusion, to rounding.
func TestHypervolumeMatchesInclusionExclusion(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for _, m := range []int{2, 3, 4} {
		for trial := range 40 {
			n := 1 + rng.IntN(9)
			ys := make([][]float64, n)
			for i := range ys {
				ys[i] = make([]float64, m)
				for j := range ys[i] {
					// Coarse values make ties, and a few points lie beyond
					// the reference point.
					ys[i][j] = math.Round(rng.Float64()*12) / 10
				}
			}
			ref := slices.Repeat([]float64{1}, m)
			var inside [][]float64
			for _, y := range ys {
				if slices.IndexFunc(y, func(v float64) bool { return v >= 1 }) < 0 {
					inside = append(inside, y)
				}
			}
			want := unionByInclusionExclusion(inside, ref)
			if got := Hypervolume(ys, ref); math.Abs(got-want) > 1e-12 {
				t.Fatalf("m = %d trial %d: hypervolume %.15g, inclusion-exclusion %.15g (%v)", m, trial, got, want, ys)
			}
			// The improvement of one more point is the difference.
			y := make([]float64, m)
			for j := range y {
				y[j] = rng.Float64()
			}
			wantI := unionByInclusionExclusion(append(slices.Clone(inside), y), ref) - want
			if got := Improvement(ys, y, ref); math.Abs(got-wantI) > 1e-12 {
				t.Fatalf("m = %d trial %d: improvement %.15g, inclusion-exclusion %.15g", m, trial, got, wantI)
			}
		}
	}
}

// Ensure that the hypervolume of the Pareto front of ZDT1 (Zitzler, Deb
// and Thiele 2000: f2 = 1 − √f1 on 0 ≤ f1 ≤ 1) within the reference point
// (1, 1) approaches the integral ∫₀¹ √f1 df1 = 2/3 from below as the front
// is sampled more finely: the staircase of n points misses at most 1/n.
func TestHypervolumeZDT1(t *testing.T) {
	for _, n := range []int{10, 100, 1000} {
		var ys [][]float64
		for i := range n + 1 {
			f1 := float64(i) / float64(n)
			ys = append(ys, []float64{f1, 1 - math.Sqrt(f1)})
		}
		hv := Hypervolume(ys, []float64{1, 1})
		if hv > 2.0/3 || 2.0/3-hv > 1/float64(n) {
			t.Errorf("n = %d: hypervolume %.6f, want within %.4f below 2/3", n, hv, 1/float64(n))
		}
	}
}

// Ensure that Front and Layers sort a small set as worked by hand.
func TestFrontAndLayers(t *testing.T) {
	ys := [][]float64{{1, 5}, {2, 2}, {5, 1}, {3, 3}, {2, 2}, {6, 6}, {4, 4}}
	if got := Front(ys); !slices.Equal(got, []int{0, 1, 2, 4}) {
		t.Errorf("front %v, want [0 1 2 4] (equal points both stay)", got)
	}
	if got := Layers(ys); !slices.Equal(got, []int{1, 1, 1, 2, 1, 4, 3}) {
		t.Errorf("layers %v", got)
	}
}

// Ensure that the chance of a normal value within limits is the normal
// distribution's: ±1.959964 standard deviations hold 95 % (standard
// normal table), one side of the mean half.
func TestFeasibility(t *testing.T) {
	for _, c := range []struct{ mean, sd, lo, hi, want float64 }{
		{0, 1, -1.959964, 1.959964, 0.95},
		{2, 0.5, math.Inf(-1), 2, 0.5},
		{1, 2, 1 + 2*1.644854, math.Inf(1), 0.05},
		{0.3, 0, 0, 1, 1},
		{1.3, 0, 0, 1, 0},
	} {
		if got := Feasibility(c.mean, c.sd, c.lo, c.hi); math.Abs(got-c.want) > 1e-6 {
			t.Errorf("%+v: %.7f", c, got)
		}
	}
}

// Ensure that the chances of being on the front are right where they are
// known exactly: of two points with the same independent distribution in
// two objectives, one dominates the other with probability 1/4 + 1/4, so
// each is on the front with probability 3/4; a point far behind another
// is never on it; a limit its mean sits on holds half the time.
func TestChances(t *testing.T) {
	p := Problem{Objectives: []int{0, 1}, Limits: []Limit{{Col: 2, Lo: math.Inf(-1), Hi: 0}}}
	mean := [][]float64{{0, 0, -10}, {0, 0, -10}, {10, 10, -10}, {-1, 5, 0}}
	sd := [][]float64{{1, 1, 0}, {1, 1, 0}, {0.1, 0.1, 0}, {0.01, 0.01, 1}}
	const draws = 20000
	on, feas := p.Chances(mean, sd, draws, 7)
	// The binomial standard error at p = 3/4 is 0.0031; four of them.
	for i := range 2 {
		if math.Abs(on[i]-0.75) > 4*math.Sqrt(0.75*0.25/draws) || feas[i] != 1 {
			t.Errorf("point %d: on the front %.4f (want 0.75), feasible %.4f", i, on[i], feas[i])
		}
	}
	if on[2] != 0 {
		t.Errorf("a dominated point is on the front %.4f of the time", on[2])
	}
	if math.Abs(feas[3]-0.5) > 4*math.Sqrt(0.25/draws) || on[3] > feas[3] {
		t.Errorf("point 3: feasible %.4f (want 0.5), on the front %.4f", feas[3], on[3])
	}
}

// Ensure that the Monte Carlo expected hypervolume improvement agrees
// with the same expectation by quadrature on a fine grid (±6 standard
// deviations, 400 × 400 cells), for a prediction near a two-point front,
// and tends to the plain improvement when the prediction is certain.
func TestEHVIAgainstQuadrature(t *testing.T) {
	front := [][]float64{{0.2, 0.7}, {0.6, 0.3}}
	ref := []float64{1, 1}
	mu, sd := []float64{0.35, 0.4}, []float64{0.1, 0.15}
	const cells = 400
	want := 0.0
	h0, h1 := 12*sd[0]/cells, 12*sd[1]/cells
	for a := range cells {
		y0 := mu[0] - 6*sd[0] + (float64(a)+0.5)*h0
		w0 := math.Exp(-0.5*math.Pow((y0-mu[0])/sd[0], 2)) / (sd[0] * math.Sqrt(2*math.Pi)) * h0
		for b := range cells {
			y1 := mu[1] - 6*sd[1] + (float64(b)+0.5)*h1
			w1 := math.Exp(-0.5*math.Pow((y1-mu[1])/sd[1], 2)) / (sd[1] * math.Sqrt(2*math.Pi)) * h1
			want += w0 * w1 * Improvement(front, []float64{y0, y1}, ref)
		}
	}
	e := NewEHVI(front, ref, 20000, 1)
	got := e.At(mu, sd)
	t.Logf("EHVI %.6f by Monte Carlo, %.6f by quadrature", got, want)
	if math.Abs(got-want) > 0.01*want {
		t.Errorf("EHVI %.6f by Monte Carlo, %.6f by quadrature", got, want)
	}
	if got, want := e.At(mu, []float64{0, 0}), Improvement(front, mu, ref); math.Abs(got-want) > 1e-12 {
		t.Errorf("certain prediction: EHVI %.6f, improvement %.6f", got, want)
	}
}

// Ensure that the front found in lexicographic order is the front by the
// definition (no other point dominates), on random sets with ties, in two
// to four objectives.
func TestFrontMatchesDefinition(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 9))
	for trial := range 200 {
		m := 2 + trial%3
		ys := make([][]float64, 1+rng.IntN(60))
		for i := range ys {
			ys[i] = make([]float64, m)
			for j := range ys[i] {
				ys[i][j] = float64(rng.IntN(8))
			}
		}
		var want []int
		for i := range ys {
			on := true
			for k := range ys {
				if k != i && Dominates(ys[k], ys[i]) {
					on = false
				}
			}
			if on {
				want = append(want, i)
			}
		}
		if got := Front(ys); !slices.Equal(got, want) {
			t.Fatalf("trial %d: front %v, by definition %v", trial, got, want)
		}
	}
}

// Ensure that a negligible gain does not keep a point on the front: with
// boxes of 0.01, (0.304, 10) gains 0.001 on (0.305, 1) in the first
// objective, within their common box, and loses 9 in the second, so it
// drops out; of (0.501, 0.501) and (0.502, 0.5015), in one box, the one
// nearer the box's corner stands for both; and a front of 200 points
// along a smooth curve, spaced finer than the boxes, keeps one point per
// box, never none.
func TestFrontWithin(t *testing.T) {
	ys := [][]float64{{0.305, 1}, {0.304, 10}, {0.5015, 0.5015}, {0.502, 0.5012}, {0.9, 0.1}}
	if got := Front(ys); !slices.Equal(got, []int{0, 1, 2, 3, 4}) {
		t.Errorf("front %v", got)
	}
	if got := FrontWithin(ys, []float64{0.01, 0.01}); !slices.Equal(got, []int{0, 2, 4}) {
		t.Errorf("front within 0.01: %v, want [0 2 4]", got)
	}
	if got := FrontWithin(ys, []float64{0, 0}); !slices.Equal(got, []int{0, 1, 2, 3, 4}) {
		t.Errorf("front within 0: %v, want all", got)
	}
	var curve [][]float64
	for i := range 200 {
		f1 := float64(i) / 199
		curve = append(curve, []float64{f1, 1 - math.Sqrt(f1)})
	}
	got := FrontWithin(curve, []float64{0.05, 0.05})
	if len(got) < 10 || len(got) > 40 {
		t.Errorf("a smooth front in boxes of 0.05 keeps %d points, want one per box (10 to 40)", len(got))
	}
}
