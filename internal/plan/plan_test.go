package plan

import (
	"context"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/store"
	"github.com/sweep-cfd/sweep/internal/studytest"
)

// study writes a study directory: a template with a rendered case file, a
// large unrendered file, a subdirectory and a link, and the recipe text.
func study(t *testing.T, text string) string {
	t.Helper()
	dir := studytest.Write(t, "", text, map[string]string{"case.txt": "radius {{.r}}\nshape {{.shape}}\n"})
	tpl := filepath.Join(dir, "template")
	must(t, os.MkdirAll(filepath.Join(tpl, "mesh"), 0o755))
	must(t, os.WriteFile(filepath.Join(tpl, "mesh", "points.bin"), make([]byte, 1<<20), 0o644))
	must(t, os.Symlink("mesh/points.bin", filepath.Join(tpl, "points.link")))
	return dir
}

func must(t *testing.T, err error) { t.Helper(); studytest.Must(t, err) }

const recipeText = `[case]
base = "template"
render = ["case.txt"]
[[param]]
name = "r"
min = 0.1
max = 0.3
steps = 3
[[param]]
name = "shape"
levels = ["round", "square"]
[design]
scheme = "factorial"
[[stage]]
name = "solve"
run = "true"
`

func load(t *testing.T, dir string) *recipe.Recipe {
	t.Helper()
	r, err := recipe.Load(filepath.Join(dir, recipe.FileName))
	if err != nil {
		t.Fatal(err)
	}
	return r
}

// Ensure that planning renders every variant, links large files instead
// of copying them, and records variants and jobs.
func TestPlanRenders(t *testing.T) {
	dir := study(t, recipeText)
	res, err := Plan(context.Background(), load(t, dir), Options{})
	if err != nil {
		t.Fatal(err)
	}
	if res.Added != 6 || res.Kept != 0 {
		t.Fatalf("added %d kept %d, want 6 and 0", res.Added, res.Kept)
	}
	// The factorial's first factor varies slowest: v004 is r = 0.2, square.
	b, err := os.ReadFile(filepath.Join(Dir(dir, "v004"), "case.txt"))
	must(t, err)
	if string(b) != "radius 0.2\nshape square\n" {
		t.Errorf("rendered case.txt = %q", b)
	}
	a, _ := os.Stat(filepath.Join(dir, "template", "mesh", "points.bin"))
	c, _ := os.Stat(filepath.Join(Dir(dir, "v004"), "mesh", "points.bin"))
	if !os.SameFile(a, c) {
		t.Error("the unrendered mesh file was copied, not hard-linked")
	}
	if l, err := os.Readlink(filepath.Join(Dir(dir, "v004"), "points.link")); err != nil || l != "mesh/points.bin" {
		t.Errorf("link = %q, %v", l, err)
	}
	st, err := store.OpenExisting(dir, store.Options{})
	must(t, err)
	defer st.Close()
	jobs := 0
	must(t, st.View(func(tx *store.Tx) error {
		return tx.Jobs(func(j store.Job) error {
			jobs++
			if j.State != store.Pending || j.Stage != "solve" {
				t.Errorf("job %+v", j)
			}
			return nil
		})
	}))
	if jobs != 6 {
		t.Errorf("%d jobs, want 6", jobs)
	}
}

// Ensure that planning again after editing the design keeps the planned
// variants, their directories and what was written in them, and adds
// only the new points.
func TestPlanIdempotent(t *testing.T) {
	dir := study(t, recipeText)
	_, err := Plan(context.Background(), load(t, dir), Options{})
	must(t, err)
	marker := filepath.Join(Dir(dir, "v001"), "result.dat")
	must(t, os.WriteFile(marker, []byte("42\n"), 0o644))
	text := strings.Replace(recipeText, "steps = 3", "steps = 5", 1) // 0.1, 0.15, 0.2, 0.25, 0.3
	must(t, os.WriteFile(filepath.Join(dir, recipe.FileName), []byte(text), 0o644))
	res, err := Plan(context.Background(), load(t, dir), Options{})
	must(t, err)
	if res.Added != 4 || res.Kept != 6 {
		t.Errorf("added %d kept %d, want 4 and 6", res.Added, res.Kept)
	}
	if b, err := os.ReadFile(marker); err != nil || string(b) != "42\n" {
		t.Errorf("an existing variant's file was lost: %q %v", b, err)
	}
	// The new labels continue the sequence.
	if _, err := os.Stat(Dir(dir, "v010")); err != nil {
		t.Errorf("v010 missing: %v", err)
	}
	res, err = Plan(context.Background(), load(t, dir), Options{})
	must(t, err)
	if res.Added != 0 || res.Kept != 10 {
		t.Errorf("third plan added %d kept %d, want 0 and 10", res.Added, res.Kept)
	}
}

// Ensure that a named point whose values changed is refused, and that the
// refusal writes nothing.
func TestPlanChangedNamedPoint(t *testing.T) {
	table := strings.Replace(recipeText, `scheme = "factorial"`, `scheme = "table"
points = [
  { name = "baseline", r = 0.1, shape = "round" },
  { r = 0.3, shape = "square" },
]`, 1)
	dir := study(t, table)
	_, err := Plan(context.Background(), load(t, dir), Options{})
	must(t, err)
	changed := strings.Replace(table, `name = "baseline", r = 0.1`, `name = "baseline", r = 0.2`, 1)
	changed = strings.Replace(changed, `{ r = 0.3, shape = "square" },`, `{ r = 0.3, shape = "square" },
  { r = 0.25, shape = "round" },`, 1)
	must(t, os.WriteFile(filepath.Join(dir, recipe.FileName), []byte(changed), 0o644))
	_, err = Plan(context.Background(), load(t, dir), Options{})
	if !errors.Is(err, ErrChanged) || !errors.Is(err, recipe.ErrInvalid) {
		t.Fatalf("err = %v, want ErrChanged", err)
	}
	if !strings.Contains(err.Error(), `study.toml:15: point "baseline" is variant v001, planned with r=0.1 shape=round; now r=0.2 shape=round`) {
		t.Errorf("message: %v", err)
	}
	if _, err := os.Stat(Dir(dir, "v003")); !os.IsNotExist(err) {
		t.Errorf("a refused plan rendered a new variant: %v", err)
	}
}

// Ensure that a placeholder naming no parameter is refused with the
// template file and line, before anything is written.
func TestPlanUnknownPlaceholder(t *testing.T) {
	dir := study(t, recipeText)
	must(t, os.WriteFile(filepath.Join(dir, "template", "case.txt"), []byte("radius {{.r}}\nangle {{.angel}}\n"), 0o644))
	_, err := Plan(context.Background(), load(t, dir), Options{})
	if err == nil || !errors.Is(err, recipe.ErrInvalid) {
		t.Fatalf("err = %v", err)
	}
	if !strings.Contains(err.Error(), "case.txt (line 2): {{.angel}} names no parameter of the recipe; known: r, shape") {
		t.Errorf("message: %v", err)
	}
	for _, p := range []string{VariantsDir, store.Dir} {
		if _, err := os.Stat(filepath.Join(dir, p)); !os.IsNotExist(err) {
			t.Errorf("%s written by a refused plan", p)
		}
	}
}

// Ensure that a binary file matched by a render pattern is refused.
func TestPlanBinaryRender(t *testing.T) {
	dir := study(t, strings.Replace(recipeText, `render = ["case.txt"]`, `render = ["case.txt", "*.bin"]`, 1))
	_, err := Plan(context.Background(), load(t, dir), Options{})
	if err == nil || !strings.Contains(err.Error(), "points.bin: matches a render pattern but is not UTF-8 text") {
		t.Fatalf("err = %v", err)
	}
}

// Ensure that a dry run reports the variants and writes nothing.
func TestPlanDryRun(t *testing.T) {
	dir := study(t, recipeText)
	res, err := Plan(context.Background(), load(t, dir), Options{DryRun: true})
	must(t, err)
	if res.Added != 6 || len(res.Rows) != 6 {
		t.Errorf("dry run: %+v", res)
	}
	for _, p := range []string{VariantsDir, store.Dir} {
		if _, err := os.Stat(filepath.Join(dir, p)); !os.IsNotExist(err) {
			t.Errorf("%s written by a dry run", p)
		}
	}
}

// Ensure that a study's parameter set cannot change under its variants.
func TestPlanParamsChanged(t *testing.T) {
	dir := study(t, recipeText)
	_, err := Plan(context.Background(), load(t, dir), Options{})
	must(t, err)
	text := strings.Replace(recipeText, "[design]", "[[param]]\nname = \"h\"\nlevels = [1]\n[design]", 1)
	must(t, os.WriteFile(filepath.Join(dir, recipe.FileName), []byte(text), 0o644))
	_, err = Plan(context.Background(), load(t, dir), Options{})
	if err == nil || !strings.Contains(err.Error(), "planned with the parameters [r, shape] and the recipe now declares [r, shape, h]") {
		t.Errorf("err = %v", err)
	}
}

// Ensure that a plan interrupted after moving directories into place but
// before recording them is completed by the next plan.
func TestPlanLeftoverDirectory(t *testing.T) {
	dir := study(t, recipeText)
	must(t, os.MkdirAll(filepath.Join(Dir(dir, "v002"), "junk"), 0o755))
	must(t, os.MkdirAll(filepath.Join(dir, VariantsDir, tempPrefix+"v009-123"), 0o755))
	_, err := Plan(context.Background(), load(t, dir), Options{})
	must(t, err)
	if _, err := os.Stat(filepath.Join(Dir(dir, "v002"), "junk")); !os.IsNotExist(err) {
		t.Error("a leftover directory was not replaced")
	}
	if _, err := os.Stat(filepath.Join(dir, VariantsDir, tempPrefix+"v009-123")); !os.IsNotExist(err) {
		t.Error("a leftover temporary directory was not removed")
	}
}

// Ensure that every design scheme the recipe accepts has a generator.
func TestGeneratorsMatchRecipe(t *testing.T) {
	for m := range recipe.Schemes {
		if generators[m] == nil && m != "table" {
			t.Errorf("scheme %q accepted by recipes but not generated", m)
		}
	}
}

// Ensure that the sampling and composite designs reach the planner with
// the documented sizes and properties, and that constraints hold for
// every planned point.
func TestPlanDesigns(t *testing.T) {
	base := `[case]
base = "template"
[[param]]
name = "r"
min = 0.0
max = 0.4
[[param]]
name = "taper"
min = 0.0
max = 20.0
[[stage]]
name = "s"
run = "true"
`
	cases := []struct {
		design string
		n      int
		note   string
	}{
		{"scheme = \"latin\"\ncount = 12\nseed = 3", 12, "maximin Latin hypercube"},
		{"scheme = \"sobol\"\ncount = 16\nseed = 1", 16, "Sobol'"},
		// A two-factor composite: 4 factorial + 4 axial + 3 centre runs, of
		// which the centre runs coincide and are planned once.
		{"scheme = \"composite\"\ncomposite = \"face\"", 9, "central composite (face"},
		{"scheme = \"one_at_a_time\"\nbaseline = { r = 0.2, taper = 10.0 }", 5, "one factor at a time"},
		{"scheme = \"latin\"\ncount = 12\nseed = 3\nconstraints = [\"r * 50 + taper < 25\"]", 12, "replaced"},
		{"scheme = \"composite\"\ncomposite = \"face\"\nconstraints = [\"r * 50 + taper <= 20\"]", 6, "dropped"},
	}
	for _, c := range cases {
		t.Run(strings.Fields(c.design)[2], func(t *testing.T) {
			dir := study(t, base+"[design]\n"+c.design+"\n")
			r := load(t, dir)
			res, err := Plan(context.Background(), r, Options{DryRun: true})
			if err != nil {
				t.Fatal(err)
			}
			if res.Added != c.n {
				t.Errorf("%d variants, want %d (%d duplicates)", res.Added, c.n, res.Duplicates)
			}
			if !strings.Contains(res.Design, c.note) {
				t.Errorf("note %q lacks %q", res.Design, c.note)
			}
			for _, row := range res.Rows {
				for _, con := range r.Design.Constraints {
					if ok, _ := con.Eval(r.Numbers(row.Values)); !ok {
						t.Errorf("point %v breaks %s", row.Values, con)
					}
				}
			}
		})
	}
}

// Ensure that templates can derive a setting from parameter values.
func TestTemplateArithmetic(t *testing.T) {
	dir := study(t, recipeText)
	must(t, os.WriteFile(filepath.Join(dir, "template", "case.txt"), []byte("nu {{div 0.125 (mul .r 100)}} {{.shape}}\n"), 0o644))
	_, err := Plan(context.Background(), load(t, dir), Options{})
	must(t, err)
	b, _ := os.ReadFile(filepath.Join(Dir(dir, "v003"), "case.txt")) // r = 0.2
	if string(b) != "nu 0.00625 round\n" {
		t.Errorf("case.txt = %q", b)
	}
}

// Ensure that a rendered file may not loop (a {{range}} could run without
// end or fill the disk) and that arithmetic that gives no finite number
// (a division by zero) stops the plan with the operation named, instead of
// writing "+Inf" into a case file.
func TestRenderRefusesLoopsAndInfinities(t *testing.T) {
	dir := study(t, recipeText)
	must(t, os.WriteFile(filepath.Join(dir, "template", "case.txt"), []byte("a\n{{range 1000000000}}x{{end}}\n"), 0o644))
	_, err := Plan(context.Background(), load(t, dir), Options{DryRun: true})
	if err == nil || !strings.Contains(err.Error(), "case.txt (line 2): {{range}} is not allowed in a rendered file") {
		t.Errorf("a loop: %v", err)
	}
	must(t, os.WriteFile(filepath.Join(dir, "template", "case.txt"), []byte("nu {{div 1 (sub .r 0.1)}}\n"), 0o644))
	_, err = Plan(context.Background(), load(t, dir), Options{})
	if err == nil || !strings.Contains(err.Error(), "div 1 0 is +Inf, not a finite number") {
		t.Errorf("a division by zero: %v", err)
	}
	if ents, _ := os.ReadDir(filepath.Join(dir, VariantsDir)); len(ents) != 0 {
		t.Errorf("the failed plan left %d entries in variants/", len(ents))
	}
}
