package fit

import (
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/sweep-cfd/sweep/internal/harvest"
	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/results"
	"github.com/sweep-cfd/sweep/internal/surface"
)

// Ensure that a quadratic fit through exact samples of a known bowl,
// f(a, b) = 1 + (a − 0.3)² + 2 (b − 0.6)², recovers its coefficients, its
// minimum (1 at a = 0.3, b = 0.6, plain algebra) and the fact that b
// matters more than a: over a, b ∈ [0, 1] the variances of the two terms
// are 1·Var((a−0.3)²) and 4·Var((b−0.6)²), both computed below from
// Var(X²) for a uniform shifted variable.
func TestFitKnownBowl(t *testing.T) {
	f := func(a, b float64) float64 { return 1 + (a-0.3)*(a-0.3) + 2*(b-0.6)*(b-0.6) }
	var d surface.Data
	d.Names = []string{"a", "b"}
	d.Bounds = surface.Bounds{Lo: []float64{0, 0}, Hi: []float64{1, 1}}
	for _, a := range []float64{0, 0.25, 0.5, 0.75, 1} {
		for _, b := range []float64{0, 0.5, 1} {
			d.X = append(d.X, []float64{a, b})
			d.Y = append(d.Y, f(a, b))
			d.SE = append(d.SE, 1e-3)
		}
	}
	rep, err := Fit(d, Options{})
	if err != nil {
		t.Fatal(err)
	}
	want := map[string]float64{"1": 1 + 0.09 + 0.72, "a": -0.6, "b": -2.4, "a*b": 0, "a^2": 1, "b^2": 2}
	for _, term := range rep.Terms {
		if math.Abs(term.Coef-want[term.Name]) > 1e-9 {
			t.Errorf("%s: %g, want %g", term.Name, term.Coef, want[term.Name])
		}
	}
	o := rep.Optimum
	if o == nil || math.Abs(o.Params["a"]-0.3) > 1e-4 || math.Abs(o.Params["b"]-0.6) > 1e-4 || math.Abs(o.Value-1) > 1e-8 {
		t.Errorf("optimum %+v", o)
	}
	if rep.Flag != "" {
		t.Errorf("an exact fit was flagged: %s", rep.Flag)
	}
	// Var((U−c)²) for U uniform on [0,1]: E[(U−c)^4] − E[(U−c)²]².
	v := func(c float64) float64 {
		m2 := ((1-c)*(1-c)*(1-c) + c*c*c) / 3
		m4 := (math.Pow(1-c, 5) + math.Pow(c, 5)) / 5
		return m4 - m2*m2
	}
	va, vb := v(0.3), 4*v(0.6)
	for _, s := range rep.Sensitivities {
		want := va / (va + vb)
		if s.Param == "b" {
			want = vb / (va + vb)
		}
		if math.Abs(s.First-want) > 4*s.FirstSE+0.01 {
			t.Errorf("%s: first-order index %.4f ± %.4f, want %.4f", s.Param, s.First, s.FirstSE, want)
		}
	}
}

// Ensure that a surface that cannot follow the data is flagged, and its
// optimum's interval widened to its leave-one-out error: a linear model
// through a parabola whose runs are known to ±0.001.
func TestFitFlagsMisfit(t *testing.T) {
	var d surface.Data
	d.Names = []string{"x"}
	d.Bounds = surface.Bounds{Lo: []float64{-1}, Hi: []float64{1}}
	for i := range 9 {
		x := -1 + float64(i)*0.25
		d.X, d.Y, d.SE = append(d.X, []float64{x}), append(d.Y, x*x), append(d.SE, 1e-3)
	}
	rep, err := Fit(d, Options{Model: "linear"})
	if err != nil {
		t.Fatal(err)
	}
	if rep.Flag == "" || !strings.Contains(rep.Flag, "misses structure") {
		t.Errorf("misfit not flagged: loo %.3g noise %.3g", rep.LOORMSE, rep.Noise)
	}
	// The line through the symmetric parabola is flat, predicting the
	// runs' mean 0.42 everywhere with a narrow interval of its own; its
	// real error is the leave-one-out error, so the optimum's interval is
	// widened to 1.96 times it, and the run at the true minimum (x = 0,
	// y = 0) is the recommendation.
	p := rep.Predicted
	if p == nil || p.HalfWidth < 1.959964*rep.LOORMSE-1e-12 || !strings.Contains(strings.Join(p.Warnings, " "), "interval is widened") {
		t.Errorf("predicted optimum %+v (loo %.3g)", p, rep.LOORMSE)
	}
	if o := rep.Optimum; o == nil || o.Params["x"] != 0 || o.Value != 0 {
		t.Errorf("optimum %+v, want the run at x = 0", o)
	}
}

// Ensure that a fit of a study uses the variants with an honest interval
// (converged, steady, and not_converged with its wider error) and lists
// the others.
func TestStudyDataLeavesOut(t *testing.T) {
	r := &recipe.Recipe{Params: []recipe.Param{{Name: "a", Kind: recipe.Range, Min: 0, Max: 1}, {Name: "s", Kind: recipe.Choice, Choices: []string{"x"}}}}
	mk := func(label string, a float64, verdict harvest.Verdict) results.Variant {
		return results.Variant{Label: label, Values: []recipe.Value{recipe.Num(a), recipe.Word("x")},
			Results: map[string]harvest.Result{"drag": {Verdict: verdict, Mean: a, StdError: 0.01, HalfWidth: 0.02, Dof: 20}}}
	}
	short := mk("v005", 0.7, harvest.TooShort)
	short.Results["drag"] = harvest.Result{Verdict: harvest.TooShort, Mean: 0.7, StdError: math.NaN(), HalfWidth: math.NaN()}
	vs := []results.Variant{mk("v001", 0.1, harvest.Converged), mk("v002", 0.5, harvest.NotConverged), mk("v003", 0.9, harvest.Steady), {Label: "v004", State: "pending"}, short}
	in, err := StudyData(r, vs, "drag")
	if err != nil {
		t.Fatal(err)
	}
	if d := in.Data; len(d.Y) != 3 || len(in.Cols) != 1 || d.Names[0] != "a" || strings.Join(in.Labels, ",") != "v001,v002,v003" {
		t.Errorf("data %+v cols %v labels %v", d, in.Cols, in.Labels)
	}
	if len(in.Left) != 2 || in.Left[0].Label != "v004" || in.Left[1].Label != "v005" {
		t.Errorf("left out %+v", in.Left)
	}
}

// Ensure that a table fit reproduces the NIST StRD Norris certified
// coefficients (NIST Statistical Reference Datasets, linear least squares,
// Norris; values copied in testdata/), rel 1e-9.
func TestTableNorris(t *testing.T) {
	d, err := TableData(filepath.Join("testdata", "nist_strd_norris.csv"), "y")
	if err != nil {
		t.Fatal(err)
	}
	rep, err := Fit(d, Options{Terms: "1, x"})
	if err != nil {
		t.Fatal(err)
	}
	cert := map[string]float64{"1": -0.262323073774029, "x": 1.00211681802045}
	for _, term := range rep.Terms {
		if math.Abs(term.Coef/cert[term.Name]-1) > 1e-9 {
			t.Errorf("%s = %.15g, certified %.15g", term.Name, term.Coef, cert[term.Name])
		}
	}
	if _, err := TableData(filepath.Join("testdata", "nist_strd_norris.csv"), "z"); err == nil || !strings.Contains(err.Error(), `no column "z"`) {
		t.Errorf("missing response: %v", err)
	}
	bad := filepath.Join(t.TempDir(), "bad.csv")
	os.WriteFile(bad, []byte("y,x\n1,2\n3,oops\n"), 0o644)
	if _, err := TableData(bad, "y"); err == nil || !strings.Contains(err.Error(), `bad.csv:3: "oops" (column x) is not a finite number`) {
		t.Errorf("bad cell: %v", err)
	}
}

// Ensure that a malformed table is refused with its file, line, what is
// wrong and what to do, word for word, and never crashes the reader.
func TestTableBad(t *testing.T) {
	dir := t.TempDir()
	cases := []struct{ name, text, want string }{
		{"bad quote in the first cell", "x,y\n\"3\"x,4\n",
			`bad.csv:2: not valid CSV at column 3: extraneous or missing " in quoted-field: put a cell that holds a comma or a quote in double quotes, each inner quote doubled`},
		{"bad quote in the header", "x,\"y\"z\n1,2\n",
			`bad.csv:1: not valid CSV at column 5: extraneous or missing " in quoted-field: put a cell that holds a comma or a quote in double quotes, each inner quote doubled`},
		{"short row", "x,y\n1,2\n3\n",
			`bad.csv:3: the row has 1 cell and the header 2: give every row one cell per header column`},
		{"long row", "# runs\nx,y\n1,2,3\n",
			`bad.csv:3: the row has 3 cells and the header 2: give every row one cell per header column`},
		{"twice the response", "y,x,y\n1,2,3\n",
			`bad.csv:1: column "y" appears twice in the header: keep one`},
		{"empty", "# nothing\n",
			`bad.csv: the table is empty: write a header row naming the columns, then one row per run`},
		{"not finite", "x,y\n1,2\nnan,3\n",
			`bad.csv:3: "nan" (column x) is not a finite number`},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			path := filepath.Join(dir, "bad.csv")
			if err := os.WriteFile(path, []byte(c.text), 0o644); err != nil {
				t.Fatal(err)
			}
			_, err := TableData(path, "y")
			if err == nil {
				t.Fatal("accepted a bad table")
			}
			if got := strings.TrimPrefix(err.Error(), dir+string(filepath.Separator)); got != c.want {
				t.Errorf("got\n %s\nwant\n %s", got, c.want)
			}
		})
	}
}

// Ensure that text columns of a table are left out and named, that
// --params chooses the parameter columns and refuses one of words at its
// line, and that the program's own summary keeps its runs' labels.
func TestTableParams(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "runs.csv")
	os.WriteFile(path, []byte("case,a,b,y\nfirst,1,5,2\nsecond,2,6,3\nthird,3,8,5\n"), 0o644)
	d, info, err := ReadTable(path, "y")
	if err != nil || strings.Join(d.Names, ",") != "a,b" || strings.Join(info.Ignored, ",") != "case" {
		t.Errorf("names %v, ignored %v, %v", d.Names, info.Ignored, err)
	}
	d, info, err = ReadTable(path, "y", "b")
	if err != nil || strings.Join(d.Names, ",") != "b" || strings.Join(info.Ignored, ",") != "case,a" || d.X[2][0] != 8 {
		t.Errorf("--params b: names %v, ignored %v, %v", d.Names, info.Ignored, err)
	}
	if _, _, err := ReadTable(path, "y", "case"); err == nil || !strings.HasSuffix(err.Error(), `runs.csv:2: column "case" holds "first", not a number: a surface needs numeric parameters; fit the rows of each value apart (a table of its own), or leave the column out`) {
		t.Errorf("a text column named: %v", err)
	}
	sum := filepath.Join(dir, "summary.csv")
	os.WriteFile(sum, []byte("id,label,name,state,r,shape,drag_mean,drag_half_width,drag_std_error\n"+
		"x1,v001,,done,1,round,2.0,0.02,0.01\nx2,v002,,done,2,round,1.5,0.02,0.01\nx3,v003,,failed,3,round,,,\nx4,v004,,done,4,round,1.2,0.02,0.01\n"), 0o644)
	d, info, err = ReadTable(sum, "drag")
	if err != nil || strings.Join(info.Labels, ",") != "v001,v002,v004" || info.Skipped != 1 || strings.Join(d.Names, ",") != "r" || strings.Join(info.Ignored, ",") != "shape" || d.SE[0] != 0.01 {
		t.Errorf("summary: names %v labels %v skipped %d ignored %v SE %v, %v", d.Names, info.Labels, info.Skipped, info.Ignored, d.SE, err)
	}
}

// Ensure that a parameter declared log = true is fitted in log10 of its
// value: a power law y = 10 x^(−1/2) on x from 1 to 100 (five runs, evenly
// spread in log x) is a straight line in log10 x only after y's log is
// taken, but a quadratic in log10 x already predicts it to a small
// fraction of what the quadratic in x does, and the terms say the
// scale.
func TestFitLogParameter(t *testing.T) {
	d := surface.Data{Names: []string{"x"}, Bounds: surface.Bounds{Lo: []float64{1}, Hi: []float64{100}}}
	for _, x := range []float64{1, 3.16227766, 10, 31.6227766, 100} {
		d.X, d.Y, d.SE = append(d.X, []float64{x}), append(d.Y, 10/math.Sqrt(x)), append(d.SE, 1e-4)
	}
	plain, err := Fit(d, Options{Model: "quadratic"})
	if err != nil {
		t.Fatal(err)
	}
	logged, err := Fit(d, Options{Model: "quadratic", Log: []bool{true}})
	if err != nil {
		t.Fatal(err)
	}
	if !(logged.LOORMSE < plain.LOORMSE/5) {
		t.Errorf("leave-one-out error %.3g in log10 x, %.3g in x: want five times smaller", logged.LOORMSE, plain.LOORMSE)
	}
	if logged.Terms[1].Name != "log10(x)" || strings.Join(logged.LogParams, ",") != "x" {
		t.Errorf("terms %+v, log params %v", logged.Terms, logged.LogParams)
	}
	// The curve is sampled evenly in log10 x and reported in x.
	if c := logged.Curve; len(c) != 41 || math.Abs(c[20].X-10) > 1e-9 || math.Abs(c[20].Mean-10/math.Sqrt(10)) > 0.1 {
		t.Errorf("curve midpoint %+v", c[20])
	}
}

// Ensure that a surface's optimum is not taken for an improvement on a
// run when its interval, wide for a fit with one degree of freedom, holds
// the run's value: three runs on a straight line in log10 x put the
// surface's optimum 0.34 below the run at the bound, within its ±2.1.
func TestFitOptimumNotProven(t *testing.T) {
	d := surface.Data{Names: []string{"re"}, Bounds: surface.Bounds{Lo: []float64{10}, Hi: []float64{40}}}
	for i, x := range []float64{10, 20, 40} {
		d.X, d.Y, d.SE = append(d.X, []float64{x}), append(d.Y, []float64{3.51305, 2.47002, 1.8421}[i]), append(d.SE, []float64{8e-5, 2e-4, 9e-4}[i])
	}
	rep, err := Fit(d, Options{Log: []bool{true}, Labels: []string{"v001", "v002", "v003"}})
	if err != nil {
		t.Fatal(err)
	}
	if o := rep.Optimum; o.Source != "run v003" || o.Value != 1.8421 || rep.Predicted == nil || rep.Predicted.HalfWidth < 1 {
		t.Errorf("optimum %+v, predicted %+v", o, rep.Predicted)
	}
	if w := strings.Join(rep.Optimum.Warnings, " "); !strings.Contains(w, "re = 40 is at its upper bound") || strings.Contains(w, "log10") {
		t.Errorf("warnings %q", w)
	}
}

// Ensure that Sobol' estimates outside [0, 1], where true indices lie,
// are clipped with the estimate and its error kept in the note, and that
// estimates inside are left alone.
func TestClipIndices(t *testing.T) {
	s := clipIndices(Sensitivity{Param: "a", First: -0.002, FirstSE: 0.002, Total: 1.012, TotalSE: 0.01})
	if s.First != 0 || s.Total != 1 || s.Note != "main effect estimate -0.002 ± 0.002, total effect estimate 1.012 ± 0.010 clipped to [0, 1]" {
		t.Errorf("%+v", s)
	}
	if s := clipIndices(Sensitivity{Param: "b", First: 0.3, Total: 0.4}); s.First != 0.3 || s.Total != 0.4 || s.Note != "" {
		t.Errorf("%+v", s)
	}
}
