package fit

import (
	"encoding/csv"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"testing"

	"github.com/sweep-cfd/sweep/internal/doe"
	"github.com/sweep-cfd/sweep/internal/harvest"
	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/results"
	"github.com/sweep-cfd/sweep/internal/tradeoff"
)

// bench is a study whose "solver" is an analytic function: each run's
// averages are its values, with a standard error of 1e-6.
type bench struct {
	r  *recipe.Recipe
	f  func(x []float64) map[string]float64
	vs []results.Variant
}

func newBench(params []recipe.Param, quantities []recipe.Quantity, f func(x []float64) map[string]float64) *bench {
	return &bench{r: &recipe.Recipe{Params: params, Quantities: quantities}, f: f}
}

// run adds a run at x.
func (b *bench) run(x []float64) {
	v := results.Variant{Label: fmt.Sprintf("v%03d", len(b.vs)+1), Params: map[string]any{}, Results: map[string]harvest.Result{}}
	for j, p := range b.r.Params {
		v.Values = append(v.Values, recipe.Num(x[j]))
		v.Params[p.Name] = x[j]
	}
	for q, y := range b.f(x) {
		v.Results[q] = harvest.Result{Mean: y, StdError: 1e-6, HalfWidth: 1.96e-6, Dof: 1000, Verdict: harvest.Converged}
	}
	b.vs = append(b.vs, v)
}

// design runs a maximin Latin hypercube of n points.
func (b *bench) design(n int, seed uint64) {
	pts, _ := doe.LatinHypercube(n, len(b.r.Params), doe.LatinHypercubeOptions{Seed: seed})
	for _, u := range pts {
		x := make([]float64, len(u))
		for j, p := range b.r.Params {
			x[j] = p.Min + u[j]*(p.Max-p.Min)
		}
		b.run(x)
	}
}

// add runs the points a plan --add round proposes.
func (b *bench) add(t *testing.T, pts []recipe.Point, err error) {
	t.Helper()
	if err != nil {
		t.Fatal(err)
	}
	for _, p := range pts {
		x := make([]float64, len(p.Values))
		for j, v := range p.Values {
			x[j] = v.Num
		}
		b.run(x)
	}
}

// best returns the smallest measured value of q among the runs that pass
// keep, and its run.
func (b *bench) best(q string, keep func(v results.Variant) bool) (float64, results.Variant) {
	best, at := math.Inf(1), results.Variant{}
	for _, v := range b.vs {
		if y := v.Results[q].Mean; y < best && (keep == nil || keep(v)) {
			best, at = y, v
		}
	}
	return best, at
}

// knownOptima reads testdata/known_optima.csv.
func knownOptima(t *testing.T) map[string][][]float64 {
	f, err := os.Open(filepath.Join("testdata", "known_optima.csv"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	cr := csv.NewReader(f)
	cr.Comment = '#'
	recs, err := cr.ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	out := map[string][][]float64{}
	for _, rec := range recs[1:] {
		var row []float64
		for _, c := range rec[1:] {
			if c == "" {
				continue
			}
			v, err := strconv.ParseFloat(c, 64)
			if err != nil {
				t.Fatal(err)
			}
			row = append(row, v)
		}
		out[rec[0]] = append(out[rec[0]], row)
	}
	return out
}

func branin(x []float64) float64 {
	b, c := 5.1/(4*math.Pi*math.Pi), 5/math.Pi
	s := x[1] - b*x[0]*x[0] + c*x[0] - 6
	return s*s + 10*(1-1/(8*math.Pi))*math.Cos(x[0]) + 10
}

func hartmann3(x []float64) float64 {
	alpha := []float64{1, 1.2, 3, 3.2}
	a := [][]float64{{3, 10, 30}, {0.1, 10, 35}, {3, 10, 30}, {0.1, 10, 35}}
	p := [][]float64{{0.3689, 0.1170, 0.2673}, {0.4699, 0.4387, 0.7470}, {0.1091, 0.8732, 0.5547}, {0.0381, 0.5743, 0.8828}}
	f := 0.0
	for i := range alpha {
		s := 0.0
		for j := range 3 {
			s += a[i][j] * (x[j] - p[i][j]) * (x[j] - p[i][j])
		}
		f -= alpha[i] * math.Exp(-s)
	}
	return f
}

func rangeParam(name string, lo, hi float64) recipe.Param {
	return recipe.Param{Name: name, Kind: recipe.Range, Min: lo, Max: hi}
}

// Ensure that the functions as coded have the tabulated optima at the
// tabulated minimisers (testdata/known_optima.csv), to the tabulated
// digits, so that the searches below are checked against the right
// numbers.
func TestKnownOptimaTable(t *testing.T) {
	ko := knownOptima(t)
	for _, row := range ko["branin"] {
		if got := branin(row[1:]); math.Abs(got-row[0]) > 1e-5 {
			t.Errorf("Branin at %v = %.7f, tabulated %.6f", row[1:], got, row[0])
		}
	}
	h := ko["hartmann3"][0]
	if got := hartmann3(h[1:]); math.Abs(got-h[0]) > 1e-5 {
		t.Errorf("Hartmann-3 at %v = %.7f, tabulated %.5f", h[1:], got, h[0])
	}
	c := ko["constrained_disc"][0]
	if got := c[1] + c[2]; math.Abs(got-c[0]) > 1e-6 || math.Abs(c[1]*c[1]+c[2]*c[2]-1) > 1e-5 {
		t.Errorf("constrained optimum %v: f = %.7f", c, got)
	}
}

// Ensure that expected improvement finds the Branin minimum and all
// three of its minimisers: from a 10-run Latin hypercube and twelve plan
// --add rounds of two points, the best run lies within 2 % of 0.397887,
// every minimiser has a run within 0.02 of the range, and the fit's
// recommended optimum is within 2 % too. (Over design seeds 1 to 6 the
// best run was within 1.1 % and the nearest runs within 0.012; the
// tolerance leaves room for the seed.)
func TestBraninByExpectedImprovement(t *testing.T) {
	ko := knownOptima(t)
	fmin := ko["branin"][0][0]
	b := newBench([]recipe.Param{rangeParam("x1", -5, 10), rangeParam("x2", 0, 15)},
		[]recipe.Quantity{{Name: "f", Direction: recipe.Lower}},
		func(x []float64) map[string]float64 { return map[string]float64{"f": branin(x)} })
	b.design(10, 1)
	for round := range 12 {
		in, err := StudyData(b.r, b.vs, "f")
		if err != nil {
			t.Fatal(err)
		}
		pts, _, err := Next(b.r, in, b.vs, 2, "ei", false, uint64(round))
		b.add(t, pts, err)
	}
	best, at := b.best("f", nil)
	t.Logf("Branin: best of %d runs %.6f at %v (known %.6f)", len(b.vs), best, at.Params, fmin)
	if best > fmin*1.02 {
		t.Errorf("best run %.6f at %v; want within 2 %% of %.6f", best, at.Params, fmin)
	}
	for _, m := range ko["branin"] {
		d := math.Inf(1)
		for _, v := range b.vs {
			d = math.Min(d, math.Hypot((v.Values[0].Num-m[1])/15, (v.Values[1].Num-m[2])/15))
		}
		if d > 0.02 {
			t.Errorf("the nearest run to the minimiser %v is %.3f of the range away, want 0.02", m[1:], d)
		}
	}
	in, _ := StudyData(b.r, b.vs, "f")
	rep, err := Fit(in.Data, in.Options(Options{}))
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("fit: %s; optimum %.6f ± %.2g (%s) at %v", rep.Choice, rep.Optimum.Value, rep.Optimum.HalfWidth, rep.Optimum.Source, rep.Optimum.Params)
	if math.Abs(rep.Optimum.Value-fmin) > 0.02*fmin {
		t.Errorf("fit optimum %.6f, want within 2 %% of %.6f", rep.Optimum.Value, fmin)
	}
}

// Ensure that expected improvement finds the Hartmann-3 minimum: from a
// 12-run Latin hypercube and twelve rounds of two points, the best run is
// within 0.1 % of −3.86278 and within 0.03 of the minimiser. (Over design
// seeds 1 to 6 it was within 0.02 %.)
func TestHartmann3ByExpectedImprovement(t *testing.T) {
	ko := knownOptima(t)
	known := ko["hartmann3"][0]
	b := newBench([]recipe.Param{rangeParam("x1", 0, 1), rangeParam("x2", 0, 1), rangeParam("x3", 0, 1)},
		[]recipe.Quantity{{Name: "f", Direction: recipe.Lower}},
		func(x []float64) map[string]float64 { return map[string]float64{"f": hartmann3(x)} })
	b.design(12, 2)
	for round := range 12 {
		in, err := StudyData(b.r, b.vs, "f")
		if err != nil {
			t.Fatal(err)
		}
		pts, _, err := Next(b.r, in, b.vs, 2, "ei", false, uint64(round))
		b.add(t, pts, err)
	}
	best, at := b.best("f", nil)
	d := 0.0
	for j := range 3 {
		d += math.Pow(at.Values[j].Num-known[1+j], 2)
	}
	t.Logf("Hartmann-3: best of %d runs %.6f at %v, %.4f from the minimiser (known %.5f)", len(b.vs), best, at.Params, math.Sqrt(d), known[0])
	if best > known[0]*0.999 || math.Sqrt(d) > 0.03 {
		t.Errorf("best run %.6f at %v; want within 0.1 %% of %.5f and 0.03 of %v", best, at.Params, known[0], known[1:])
	}
}

// Ensure that expected improvement with the probability of feasibility
// finds a constrained optimum on the boundary: minimise f = x + y over
// [−2, 2]² with the measured quantity g = x² + y² at most 1; the optimum
// (derived by Lagrange multipliers, testdata/known_optima.csv) is
// f = −√2 at x = y = −1/√2. From 10 runs and eight rounds of two points the
// best feasible run is within 0.03 of it, and the constrained fit's
// optimum within 0.03 with its predicted g within the limit.
func TestConstrainedOptimum(t *testing.T) {
	ko := knownOptima(t)
	known := ko["constrained_disc"][0]
	one := 1.0
	b := newBench([]recipe.Param{rangeParam("x", -2, 2), rangeParam("y", -2, 2)},
		[]recipe.Quantity{{Name: "f", Direction: recipe.Lower}, {Name: "g", AtMost: &one}},
		func(x []float64) map[string]float64 {
			return map[string]float64{"f": x[0] + x[1], "g": x[0]*x[0] + x[1]*x[1]}
		})
	b.design(10, 3)
	f := &b.r.Quantities[0]
	for round := range 8 {
		p, err := StudyProblem(b.r, b.vs, []*recipe.Quantity{f})
		if err != nil {
			t.Fatal(err)
		}
		pts, _, err := p.Next(b.r, b.vs, 2, uint64(round))
		b.add(t, pts, err)
	}
	best, at := b.best("f", func(v results.Variant) bool { return v.Results["g"].Mean <= 1 })
	t.Logf("constrained: best feasible of %d runs %.5f at %v (known %.5f)", len(b.vs), best, at.Params, known[0])
	if math.Abs(best-known[0]) > 0.03 {
		t.Errorf("best feasible run %.5f, want within 0.03 of %.5f", best, known[0])
	}
	p, _ := StudyProblem(b.r, b.vs, []*recipe.Quantity{f})
	rep, lreps, err := p.FitConstrained(Options{})
	if err != nil {
		t.Fatal(err)
	}
	o := rep.Optimum
	t.Logf("fit: %s / g %s; optimum %.5f ± %.2g (%s) at %v, limits %+v", rep.Model, lreps[0].Model, o.Value, o.HalfWidth, o.Source, o.Params, o.Limits)
	if math.Abs(o.Value-known[0]) > 0.03 || len(o.Limits) != 1 || o.Limits[0].Mean > 1+1e-9 {
		t.Errorf("constrained optimum %.5f at %v with %+v; want within 0.03 of %.5f, g ≤ 1", o.Value, o.Params, o.Limits, known[0])
	}
}

// zdt1 is ZDT1 (Zitzler, Deb and Thiele 2000, "Comparison of
// multiobjective evolutionary algorithms: empirical results", Evol.
// Comput. 8(2)) in two variables: f1 = x1, g = 1 + 9 x2,
// f2 = g (1 − √(f1/g)); its Pareto front is x2 = 0, f2 = 1 − √f1.
func zdt1(x []float64) map[string]float64 {
	g := 1 + 9*x[1]
	return map[string]float64{"f1": x[0], "f2": g * (1 - math.Sqrt(x[0]/g))}
}

// frontDistance returns the distance from (f1, f2) to the analytic ZDT1
// front, by a search over 10,001 points of it.
func frontDistance(f1, f2 float64) float64 {
	d := math.Inf(1)
	for i := range 10001 {
		a := float64(i) / 10000
		d = math.Min(d, math.Hypot(f1-a, f2-(1-math.Sqrt(a))))
	}
	return d
}

// Ensure that the expected hypervolume improvement recovers the ZDT1
// front: from a 10-run Latin hypercube and eight plan --add rounds of
// two points, the measured front's hypervolume within (1, 1) is at least
// 95 % of the analytic front's 2/3; the front the surfaces predict has its
// twelve points spread over f1 from below 0.05 to above 0.95, the true
// objectives at their parameters lie within 0.01 of the analytic front
// (the Pareto set is found), and each prediction is within 0.06 of the
// true value, at least two in three within their 95 % intervals (nine of
// twelve were when this was written). (The
// kriging surface of f2 smooths the √f1 singularity at f1 = 0, where its
// prediction is 0.05 low.)
func TestZDT1Front(t *testing.T) {
	b := newBench([]recipe.Param{rangeParam("x1", 0, 1), rangeParam("x2", 0, 1)},
		[]recipe.Quantity{{Name: "f1", Direction: recipe.Lower}, {Name: "f2", Direction: recipe.Lower}}, zdt1)
	b.design(10, 4)
	objs := []*recipe.Quantity{&b.r.Quantities[0], &b.r.Quantities[1]}
	for round := range 8 {
		p, err := StudyProblem(b.r, b.vs, objs)
		if err != nil {
			t.Fatal(err)
		}
		pts, _, err := p.Next(b.r, b.vs, 2, uint64(round))
		b.add(t, pts, err)
	}
	var ys [][]float64
	for _, v := range b.vs {
		ys = append(ys, []float64{v.Results["f1"].Mean, v.Results["f2"].Mean})
	}
	hv := tradeoff.Hypervolume(ys, []float64{1, 1})
	t.Logf("ZDT1: %d runs, measured front hypervolume %.4f (analytic 0.6667, ratio %.3f)", len(b.vs), hv, hv/(2.0/3))
	if hv < 0.95*2/3 {
		t.Errorf("measured hypervolume %.4f, want at least 95 %% of 2/3", hv)
	}
	p, _ := StudyProblem(b.r, b.vs, objs)
	f, err := p.FitFront(Options{})
	if err != nil {
		t.Fatal(err)
	}
	var setDist, predErr float64
	lo, hi, covered := math.Inf(1), math.Inf(-1), 0
	for _, pt := range f.Points {
		truth := zdt1(pt.X)
		setDist = math.Max(setDist, frontDistance(truth["f1"], truth["f2"]))
		in := true
		for _, v := range pt.Values {
			e := math.Abs(v.Mean - truth[v.Quantity])
			predErr = math.Max(predErr, e)
			in = in && e <= v.HalfWidth+1e-9
		}
		if in {
			covered++
		}
		lo, hi = math.Min(lo, pt.Values[0].Mean), math.Max(hi, pt.Values[0].Mean)
	}
	t.Logf("predicted front: %d points of %d (surfaces %s, %s), true values within %.4f of the analytic front, predictions within %.4f of the truth, %d within their intervals, f1 from %.3f to %.3f",
		len(f.Points), f.Size, f.Surfaces[0].Model, f.Surfaces[1].Model, setDist, predErr, covered, lo, hi)
	if len(f.Points) != MaxFrontPoints || lo > 0.05 || hi < 0.95 || setDist > 0.01 || predErr > 0.06 || 3*covered < 2*len(f.Points) {
		t.Errorf("predicted front: %d points over f1 %.3f to %.3f, set %.4f from the front (want 0.01), predictions %.4f off (want 0.06), %d covered",
			len(f.Points), lo, hi, setDist, predErr, covered)
	}
}
