package results

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/sweep-cfd/sweep/internal/plan"
	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/records"
	"github.com/sweep-cfd/sweep/internal/runner"
	"github.com/sweep-cfd/sweep/internal/store"
	"github.com/sweep-cfd/sweep/internal/studytest"
)

const studyText = `[case]
base = "template"
[[param]]
name = "k"
levels = [1, 2, 3, 4]
[design]
scheme = "factorial"
[[quantity]]
name = "drag"
files = "hist*.dat"
value = "Fx"
scale = { density = 1.225, speed = 27.8, reference = 2.0 }
better = "lower"
relative_tolerance = 0.01
[[stage]]
name = "solve"
run = "true"
`

// history writes an AR(1) series (φ = 0.5, innovation sd 0.05) about the
// given mean, as a solver's force history in newtons (the recipe scales
// it by 1/(½ ρ U² A) = 1/946.729 with ρ = 1.225, U = 27.8, A = 2).
func history(t *testing.T, path string, mean float64, seed uint64) {
	t.Helper()
	studytest.AR1History(t, path, 20000, mean, 0.5, 0.05, 0.5*1.225*27.8*27.8*2.0, seed)
}

// setup plans a four-variant study, writes histories with known means for
// three variants, marks them done, and leaves the fourth never run.
func setup(t *testing.T, means []float64) (*recipe.Recipe, *store.Store) {
	t.Helper()
	dir := studytest.Write(t, "", studyText, nil)
	r, err := recipe.Load(filepath.Join(dir, recipe.FileName))
	if err != nil {
		t.Fatal(err)
	}
	if _, err := plan.Plan(context.Background(), r, plan.Options{}); err != nil {
		t.Fatal(err)
	}
	for i, m := range means {
		history(t, filepath.Join(plan.Dir(dir, plan.Label(uint64(i+1))), "hist.dat"), m, uint64(i+1))
	}
	st, err := store.OpenExisting(dir, store.Options{})
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { st.Close() })
	err = st.Update(func(tx *store.Tx) error {
		for i := range means {
			j, _, _ := tx.Job(uint64(i+1), 0)
			j.State, j.Attempts = store.Done, 1
			if err := tx.PutJob(j); err != nil {
				return err
			}
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return r, st
}

// Ensure that a harvest scales forces into coefficients, recovers the
// known means within their intervals, ranks them with significance
// groups, compares with a baseline, and writes the summaries.
func TestHarvestAndRank(t *testing.T) {
	means := []float64{1.100, 1.000, 1.0002}
	r, st := setup(t, means)
	vs, _, err := Harvest(context.Background(), r, st, planned(t, st), Options{})
	if err != nil {
		t.Fatal(err)
	}
	for i, m := range means {
		res := vs[i].Results["drag"]
		if res.Verdict != "converged" {
			t.Errorf("%s: verdict %s (%s)", vs[i].Label, res.Verdict, res.Message)
		}
		// Six standard errors: a failure here is a bug, not bad luck.
		if d := math.Abs(res.Mean - m); d > 6*res.StdError || res.StdError <= 0 {
			t.Errorf("%s: mean %.5f ± %.5f, true %.5f", vs[i].Label, res.Mean, res.HalfWidth, m)
		}
	}
	if vs[3].Results != nil {
		t.Errorf("a variant that never ran was harvested: %+v", vs[3].Results)
	}
	rk := Rank(vs, "drag", true, "v001")
	// v002 and v003 may come in either order: they are within noise.
	if len(rk.Rows) != 3 || rk.Rows[0].Label+rk.Rows[1].Label != "v002v003" && rk.Rows[0].Label+rk.Rows[1].Label != "v003v002" || rk.Rows[2].Label != "v001" {
		t.Fatalf("order: %+v", rk.Rows)
	}
	// 1.0000 and 1.0002 differ by well under their half-widths (~0.0015):
	// one group; 1.1 is apart.
	if rk.Rows[0].Group != rk.Rows[1].Group || strings.Contains(rk.Rows[2].Group, rk.Rows[0].Group) {
		t.Errorf("groups %q %q %q", rk.Rows[0].Group, rk.Rows[1].Group, rk.Rows[2].Group)
	}
	if len(rk.Excluded) != 1 || rk.Excluded[0].Label != "v004" {
		t.Errorf("excluded %+v", rk.Excluded)
	}
	// Against the baseline v001 (1.1): v002 is (1.0 − 1.1)/1.1 = −9.09 %.
	best := rk.Rows[0]
	if best.Label != "v002" {
		best = rk.Rows[1]
	}
	if best.ChangePercent == nil || math.Abs(*best.ChangePercent-(-9.0909)) > 0.5 || !*best.Significant {
		t.Errorf("baseline comparison %+v", best)
	}
	if math.Abs(*best.Delta-(-0.1)) > *best.DeltaHalfWidth*3 {
		t.Errorf("delta %.4f ± %.4f, true −0.1", *best.Delta, *best.DeltaHalfWidth)
	}
	// The JSON names that scripts read.
	b, _ := json.Marshal(rk.Rows[0])
	for _, k := range []string{`"id"`, `"label"`, `"params"`, `"mean"`, `"half_width"`, `"verdict"`, `"group"`} {
		if !strings.Contains(string(b), k+":") {
			t.Errorf("rank row JSON lacks %s: %s", k, b)
		}
	}
	csv, err := os.ReadFile(filepath.Join(r.Dir, Dir, "summary.csv"))
	if err != nil || !strings.HasPrefix(string(csv), "id,label,name,state,k,drag_mean,drag_half_width,drag_std_error,drag_samples") || strings.Count(string(csv), "\n") != 5 {
		t.Errorf("summary.csv: %v\n%s", err, csv)
	}
	// The harvest is kept in the database.
	again, err := Load(st, planned(t, st))
	if err != nil || again[1].Results["drag"].Mean != vs[1].Results["drag"].Mean {
		t.Errorf("reloaded: %v", err)
	}
}

// Ensure that a diverged run (NaN in its history) is reported as failed
// for that variant and left out of the ranking, without stopping the
// harvest of the others.
func TestHarvestNaN(t *testing.T) {
	r, st := setup(t, []float64{1.0, 1.05})
	p := filepath.Join(plan.Dir(r.Dir, "v002"), "hist.dat")
	f, _ := os.OpenFile(p, os.O_APPEND|os.O_WRONLY, 0)
	fmt.Fprintln(f, "20000 nan 0")
	f.Close()
	vs, _, err := Harvest(context.Background(), r, st, planned(t, st), Options{})
	if err != nil {
		t.Fatal(err)
	}
	if res := vs[1].Results["drag"]; res.Verdict != "failed" || !strings.Contains(res.Message, "hist.dat:20002") {
		t.Errorf("NaN run: %+v", res)
	}
	rk := Rank(vs, "drag", true, "")
	if len(rk.Rows) != 1 || rk.Rows[0].Label != "v001" {
		t.Errorf("rows %+v", rk.Rows)
	}
}

// planned reads the study's rendered variants with their jobs and states
// from the database, as the study layer's status gives them.
func planned(t *testing.T, st *store.Store) []Variant {
	t.Helper()
	var vs []Variant
	idx := map[uint64]int{}
	err := st.View(func(tx *store.Tx) error {
		if err := tx.Variants(func(v store.Variant) error {
			if v.Rendered {
				idx[v.Seq] = len(vs)
				vs = append(vs, Variant{ID: v.ID, Label: v.Label, Name: v.Name, Seq: v.Seq, Values: records.RecipeValues(v.Values), Params: map[string]any{}})
			}
			return nil
		}); err != nil {
			return err
		}
		return tx.Jobs(func(j store.Job) error {
			if i, ok := idx[j.Variant]; ok {
				vs[i].Jobs = append(vs[i].Jobs, j)
			}
			return nil
		})
	})
	if err != nil {
		t.Fatal(err)
	}
	for i := range vs {
		var ptrs []*store.Job
		for k := range vs[i].Jobs {
			ptrs = append(ptrs, &vs[i].Jobs[k])
		}
		vs[i].State = runner.VariantState(ptrs)
	}
	return vs
}
