package recipe_test

import (
	"errors"
	"math"
	"os"
	"path/filepath"
	"testing"

	"github.com/sweep-cfd/sweep/internal/plan"
	"github.com/sweep-cfd/sweep/internal/recipe"
)

// fuzzStudy makes a study directory for the recipe fuzzer: a base case
// with a rendered file and a script, a design table, and an existing
// variants directory, so that the checks of every part of a recipe reach
// real files.
func fuzzStudy(f *testing.F) string {
	dir := f.TempDir()
	for name, text := range map[string]string{
		"template/case.txt":      "r {{.r}}\n",
		"template/run.sh":        "#!/bin/sh\n",
		"points.csv":             "name,r,shape\nbase,0.1,round\n,0.2,square\n",
		"variants/v001/case.txt": "r 0.1\n",
	} {
		p := filepath.Join(dir, filepath.FromSlash(name))
		if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
			f.Fatal(err)
		}
		if err := os.WriteFile(p, []byte(text), 0o755); err != nil {
			f.Fatal(err)
		}
	}
	return dir
}

// Seeds of the recipe fuzzer beside those in testdata/fuzz/FuzzParse.
var fuzzRecipes = []string{
	`[case]
base = "template"
render = ["case.txt"]
[[param]]
name = "r"
min = 0
max = 0.4
steps = 3
[[param]]
name = "shape"
levels = ["round", "square"]
[design]
scheme = "factorial"
[[stage]]
name = "solve"
run = "./run.sh -v"
continue = "./run.sh --restart"
[[quantity]]
name = "drag"
files = "forces*.dat"
time = "time"
value = ["Fx_p", {column = 3, factor = -1}]
scale = { density = 1.2, speed = 10, reference = 0.5 }
better = "lower"
relative_tolerance = 0.01
[stage.settle]
quantities = ["drag"]
every = "10s"
`,
	`[case]
base = "template"
[[param]]
name = "r"
min = 0
max = 1
[[param]]
name = "shape"
levels = ["round", "square"]
[design]
scheme = "table"
file = "points.csv"
[[stage]]
name = "s"
run = "true"
`,
	`[case]
base = "template"
[[param]]
name = "a"
min = 1
max = 100
log = true
[[param]]
name = "b"
levels = [1, 2, 4]
[design]
scheme = "sobol"
count = 8
seed = 3
constraints = ["a * b < 200", "log(a) > 0.1"]
[[stage]]
name = "s"
run = "sh -c 'exit 0'"
shell = true
cores = 2
timeout = "1h"
[backend]
kind = "slurm"
partition = "short"
extra = ["--constraint=ib"]
`,
	`[case]
base = "template"
[[param]]
name = "a"
min = 0
max = 1
[[param]]
name = "b"
min = 0
max = 1
[[param]]
name = "c"
levels = [0, 1]
[design]
scheme = "one_at_a_time"
baseline = {a = 0.2, b = 0.9, c = 1}
[[stage]]
name = "s"
run = "true"
`,
	"[case]\nbase = \".\"\n[[param]]\nname = \"r\"\nmin = nan\nmax = inf\n[design]\nscheme = \"morris\"\ntrajectories = 3\ngrid_levels = 6\n[[stage]]\nname = \"s\"\nrun = \"x\"\n",
	"[case]\nbase = \"template\"\n[[param]]\nname = \"r\"\nmin = 0\nmax = 1\n[[param]]\nname = \"q\"\nmin = 0\nmax = 1\n[design]\nscheme = \"composite\"\ncomposite = \"face\"\ncentre = 2\n[[stage]]\nname = \"s\"\nrun = \"true\"\n",
	"\xff\xfe",
	"[[param]\n",
}

// FuzzParse checks that no recipe text crashes the loader: Parse returns
// a recipe or an error, never both or neither; an error is a list of
// located recipe problems; an accepted recipe keeps the promises of its
// checks (finite ranges of some width, designs within the stated limits)
// and, when its design is small, gives points that are values of its
// parameters.
func FuzzParse(f *testing.F) {
	dir := fuzzStudy(f)
	path := filepath.Join(dir, recipe.FileName)
	for _, s := range fuzzRecipes {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		r, err := recipe.Parse(path, data)
		if (r == nil) == (err == nil) {
			t.Fatalf("recipe %v and error %v", r != nil, err)
		}
		if err != nil {
			var es recipe.Errors
			if !errors.As(err, &es) || len(es) == 0 {
				t.Fatalf("error %T is not a list of recipe problems: %v", err, err)
			}
			if !errors.Is(err, recipe.ErrInvalid) {
				t.Fatalf("error does not match ErrInvalid: %v", err)
			}
			for _, e := range es {
				if e.File == "" || e.Msg == "" || e.Line < 0 {
					t.Fatalf("problem without a place or a text: %+v", e)
				}
			}
			return
		}
		checkAccepted(t, r)
		_ = r.CheckCommands() // may refuse, must not crash
		if !small(r) {
			return
		}
		pts, _, err := plan.Points(r)
		if err != nil {
			if !errors.Is(err, recipe.ErrInvalid) {
				t.Fatalf("design of an accepted recipe: %v", err)
			}
			return
		}
		for i, pt := range pts {
			if len(pt.Values) != len(r.Params) {
				t.Fatalf("point %d has %d values for %d parameters", i+1, len(pt.Values), len(r.Params))
			}
			for j, p := range r.Params {
				if ok, why := p.Check(pt.Values[j]); !ok {
					t.Fatalf("point %d (%s): %s = %s %s", i+1, pt.Where, p.Name, pt.Values[j], why)
				}
			}
		}
	})
}

// checkAccepted checks what Parse promises of a recipe it accepts.
func checkAccepted(t *testing.T, r *recipe.Recipe) {
	t.Helper()
	if len(r.Params) == 0 || len(r.Params) > recipe.MaxParams || len(r.Stages) == 0 {
		t.Fatalf("%d parameters, %d stages", len(r.Params), len(r.Stages))
	}
	for _, p := range r.Params {
		switch p.Kind {
		case recipe.Range:
			if math.IsNaN(p.Min) || math.IsInf(p.Min, 0) || math.IsInf(p.Max, 0) || !(p.Min < p.Max) {
				t.Fatalf("parameter %s: range [%g, %g]", p.Name, p.Min, p.Max)
			}
			if p.Steps != 0 && (p.Steps < 2 || p.Steps > recipe.MaxSteps) {
				t.Fatalf("parameter %s: steps %d", p.Name, p.Steps)
			}
		case recipe.Levels:
			if len(p.Values) == 0 || len(p.Values) > recipe.MaxLevels {
				t.Fatalf("parameter %s: %d levels", p.Name, len(p.Values))
			}
			for _, v := range p.Values {
				if math.IsNaN(v) || math.IsInf(v, 0) {
					t.Fatalf("parameter %s: level %g", p.Name, v)
				}
			}
		case recipe.Choice:
			if len(p.Choices) == 0 || len(p.Choices) > recipe.MaxLevels {
				t.Fatalf("parameter %s: %d choices", p.Name, len(p.Choices))
			}
		}
	}
	for _, s := range r.Stages {
		if len(s.Argv) == 0 {
			t.Fatalf("stage %s has no command", s.Name)
		}
	}
	d := r.Design
	if size := designSize(r); size > recipe.MaxVariants {
		t.Fatalf("design %s of %g points accepted", d.Scheme, size)
	}
	if d.Scheme == "latin" && d.Count > recipe.MaxLatinPoints {
		t.Fatalf("latin design of %d points accepted", d.Count)
	}
	if d.Centre > recipe.MaxCentre || d.GridLevels > recipe.MaxGridLevels || len(d.Constraints) > recipe.MaxConstraints {
		t.Fatalf("design settings over the limits: %+v", d)
	}
	for _, q := range r.Quantities {
		if q.Spec.Files != "" && q.Spec.Validate() != nil {
			t.Fatalf("quantity %s: %v", q.Name, q.Spec.Validate())
		}
		if s := q.Opts.Start; s != nil && (math.IsNaN(*s) || math.IsInf(*s, 0)) {
			t.Fatalf("quantity %s: start %g", q.Name, *s)
		}
		if !(q.Opts.Abs >= 0) || !(q.Opts.Rel >= 0) || math.IsInf(q.Opts.Abs, 0) || math.IsInf(q.Opts.Rel, 0) {
			t.Fatalf("quantity %s: tolerances %g, %g", q.Name, q.Opts.Abs, q.Opts.Rel)
		}
	}
}

// designSize is the number of points of a generated design, or of a
// table's rows.
func designSize(r *recipe.Recipe) float64 {
	d := r.Design
	k := float64(len(r.Params))
	switch d.Scheme {
	case "factorial":
		n := 1.0
		for _, p := range r.Params {
			n *= float64(p.Levels(d.Steps))
		}
		return n
	case "latin", "sobol":
		return float64(d.Count)
	case "composite":
		return math.Pow(2, k) + 2*k + float64(d.Centre)
	case "box_behnken":
		return 56 + float64(d.Centre) // the largest, of 7 parameters
	case "one_at_a_time":
		return 1 + 2*k
	case "morris":
		return float64(d.Trajectories) * (k + 1)
	}
	return float64(len(d.Points))
}

// small reports whether the recipe's design is quick enough to generate
// on every input of the fuzzer: the latin search and the discrepancy of a
// sobol design grow with the square of the count.
func small(r *recipe.Recipe) bool {
	switch r.Design.Scheme {
	case "latin":
		return r.Design.Count <= 4
	case "sobol":
		return r.Design.Count <= 256
	}
	return designSize(r) <= 4096
}
