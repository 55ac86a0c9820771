package surface

import (
	"fmt"
	"math"
	"math/rand/v2"
	"sort"

	"gonum.org/v1/gonum/optimize"
)

// OptimumOptions configure FindOptimum. The zero value minimises with no
// constraint, 10 local searches, a 95 % interval and seed 0.
type OptimumOptions struct {
	// Maximize searches for the largest mean instead of the smallest.
	Maximize bool
	// Feasible, if not nil, reports whether a point (natural units) is
	// acceptable; infeasible points are never returned.
	Feasible func(x []float64) bool
	// Starts is the number of local searches; zero means 10.
	Starts int
	// Level is the confidence level of HalfWidth; zero means 0.95.
	Level float64
	// Seed seeds the candidate design.
	Seed uint64
}

// Optimum is the best point of a surface's mean within its bounds.
type Optimum struct {
	// X is the point, in natural units.
	X []float64
	// Mean and SD are the model's prediction there (SD of the mean
	// response, see Model.Predict).
	Mean, SD float64
	// Level is the confidence level and HalfWidth = Critical(Level)·SD the
	// half-width of the interval Mean ± HalfWidth.
	Level, HalfWidth float64
	// AtBound lists the parameters (indices) within 1 % of their range
	// from a bound.
	AtBound []int
	// NearestRun is the distance from X to the nearest run, and Spacing the
	// median over the runs of the distance to their nearest neighbour, both
	// in the unit cube.
	NearestRun, Spacing float64
	// Warnings explains, in words, why the optimum deserves caution.
	Warnings []string
}

// FindOptimum minimises (or maximises) the model's mean over its bounds,
// subject to opts.Feasible.
//
// The search works in the unit cube. It evaluates the mean at a Latin
// hypercube of 200·k candidates plus the runs themselves, keeps the
// feasible ones, and starts a Nelder-Mead search from each of the best
// opts.Starts distinct candidates. The searches minimise
//
//	g(v) = ±m(P(v)) + c‖v − P(v)‖²,
//
// with P the projection onto the cube, so every point outside the cube is
// worse than its projection and the searches end inside; infeasible points
// are given a value worse than every candidate's. The best feasible point
// evaluated by any search is returned.
//
// Two warnings are raised: a parameter within 1 % of its range from a bound
// (the optimum may lie outside the studied box), and an optimum farther
// from every run than the runs' median nearest-neighbour spacing (it sits in
// a gap of the design, where the surface is least supported; run a variant
// there before trusting it).
//
// It returns an error wrapping ErrNoFeasible when no candidate is feasible.
func FindOptimum(m Model, opts OptimumOptions) (*Optimum, error) {
	b := m.Bounds()
	k := b.Dim()
	if opts.Starts <= 0 {
		opts.Starts = 10
	}
	if opts.Level == 0 {
		opts.Level = 0.95
	}
	checkLevel(opts.Level)
	sign := 1.0
	if opts.Maximize {
		sign = -1
	}
	feasible := func(u []float64) bool {
		return opts.Feasible == nil || opts.Feasible(b.fromUnit(u))
	}
	obj := func(u []float64) float64 { return sign * m.Mean(b.fromUnit(u)) }

	rng := rand.New(rand.NewPCG(opts.Seed, 0x0b7))
	runs := unitInputs(m)
	cands := append(latin(rng, 200*k, k), runs...)
	type scored struct {
		u []float64
		f float64
	}
	var pool []scored
	for _, u := range cands {
		if feasible(u) {
			pool = append(pool, scored{u, obj(u)})
		}
	}
	if len(pool) == 0 {
		return nil, fmt.Errorf("%w: none of %d candidates satisfies the constraint", ErrNoFeasible, len(cands))
	}
	sort.SliceStable(pool, func(i, j int) bool { return pool[i].f < pool[j].f })
	spread := pool[len(pool)-1].f - pool[0].f
	if !(spread > 0) {
		spread = 1
	}
	infeasible := pool[len(pool)-1].f + spread

	best := pool[0]
	f := func(v []float64) float64 {
		u := clampUnit(v)
		var out float64
		for j := range v {
			d := v[j] - u[j]
			out += spread * d * d
		}
		if !feasible(u) {
			return infeasible + out
		}
		fu := obj(u)
		if fu < best.f {
			best = scored{u, fu}
		}
		return fu + out
	}
	var starts []scored
	for _, c := range pool {
		if len(starts) == opts.Starts {
			break
		}
		distinct := true
		for _, s := range starts {
			if dist2(s.u, c.u) < 1e-4 {
				distinct = false
				break
			}
		}
		if distinct {
			starts = append(starts, c)
		}
	}
	for _, s := range starts {
		localMin(f, s.u, 0.05, spread)
	}

	o := &Optimum{X: b.fromUnit(best.u), Level: opts.Level}
	o.Mean, o.SD = m.Predict(o.X)
	o.HalfWidth = m.Critical(opts.Level) * o.SD
	names := paramNames(m)
	for j, u := range best.u {
		side := ""
		switch {
		case u <= 0.01:
			side = "lower"
		case u >= 0.99:
			side = "upper"
		default:
			continue
		}
		o.AtBound = append(o.AtBound, j)
		o.Warnings = append(o.Warnings, fmt.Sprintf("%s = %g is at its %s bound (within 1%% of its range): the optimum may lie outside the studied range", names[j], o.X[j], side))
	}
	o.NearestRun = nearest(best.u, runs)
	o.Spacing = medianSpacing(runs)
	if o.NearestRun > o.Spacing {
		o.Warnings = append(o.Warnings, fmt.Sprintf("the optimum is %.1f design spacings from the nearest run (%.3g in the unit box, against the runs' median spacing of %.3g): the surface is least supported there; run a variant there to confirm it", o.NearestRun/o.Spacing, o.NearestRun, o.Spacing))
	}
	return o, nil
}

// clampUnit projects v onto the unit cube.
func clampUnit(v []float64) []float64 {
	u := make([]float64, len(v))
	for j, x := range v {
		u[j] = math.Min(math.Max(x, 0), 1)
	}
	return u
}

// localMin runs Nelder-Mead on f from x0 with an initial simplex of the
// given size, until the best value improves by less than 1e-12·scale over
// 50 iterations.
func localMin(f func([]float64) float64, x0 []float64, size, scale float64) *optimize.Result {
	settings := &optimize.Settings{
		FuncEvaluations: 1000 * len(x0),
		Converger:       &optimize.FunctionConverge{Absolute: 1e-12 * scale, Iterations: 50},
	}
	res, _ := optimize.Minimize(optimize.Problem{Func: f}, x0, settings, &optimize.NelderMead{SimplexSize: size})
	return res
}
