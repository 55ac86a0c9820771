package surface

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"
)

// funcModel wraps an exact function as a Model with zero uncertainty, to
// test the searches against analytic optima.
type funcModel struct {
	f    func([]float64) float64
	b    Bounds
	runs [][]float64
}

func (m funcModel) Name() string                           { return "exact function" }
func (m funcModel) Bounds() Bounds                         { return m.b }
func (m funcModel) Inputs() [][]float64                    { return m.runs }
func (m funcModel) Predict(x []float64) (float64, float64) { return m.f(x), 0 }
func (m funcModel) Mean(x []float64) float64               { return m.f(x) }
func (m funcModel) Critical(level float64) float64         { return distuv.UnitNormal.Quantile(0.5 + level/2) }
func (m funcModel) LOO() (float64, []float64)              { return 0, nil }

// gridRuns returns an l×l grid of runs over a 2-D box.
func gridRuns(b Bounds, l int) [][]float64 {
	var runs [][]float64
	for i := 0; i < l; i++ {
		for j := 0; j < l; j++ {
			runs = append(runs, b.fromUnit([]float64{float64(i) / float64(l-1), float64(j) / float64(l-1)}))
		}
	}
	return runs
}

// Branin's three global minimisers and minimum value, as commonly tabulated
// (Dixon & Szegö 1978): f = 0.397887 at (−π, 12.275), (π, 2.275) and
// (9.42478, 2.475).
var braninMinima = [][]float64{{-math.Pi, 12.275}, {math.Pi, 2.275}, {9.42478, 2.475}}

const braninMin = 0.397887

func closestMinimum(x []float64) (int, float64) {
	bi, bd := -1, math.Inf(1)
	for i, m := range braninMinima {
		if d := math.Sqrt(dist2(x, m)); d < bd {
			bi, bd = i, d
		}
	}
	return bi, bd
}

// Ensure that analytic optima are found: a quadratic bowl inside the box,
// the same bowl cut by a bound, and its maximisation counterpart.
func TestOptimumBowl(t *testing.T) {
	b := Bounds{Lo: []float64{-1, -2}, Hi: []float64{1, 2}}
	bowl := func(c0 float64) func([]float64) float64 {
		return func(x []float64) float64 {
			u, v := x[0]-c0, x[1]+1
			return u*u + 2*v*v + 0.5*u*v + 3
		}
	}
	runs := gridRuns(b, 5)
	// Minimiser (0.3, −1), value 3 (by construction; the Hessian is
	// positive definite). Nelder-Mead to 1e-12 in value: position to 1e-5.
	o, err := FindOptimum(funcModel{bowl(0.3), b, runs}, OptimumOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(o.X[0]-0.3) > 1e-5 || math.Abs(o.X[1]+1) > 1e-5 || math.Abs(o.Mean-3) > 1e-10 || len(o.Warnings) != 0 {
		t.Errorf("bowl: %+v, want (0.3, -1) value 3 with no warning", o)
	}
	// Centre at x0 = 1.5 outside the box: on the bound x0 = 1 the best x1
	// solves 4v + 0.5u = 0 with u = −0.5, so v = 1/16 and x1 = −15/16.
	o, err = FindOptimum(funcModel{bowl(1.5), b, runs}, OptimumOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(o.X[0]-1) > 1e-9 || math.Abs(o.X[1]+15.0/16) > 1e-5 || len(o.AtBound) != 1 || o.AtBound[0] != 0 || len(o.Warnings) != 1 {
		t.Errorf("cut bowl: X %v AtBound %v warnings %q; want (1, -0.9375) at the upper bound of x1", o.X, o.AtBound, o.Warnings)
	}
	neg := func(x []float64) float64 { return -bowl(0.3)(x) }
	o, err = FindOptimum(funcModel{neg, b, runs}, OptimumOptions{Maximize: true})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(o.X[0]-0.3) > 1e-5 || math.Abs(o.X[1]+1) > 1e-5 || math.Abs(o.Mean+3) > 1e-10 {
		t.Errorf("maximise: X %v mean %g, want (0.3, -1) value -3", o.X, o.Mean)
	}
}

// Ensure that Branin's global minimum is found, and that a constraint
// selects the minimiser in the feasible region.
func TestOptimumBranin(t *testing.T) {
	m := funcModel{branin, braninBounds, gridRuns(braninBounds, 6)}
	for _, c := range []struct {
		name     string
		feasible func([]float64) bool
		want     int // index in braninMinima, -1 for any
	}{
		{"free", nil, -1},
		{"x1 < 0", func(x []float64) bool { return x[0] < 0 }, 0},
		{"x1 > 6", func(x []float64) bool { return x[0] > 6 }, 2},
		{"x1 in (0, 6), x2 < 10", func(x []float64) bool { return x[0] > 0 && x[0] < 6 && x[1] < 10 }, 1},
	} {
		o, err := FindOptimum(m, OptimumOptions{Feasible: c.feasible, Seed: 3})
		if err != nil {
			t.Fatal(err)
		}
		i, d := closestMinimum(o.X)
		// Branin minimum 0.397887 (printed to 6 decimals): abs 1e-6. The
		// minimisers are tabulated to 5-6 digits: distance 1e-4.
		if math.Abs(o.Mean-braninMin) > 1e-6 || d > 1e-4 || (c.want >= 0 && i != c.want) {
			t.Errorf("%s: X %v f %.7g, nearest tabulated minimiser %v at %.2g", c.name, o.X, o.Mean, braninMinima[i], d)
		}
		if c.feasible != nil && !c.feasible(o.X) {
			t.Errorf("%s: returned an infeasible point %v", c.name, o.X)
		}
	}
	if _, err := FindOptimum(m, OptimumOptions{Feasible: func([]float64) bool { return false }}); err == nil {
		t.Error("no feasible point: want an error")
	}
}

// Ensure that the optimum of a fitted quadratic equals the stationary point
// of its coefficients, x* = −½B⁻¹b, with the t-based interval.
func TestOptimumFittedQuadratic(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 14))
	b := Bounds{Lo: []float64{10, 0.2}, Hi: []float64{30, 0.8}}
	d := Data{Bounds: b}
	for _, u := range latin(rng, 25, 2) {
		x := b.fromUnit(u)
		p, q := (x[0]-22)/10, (x[1]-0.45)/0.3
		d.X = append(d.X, x)
		d.Y = append(d.Y, 0.3+0.05*(p*p+q*q+0.3*p*q)+0.002*rng.NormFloat64())
	}
	m, err := FitPoly(d, QuadraticTerms(2))
	if err != nil {
		t.Fatal(err)
	}
	// Terms: 1, x1, x2, x1*x2, x1^2, x2^2.
	c := m.Coef
	B := mat.NewDense(2, 2, []float64{2 * c[4], c[3], c[3], 2 * c[5]})
	var xs mat.VecDense
	if err := xs.SolveVec(B, mat.NewVecDense(2, []float64{-c[1], -c[2]})); err != nil {
		t.Fatal(err)
	}
	o, err := FindOptimum(m, OptimumOptions{})
	if err != nil {
		t.Fatal(err)
	}
	// Stationary point from the coefficients: rel 1e-5 of each range.
	if math.Abs(o.X[0]-xs.AtVec(0)) > 1e-5*20 || math.Abs(o.X[1]-xs.AtVec(1)) > 1e-5*0.6 {
		t.Errorf("optimum %v, stationary point %v", o.X, []float64{xs.AtVec(0), xs.AtVec(1)})
	}
	tq := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(m.DoF)}.Quantile(0.975)
	if math.Abs(o.HalfWidth-tq*o.SD) > 1e-12*o.HalfWidth || o.SD <= 0 {
		t.Errorf("half-width %g, want t(0.975, %d)·SD = %g", o.HalfWidth, m.DoF, tq*o.SD)
	}
}

// Ensure that an optimum in a gap of the design is flagged, with its
// distance in design spacings (0.5 / (0.4/3) = 3.75, printed 3.7 as the
// computed distance falls a hair short of 0.5).
func TestOptimumFarFromRuns(t *testing.T) {
	b := Bounds{Lo: []float64{0, 0}, Hi: []float64{1, 1}}
	var runs [][]float64
	for _, r := range gridRuns(Bounds{Lo: []float64{0, 0}, Hi: []float64{0.4, 0.4}}, 4) {
		runs = append(runs, r)
	}
	f := func(x []float64) float64 { return dist2(x, []float64{0.8, 0.7}) }
	o, err := FindOptimum(funcModel{f, b, runs}, OptimumOptions{})
	if err != nil {
		t.Fatal(err)
	}
	// Nearest run (0.4, 0.4) is 0.5 away; the grid spacing is 0.4/3.
	if math.Abs(o.NearestRun-0.5) > 1e-5 || math.Abs(o.Spacing-0.4/3) > 1e-12 || len(o.Warnings) != 1 || !strings.Contains(o.Warnings[0], "3.7 design spacings from the nearest run") {
		t.Errorf("nearest %g spacing %g warnings %q", o.NearestRun, o.Spacing, o.Warnings)
	}
}

// Ensure that the optimum of a kriging surrogate of Branin (40 runs) lies
// where the true function is near its global minimum, and that its 95 %
// interval covers the true value there. Measured over seeds 1-3: true value
// at the reported optimum 0.42-2.2, all three intervals cover it.
func TestOptimumKrigingBranin(t *testing.T) {
	for seed := uint64(1); seed <= 3; seed++ {
		d := sample(seed, 40, braninBounds, branin)
		m, err := FitKriging(d, KrigingOptions{Seed: 1})
		if err != nil {
			t.Fatal(err)
		}
		o, err := FindOptimum(m, OptimumOptions{Seed: 3})
		if err != nil {
			t.Fatal(err)
		}
		truth := branin(o.X)
		// Within 1 % of Branin's range over the box (f(−5, 0) ≈ 308.1) of the
		// tabulated minimum 0.397887.
		if truth-braninMin > 3.08 || math.Abs(truth-o.Mean) > o.HalfWidth {
			t.Errorf("seed %d: optimum %v predicted %.3g ± %.3g, true value %.4g", seed, o.X, o.Mean, o.HalfWidth, truth)
		}
	}
}
