package main

import (
	"encoding/json"
	"math"
	"path/filepath"
	"strings"
	"testing"

	"github.com/sweep-cfd/sweep/internal/fit"
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
	writeFile(t, filepath.Join(dir, "template", "gen.awk"), `BEGIN { srand(seed); print "# t Cd"
  m = 1 + (a - 0.3)^2 + 2 * (b - 0.6)^2
  for (i = 1; i <= 4000; i++) printf "%d %.6f\n", i, m + 0.002 * (rand() - 0.5) }
`, 0o644)
	writeFile(t, filepath.Join(dir, "study.toml"), `[case]
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
