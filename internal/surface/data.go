package surface

import (
	"errors"
	"fmt"
	"math"
	"sort"
)

// Errors returned by the fitting and analysis functions. They are wrapped
// with details; test for them with errors.Is.
var (
	// ErrData reports inconsistent or non-finite input data.
	ErrData = errors.New("surface: invalid data")
	// ErrTooFewRuns reports a model with at least as many unknowns as runs.
	ErrTooFewRuns = errors.New("surface: too few runs for the model")
	// ErrRankDeficient reports terms that the runs cannot tell apart.
	ErrRankDeficient = errors.New("surface: terms are linearly dependent on these runs")
	// ErrBadTerm reports a term string that cannot be parsed.
	ErrBadTerm = errors.New("surface: bad term")
	// ErrNoFeasible reports that no sampled point satisfies the constraint.
	ErrNoFeasible = errors.New("surface: no feasible point found")
	// ErrFit reports a numerical failure while fitting.
	ErrFit = errors.New("surface: fit failed")
)

// Bounds is the box of the parameters' ranges, in natural units:
// parameter j varies over [Lo[j], Hi[j]].
type Bounds struct {
	Lo, Hi []float64
}

// Dim returns the number of parameters.
func (b Bounds) Dim() int { return len(b.Lo) }

func (b Bounds) check() error {
	if len(b.Lo) == 0 || len(b.Lo) != len(b.Hi) {
		return fmt.Errorf("%w: bounds need equal, non-zero numbers of lower and upper values (got %d and %d)", ErrData, len(b.Lo), len(b.Hi))
	}
	for j := range b.Lo {
		if !isFinite(b.Lo[j]) || !isFinite(b.Hi[j]) || !(b.Lo[j] < b.Hi[j]) {
			return fmt.Errorf("%w: bounds of parameter %d are [%g, %g]; need finite lo < hi", ErrData, j+1, b.Lo[j], b.Hi[j])
		}
	}
	return nil
}

// toUnit maps a point in natural units to the unit cube.
func (b Bounds) toUnit(x []float64) []float64 {
	u := make([]float64, len(x))
	for j := range x {
		u[j] = (x[j] - b.Lo[j]) / (b.Hi[j] - b.Lo[j])
	}
	return u
}

// fromUnit maps a point of the unit cube to natural units.
func (b Bounds) fromUnit(u []float64) []float64 {
	x := make([]float64, len(u))
	for j := range u {
		x[j] = b.Lo[j] + u[j]*(b.Hi[j]-b.Lo[j])
	}
	return x
}

// Data holds the runs a surface is fitted through.
type Data struct {
	// X holds one row per run: the parameters' values in natural units.
	X [][]float64
	// Y holds the response of each run (for example a time-averaged drag
	// coefficient).
	Y []float64
	// SE optionally holds the standard error of each Y, in Y's units. Nil
	// means unknown. When given, every value must be finite and positive.
	SE []float64
	// Names optionally names the parameters (used by ParseTerms and in
	// messages); the default is x1, x2, ...
	Names []string
	// Bounds is the box the runs were planned in. Every run must lie in it
	// (a relative slack of 1e-9 of the range is allowed).
	Bounds Bounds
}

// clone returns a deep copy of the runs, so that a fitted model does not
// change when the caller reuses its slices.
func (d Data) clone() Data {
	c := d
	c.X = make([][]float64, len(d.X))
	for i, row := range d.X {
		c.X[i] = append([]float64(nil), row...)
	}
	c.Y = append([]float64(nil), d.Y...)
	if d.SE != nil {
		c.SE = append([]float64(nil), d.SE...)
	}
	c.Names = append([]string(nil), d.Names...)
	c.Bounds = Bounds{Lo: append([]float64(nil), d.Bounds.Lo...), Hi: append([]float64(nil), d.Bounds.Hi...)}
	return c
}

// names returns the parameter names, defaulting to x1..xk.
func (d Data) names() []string {
	if len(d.Names) == d.Bounds.Dim() {
		return d.Names
	}
	return defaultNames(d.Bounds.Dim())
}

func defaultNames(k int) []string {
	s := make([]string, k)
	for j := range s {
		s[j] = fmt.Sprintf("x%d", j+1)
	}
	return s
}

// check validates the data and returns n and k.
func (d Data) check() (n, k int, err error) {
	if err := d.Bounds.check(); err != nil {
		return 0, 0, err
	}
	k = d.Bounds.Dim()
	n = len(d.X)
	if n == 0 {
		return 0, 0, fmt.Errorf("%w: no runs", ErrData)
	}
	if len(d.Y) != n {
		return 0, 0, fmt.Errorf("%w: %d runs but %d responses", ErrData, n, len(d.Y))
	}
	if d.SE != nil && len(d.SE) != n {
		return 0, 0, fmt.Errorf("%w: %d runs but %d standard errors", ErrData, n, len(d.SE))
	}
	if d.Names != nil && len(d.Names) != k {
		return 0, 0, fmt.Errorf("%w: %d parameter names for %d parameters", ErrData, len(d.Names), k)
	}
	names := d.names()
	for i, row := range d.X {
		if len(row) != k {
			return 0, 0, fmt.Errorf("%w: run %d has %d parameter values, want %d", ErrData, i+1, len(row), k)
		}
		for j, v := range row {
			lo, hi := d.Bounds.Lo[j], d.Bounds.Hi[j]
			slack := 1e-9 * (hi - lo)
			if !isFinite(v) || v < lo-slack || v > hi+slack {
				return 0, 0, fmt.Errorf("%w: run %d: %s = %g is outside its bounds [%g, %g]", ErrData, i+1, names[j], v, lo, hi)
			}
		}
		if !isFinite(d.Y[i]) {
			return 0, 0, fmt.Errorf("%w: run %d: response is %g", ErrData, i+1, d.Y[i])
		}
		if d.SE != nil && (!isFinite(d.SE[i]) || d.SE[i] <= 0) {
			return 0, 0, fmt.Errorf("%w: run %d: standard error is %g; need a finite positive value", ErrData, i+1, d.SE[i])
		}
	}
	return n, k, nil
}

// Model is a fitted response surface.
type Model interface {
	// Name describes the model in a few words.
	Name() string
	// Bounds returns the parameter box the model was fitted in.
	Bounds() Bounds
	// Inputs returns the run points the model was fitted through, in
	// natural units. The caller must not modify them.
	Inputs() [][]float64
	// Predict returns the predicted mean response at x (natural units) and
	// the standard deviation of that prediction of the mean.
	Predict(x []float64) (mean, sd float64)
	// Mean returns the predicted mean response at x; it is Predict without
	// the cost of the standard deviation.
	Mean(x []float64) float64
	// Critical returns the two-sided critical value c such that
	// mean ± c·sd is an interval of confidence level (0 < level < 1): a
	// Student t quantile for least squares, a normal quantile for kriging.
	Critical(level float64) float64
	// LOO returns the leave-one-out root-mean-square error and the
	// leave-one-out prediction of each run.
	LOO() (rmse float64, preds []float64)
}

func isFinite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

func checkDim(x []float64, k int) {
	if len(x) != k {
		panic(fmt.Sprintf("surface: point has %d coordinates, model has %d parameters", len(x), k))
	}
}

func checkLevel(level float64) {
	if !(level > 0 && level < 1) {
		panic(fmt.Sprintf("surface: confidence level %g outside (0, 1)", level))
	}
}

// dist2 returns the squared Euclidean distance between a and b.
func dist2(a, b []float64) float64 {
	var s float64
	for j := range a {
		d := a[j] - b[j]
		s += d * d
	}
	return s
}

// nearest returns the distance from u to the nearest point of pts.
func nearest(u []float64, pts [][]float64) float64 {
	best := math.Inf(1)
	for _, p := range pts {
		if d := dist2(u, p); d < best {
			best = d
		}
	}
	return math.Sqrt(best)
}

// medianSpacing returns the median, over the points, of the distance from
// each point to its nearest distinct neighbour (replicated runs count as
// one point). It returns +Inf for fewer than two distinct points.
func medianSpacing(pts [][]float64) float64 {
	var nn []float64
	for i := range pts {
		best := math.Inf(1)
		for j := range pts {
			if d := dist2(pts[i], pts[j]); d > 0 && d < best {
				best = d
			}
		}
		if !math.IsInf(best, 1) {
			nn = append(nn, math.Sqrt(best))
		}
	}
	if len(nn) == 0 {
		return math.Inf(1)
	}
	sort.Float64s(nn)
	m := len(nn)
	if m%2 == 1 {
		return nn[m/2]
	}
	return 0.5 * (nn[m/2-1] + nn[m/2])
}

// paramNames returns the parameter names of a model of this package, or
// x1..xk for any other Model.
func paramNames(m Model) []string {
	if p, ok := m.(interface{ paramNames() []string }); ok {
		return p.paramNames()
	}
	return defaultNames(m.Bounds().Dim())
}

// unitInputs maps the runs of a model to the unit cube.
func unitInputs(m Model) [][]float64 {
	b := m.Bounds()
	in := m.Inputs()
	u := make([][]float64, len(in))
	for i, x := range in {
		u[i] = b.toUnit(x)
	}
	return u
}
