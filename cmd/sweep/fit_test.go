package main

import (
	"encoding/json"
	"math"
	"path/filepath"
	"strings"
	"testing"

	"github.com/sweep-cfd/sweep/internal/fit"
	"github.com/sweep-cfd/sweep/internal/studytest"
)

// Ensure that fit --table --json prints the names scripts read, and that
// a one-variable polynomial of any degree can be fitted: the NIST StRD
// Wampler1 data (y = 1 + x + x² + x³ + x⁴ + x⁵ exactly; certified
// coefficients all 1; NIST Statistical Reference Datasets, copied in
// ../../internal/fit/testdata) to 1e-6.
func TestFitTableJSON(t *testing.T) {
	table := filepath.Join("..", "..", "internal", "fit", "testdata", "nist_strd_wampler1.csv")
	out, errs, code := sweep(t, "fit", "--table", table, "--response", "y", "--terms", "1, x, x^2, x^3, x^4, x^5", "--json")
	if code != 0 {
		t.Fatalf("fit: %d %s", code, errs)
	}
	var rep struct {
		Model string `json:"model"`
		Terms []struct {
			Name   string   `json:"name"`
			Coef   float64  `json:"coef"`
			StdErr *float64 `json:"stderr"`
		} `json:"terms"`
		R2      *float64 `json:"r2"`
		LOORMSE *float64 `json:"loo_rmse"`
		Optimum *struct {
			Params    map[string]float64 `json:"params"`
			Value     *float64           `json:"value"`
			HalfWidth *float64           `json:"half_width"`
		} `json:"optimum"`
	}
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatalf("%v\n%s", err, out)
	}
	if rep.Model == "" || len(rep.Terms) != 6 || rep.R2 == nil || rep.LOORMSE == nil || rep.Optimum == nil ||
		rep.Optimum.Value == nil || rep.Optimum.HalfWidth == nil || rep.Terms[0].StdErr == nil {
		t.Fatalf("fields missing: %s", out)
	}
	for _, term := range rep.Terms {
		if math.Abs(term.Coef-1) > 1e-6 {
			t.Errorf("%s = %.12g, certified 1", term.Name, term.Coef)
		}
	}
	// y grows with x on [0, 20]: the minimum is at x = 0, on the bound.
	if rep.Optimum.Params["x"] > 1e-6 {
		t.Errorf("optimum %+v", rep.Optimum)
	}
	if _, errs, code := sweep(t, "fit", "--table", table); code != 2 || !strings.Contains(errs, "--response") {
		t.Errorf("no response: %d %q", code, errs)
	}
}

// Ensure that plan --add proposes new variants from the harvested results
// (a bowl-shaped drag with its minimum inside the box), that they lie in
// the bounds and satisfy the constraint, and that they are planned and run.
func TestPlanAdd(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a small study")
	}
	dir := t.TempDir()
	studytest.WriteFile(t, filepath.Join(dir, "template", "gen.awk"), `BEGIN { srand(seed); print "# t Cd"
  m = 1 + (a - 0.3)^2 + 2 * (b - 0.6)^2
  for (i = 1; i <= 4000; i++) printf "%d %.6f\n", i, m + 0.002 * (rand() - 0.5) }
`, 0o644)
	studytest.WriteFile(t, filepath.Join(dir, "study.toml"), `[case]
base = "template"
[[param]]
name = "a"
min = 0.0
max = 1.0
[[param]]
name = "b"
min = 0.0
max = 1.0
[design]
scheme = "latin"
count = 10
seed = 4
constraints = ["a + b <= 1.6"]
[[quantity]]
name = "drag"
files = "h.dat"
value = "Cd"
better = "lower"
tolerance = 0.001
[[stage]]
name = "solve"
shell = true
run = "awk -v a=$SWEEP_PARAM_A -v b=$SWEEP_PARAM_B -v seed=${SWEEP_VARIANT_LABEL#v} -f gen.awk > h.dat"
`, 0o644)
	for _, args := range [][]string{{"plan", dir}, {"run", dir, "-q"}} {
		if _, errs, code := sweep(t, args...); code != 0 {
			t.Fatalf("%v: %s", args, errs)
		}
	}
	out, errs, code := sweep(t, "plan", dir, "--add", "2", "--json")
	if code != 0 {
		t.Fatalf("plan --add: %s", errs)
	}
	var res struct {
		Added    int `json:"added"`
		Variants []struct {
			Label  string             `json:"label"`
			Params map[string]float64 `json:"params"`
			New    bool               `json:"new"`
		} `json:"variants"`
	}
	if err := json.Unmarshal([]byte(out), &res); err != nil {
		t.Fatal(err)
	}
	if res.Added != 2 {
		t.Fatalf("added %d: %s", res.Added, out)
	}
	for _, v := range res.Variants {
		if !v.New {
			continue
		}
		a, b := v.Params["a"], v.Params["b"]
		if a < 0 || a > 1 || b < 0 || b > 1 || a+b > 1.6 {
			t.Errorf("%s proposed outside the bounds or the constraint: a=%g b=%g", v.Label, a, b)
		}
	}
	if _, errs, code := sweep(t, "run", dir, "-q"); code != 0 {
		t.Fatalf("run the added: %s", errs)
	}
	if s := status(t, dir); s.Counts.Done != 12 {
		t.Errorf("counts %+v", s.Counts)
	}
	// The fit of the twelve runs finds the bowl's minimum (1 at a = 0.3,
	// b = 0.6; plain algebra) within its interval.
	out, errs, code = sweep(t, "fit", dir, "--json")
	if code != 0 {
		t.Fatalf("fit: %s", errs)
	}
	var rep fit.Report
	json.Unmarshal([]byte(out), &rep)
	if o := rep.Optimum; o == nil || math.Abs(o.Params["a"]-0.3) > 0.05 || math.Abs(o.Params["b"]-0.6) > 0.05 || math.Abs(o.Value-1) > o.HalfWidth+0.001 {
		t.Errorf("optimum %+v", rep.Optimum)
	}
}

// steadyStudy writes a study of four steady runs whose drag settles to
// 8.4015, 5.5657, 4.5611 and 4.0250 at Re 10, 20, 30 and 40, printed to
// six digits as a solver prints them (the values of a user's report of a
// real solver's steady cylinder runs; what is checked is the program's
// handling of them, not the physics), and runs it.
func steadyStudy(t *testing.T) string {
	t.Helper()
	dir := t.TempDir()
	studytest.WriteFile(t, filepath.Join(dir, "template", "solve.sh"), `#!/bin/sh
case $SWEEP_PARAM_RE in 10) v=8.4015;; 20) v=5.5657;; 30) v=4.5611;; 40) v=4.0250;; esac
awk -v v=$v 'BEGIN { print "# it Cd"; for (i = 0; i <= 400; i++) printf "%d %.6g\n", i, v * (1 + 0.3 * exp(-i / 20)) }' > forces.dat
`, 0o755)
	studytest.WriteFile(t, filepath.Join(dir, "study.toml"), `[case]
base = "template"
[[param]]
name = "re"
levels = [10, 20, 30, 40]
[design]
scheme = "factorial"
[[quantity]]
name = "drag"
files = "forces.dat"
value = "Cd"
better = "lower"
[[stage]]
name = "solve"
run = "./solve.sh"
`, 0o644)
	for _, args := range [][]string{{"plan", dir}, {"run", dir, "-q"}} {
		if _, errs, code := sweep(t, args...); code != 0 {
			t.Fatalf("%v: %s", args, errs)
		}
	}
	return dir
}

// Ensure that the default fit of a monotonic steady study respects the
// data: the optimum is the measured run at the upper bound (Re 40, within
// 3 % of its 4.0250), flagged as on the bound; no run weighs infinitely
// (each run's standard error is at least the rounding of six printed
// digits, 1e-5/√12 = 2.9e-6, common practice for a uniform rounding
// error); the single parameter's index is 1 by definition; the curve is
// printed with the runs; and the program's own summary table fits to the
// same optimum.
func TestFitSteadyStudy(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a small study")
	}
	dir := steadyStudy(t)
	out, errs, code := sweep(t, "fit", dir, "--json")
	if code != 0 {
		t.Fatalf("fit: %s", errs)
	}
	var rep fit.Report
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatal(err)
	}
	o := rep.Optimum
	if o == nil || o.Params["re"] != 40 || math.Abs(o.Value/4.025-1) > 0.03 || !strings.Contains(strings.Join(o.Warnings, " "), "upper bound") {
		t.Fatalf("optimum %+v", o)
	}
	if rep.Noise < 1e-5/math.Sqrt(12)*0.99 {
		t.Errorf("the runs' uncertainty %.3g is below the rounding of their printed digits", rep.Noise)
	}
	if s := rep.Sensitivities; len(s) != 1 || s[0].First != 1 || !strings.Contains(s[0].Note, "by definition") {
		t.Errorf("sensitivities %+v", s)
	}
	if len(rep.Curve) != 41 {
		t.Errorf("curve of %d points", len(rep.Curve))
	}
	text, _, _ := sweep(t, "fit", dir)
	for _, want := range []string{"drag against re", "* run", "(run v004, measured", "1 by definition"} {
		if !strings.Contains(text, want) {
			t.Errorf("fit does not print %q:\n%s", want, text)
		}
	}
	out, errs, code = sweep(t, "fit", "--table", filepath.Join(dir, "results", "summary.csv"), "--response", "drag", "--json")
	if code != 0 {
		t.Fatalf("fit --table summary.csv: %s", errs)
	}
	var trep fit.Report
	json.Unmarshal([]byte(out), &trep)
	if trep.Runs != 4 || trep.Optimum == nil || trep.Optimum.Params["re"] != 40 || math.Abs(trep.Optimum.Value/4.025-1) > 0.03 {
		t.Errorf("fit of the summary table: %d runs, optimum %+v", trep.Runs, trep.Optimum)
	}
}

// Ensure that plan --add on a study whose only parameter takes listed
// levels, all of them run, fails with the reason and what to do, and
// plans nothing; and that on a study with a levels parameter and a range
// a batch of three proposals holds three distinct points, each at a
// listed level and none repeating a run.
func TestPlanAddLevels(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a small study")
	}
	dir := steadyStudy(t)
	_, errs, code := sweep(t, "plan", dir, "--add", "2")
	if code == 0 || !strings.Contains(errs, "no new point can be proposed") || !strings.Contains(errs, "list more levels in study.toml") {
		t.Fatalf("plan --add on exhausted levels: exit %d, %s", code, errs)
	}
	if s := status(t, dir); s.Counts.Done != 4 || s.Counts.Pending != 0 {
		t.Errorf("counts %+v after a refused plan --add", s.Counts)
	}

	dir = t.TempDir()
	studytest.WriteFile(t, filepath.Join(dir, "template", "keep"), "", 0o644)
	studytest.WriteFile(t, filepath.Join(dir, "study.toml"), `[case]
base = "template"
[[param]]
name = "fins"
levels = [2, 3, 4]
[[param]]
name = "x"
min = 0.0
max = 1.0
[design]
scheme = "latin"
count = 6
seed = 3
[[quantity]]
name = "drag"
files = "h.dat"
value = 2
better = "lower"
[[stage]]
name = "solve"
shell = true
run = "awk -v f=$SWEEP_PARAM_FINS -v x=$SWEEP_PARAM_X 'BEGIN { for (i = 0; i < 50; i++) printf \"%d %.6f\\n\", i, (f - 3)^2 + (x - 0.4)^2 }' > h.dat"
`, 0o644)
	for _, args := range [][]string{{"plan", dir}, {"run", dir, "-q"}} {
		if _, errs, code := sweep(t, args...); code != 0 {
			t.Fatalf("%v: %s", args, errs)
		}
	}
	out, errs, code := sweep(t, "plan", dir, "--add", "3", "--json")
	if code != 0 {
		t.Fatalf("plan --add 3: %s", errs)
	}
	var res struct {
		Added    int `json:"added"`
		Variants []struct {
			Params map[string]float64 `json:"params"`
			New    bool               `json:"new"`
		} `json:"variants"`
	}
	if err := json.Unmarshal([]byte(out), &res); err != nil {
		t.Fatal(err)
	}
	seen := map[[2]float64]bool{}
	for _, v := range res.Variants {
		p := [2]float64{v.Params["fins"], v.Params["x"]}
		if seen[p] {
			t.Errorf("the point %v is planned twice", p)
		}
		seen[p] = true
		if f := p[0]; v.New && f != 2 && f != 3 && f != 4 {
			t.Errorf("proposed fins = %g, not a listed level", f)
		}
	}
	if res.Added != 3 || len(seen) != 9 {
		t.Errorf("added %d, %d distinct points: %s", res.Added, len(seen), out)
	}
}

// Ensure that several quantities work through the commands: on a study
// of the two ZDT1 objectives (Zitzler, Deb and Thiele 2000; f1 = x1,
// f2 = g (1 − √(f1/g)), g = 1 + 9 x2) with a limit on a third quantity
// (s = x1 + x2 at most 1.2), rank --quantity f1,f2 puts on the front
// exactly the variants within the limit that no other beats in both
// (checked by brute force on the harvested means), fit predicts a front,
// plan --add proposes within the limit, and the one-quantity ranking
// lists the variants outside the limit last.
func TestTradeoffStudy(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a small study")
	}
	dir := t.TempDir()
	studytest.WriteFile(t, filepath.Join(dir, "template", "keep"), "", 0o644)
	studytest.WriteFile(t, filepath.Join(dir, "study.toml"), `[case]
base = "template"
[[param]]
name = "x1"
min = 0.0
max = 1.0
[[param]]
name = "x2"
min = 0.0
max = 1.0
[design]
scheme = "latin"
count = 12
seed = 5
[[quantity]]
name = "f1"
files = "h.dat"
value = 2
better = "lower"
[[quantity]]
name = "f2"
files = "h.dat"
value = 3
better = "lower"
[[quantity]]
name = "s"
files = "h.dat"
value = 4
at_most = 1.2
[[stage]]
name = "solve"
shell = true
run = "awk -v a=$SWEEP_PARAM_X1 -v b=$SWEEP_PARAM_X2 'BEGIN { g = 1 + 9 * b; for (i = 0; i < 50; i++) printf \"%d %.6f %.6f %.6f\\n\", i, a, g * (1 - sqrt(a / g)), a + b }' > h.dat"
`, 0o644)
	for _, args := range [][]string{{"plan", dir}, {"run", dir, "-q"}} {
		if _, errs, code := sweep(t, args...); code != 0 {
			t.Fatalf("%v: %s", args, errs)
		}
	}
	out, errs, code := sweep(t, "rank", dir, "--quantity", "f1,f2", "--json")
	if code != 0 {
		t.Fatalf("rank --quantity f1,f2: %s", errs)
	}
	var tr struct {
		Rows []struct {
			Label  string `json:"label"`
			Layer  int    `json:"layer"`
			Status string `json:"status"`
			Values map[string]struct {
				Mean float64 `json:"mean"`
			} `json:"values"`
		} `json:"rows"`
	}
	if err := json.Unmarshal([]byte(out), &tr); err != nil || len(tr.Rows) != 12 {
		t.Fatalf("%v: %s", err, out)
	}
	for _, a := range tr.Rows {
		within := a.Values["s"].Mean <= 1.2
		dominated := false
		for _, b := range tr.Rows {
			if b.Values["s"].Mean <= 1.2 && b.Values["f1"].Mean <= a.Values["f1"].Mean && b.Values["f2"].Mean <= a.Values["f2"].Mean &&
				(b.Values["f1"].Mean < a.Values["f1"].Mean || b.Values["f2"].Mean < a.Values["f2"].Mean) {
				dominated = true
			}
		}
		if onFront := a.Layer == 1; onFront != (within && !dominated) {
			t.Errorf("%s: layer %d, but within the limit %v and dominated %v", a.Label, a.Layer, within, dominated)
		}
		if !within && a.Status != "outside" {
			t.Errorf("%s breaks the limit (s = %.3f) but has status %s", a.Label, a.Values["s"].Mean, a.Status)
		}
	}
	text, errs, code := sweep(t, "fit", dir, "--quantity", "f1,f2")
	if code != 0 || !strings.Contains(text, "predicted front:") || !strings.Contains(text, "within s ≤ 1.2") {
		t.Fatalf("fit --quantity f1,f2: %s\n%s", errs, text)
	}
	out, errs, code = sweep(t, "plan", dir, "--add", "2", "--quantity", "f1,f2", "--json")
	if code != 0 {
		t.Fatalf("plan --add 2 --quantity f1,f2: %s", errs)
	}
	var res struct {
		Added    int `json:"added"`
		Variants []struct {
			Params map[string]float64 `json:"params"`
			New    bool               `json:"new"`
		} `json:"variants"`
	}
	json.Unmarshal([]byte(out), &res)
	if res.Added != 2 {
		t.Errorf("added %d", res.Added)
	}
	text, _, _ = sweep(t, "rank", dir, "--quantity", "f1")
	if !strings.Contains(text, "the variants within s ≤ 1.2 first") {
		t.Errorf("rank does not say it keeps the limit:\n%s", text)
	}
	if _, errs, code := sweep(t, "rank", dir, "--quantity", "f1,s"); code != 2 || !strings.Contains(errs, `quantity "s" (study.toml:`) || !strings.Contains(errs, "does not say which values are better") {
		t.Errorf("a quantity without a direction in a trade-off: exit %d, %s", code, errs)
	}
}
