package main

import (
	"bufio"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/sweep-cfd/sweep/internal/plan"
	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/starter"
	"github.com/sweep-cfd/sweep/internal/studytest"
	"github.com/sweep-cfd/sweep/recipes"
)

// Ensure that `sweep lbm` ends cleanly on SIGTERM: status 0 within a
// second, every history line complete, so an early stop loses nothing.
func TestLbmStopsOnSIGTERM(t *testing.T) {
	dir := t.TempDir()
	if err := recipes.Write("box-demo", filepath.Join(dir, "s")); err != nil {
		t.Fatal(err)
	}
	tpl, _ := os.ReadFile(filepath.Join(dir, "s", "template", "case.toml"))
	text := strings.NewReplacer("{{.nose_radius}}", "0.2", "{{.taper_angle}}", "10", "end_time = 200.0", "end_time = 1000.0").Replace(string(tpl))
	studytest.WriteFile(t, filepath.Join(dir, "case.toml"), text, 0o644)
	cmd := exec.Command(sweepBin, "lbm", "case.toml")
	cmd.Dir = dir
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	time.Sleep(1500 * time.Millisecond)
	sent := time.Now()
	cmd.Process.Signal(syscall.SIGTERM)
	err := cmd.Wait()
	if took := time.Since(sent); took > time.Second {
		t.Errorf("took %s to stop after SIGTERM", took)
	}
	if err != nil {
		t.Errorf("exit after SIGTERM: %v, want status 0", err)
	}
	f, err := os.Open(filepath.Join(dir, "forces.dat"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	n := 0
	for sc.Scan() {
		if n == 0 {
			if sc.Text() != "# time Cd Cl" {
				t.Errorf("header %q", sc.Text())
			}
		} else if len(strings.Fields(sc.Text())) != 3 {
			t.Errorf("line %d incomplete: %q", n+1, sc.Text())
		}
		n++
	}
	if n < 10 {
		t.Errorf("only %d lines written", n)
	}
}

// Ensure that every shipped study (embedded or not) and the starter
// study are valid recipes in the current vocabulary whose base cases
// render (the recipes under recipes/ run as they are).
func TestShippedRecipes(t *testing.T) {
	ents, err := os.ReadDir("../../recipes")
	if err != nil {
		t.Fatal(err)
	}
	var names []string
	for _, e := range ents {
		if e.IsDir() {
			names = append(names, e.Name())
		}
	}
	if len(names) < len(recipes.Names())+1 {
		t.Fatalf("found only %v under recipes/", names)
	}
	names = append(names, "starter")
	for _, name := range names {
		t.Run(name, func(t *testing.T) {
			dir := filepath.Join(t.TempDir(), name)
			var err error
			switch {
			case name == "starter":
				err = starter.Write(dir)
			case slices.Contains(recipes.Names(), name):
				err = recipes.Write(name, dir)
			default:
				err = os.CopyFS(dir, os.DirFS(filepath.Join("../../recipes", name)))
			}
			if err != nil {
				t.Fatal(err)
			}
			r, err := recipe.Load(filepath.Join(dir, recipe.FileName))
			if err != nil {
				t.Fatal(err)
			}
			for i, st := range r.Stages {
				// An external solver that is not installed here: plan
				// the study with a stand-in program so the rest is checked.
				if _, err := exec.LookPath(st.Argv[0]); err != nil && st.Argv[0] != recipe.SelfProgram && os.Getenv("SWEEP_TEST_GERRIS") == "" {
					t.Logf("%s is not installed; planning with a stand-in for stage %s", st.Argv[0], st.Name)
					r.Stages[i].Argv = []string{"true"}
				}
			}
			res, err := plan.Plan(t.Context(), r, plan.Options{DryRun: true})
			if err != nil {
				t.Fatal(err)
			}
			if res.Added < 3 {
				t.Errorf("%d variants", res.Added)
			}
		})
	}
}

// Ensure that the demo study runs end to end with the built-in solver (for
// half its length, to keep the test short), that harvest and rank give what scripts read, and that a
// variant stopped because its average settled is judged the same by the
// harvest.
func TestDemoStudyRuns(t *testing.T) {
	if testing.Short() {
		t.Skip("runs nine solver cases (about 30 s)")
	}
	dir := filepath.Join(t.TempDir(), "demo")
	if err := recipes.Write("box-demo", dir); err != nil {
		t.Fatal(err)
	}
	casef := filepath.Join(dir, "template", "case.toml")
	b, _ := os.ReadFile(casef)
	// Half the run keeps the test short; it is still long enough for the
	// settle stop to act on the round-nosed variants (which settle by
	// t = 90 to 95 in the full demo).
	studytest.WriteFile(t, casef, strings.Replace(string(b), "end_time = 200.0", "end_time = 100.0", 1), 0o644)
	if _, errs, code := sweep(t, "plan", dir); code != 0 {
		t.Fatalf("plan: %s", errs)
	}
	if _, errs, code := sweep(t, "run", dir, "-q"); code != 0 {
		t.Fatalf("run: %s", errs)
	}
	if s := status(t, dir); s.Counts.Done != 9 {
		t.Errorf("counts %+v", s.Counts)
	}
	out, errs, code := sweep(t, "rank", dir, "--json")
	if code != 0 {
		t.Fatalf("rank: %s", errs)
	}
	var rows []map[string]any
	if err := json.Unmarshal([]byte(out), &rows); err != nil {
		t.Fatalf("rank --json: %v\n%s", err, out)
	}
	if len(rows) < 6 {
		t.Fatalf("only %d variants ranked:\n%s", len(rows), out)
	}
	for _, k := range []string{"id", "label", "params", "mean", "half_width", "verdict", "group"} {
		if _, ok := rows[0][k]; !ok {
			t.Errorf("rank --json rows lack %q", k)
		}
	}
	// Common practice: rounding a bluff body's front corners lowers its
	// drag. The best variant has the largest nose radius (0.4 H).
	if p := rows[0]["params"].(map[string]any); p["nose_radius"] != 0.4 {
		t.Errorf("best variant %v", p)
	}
	csv, _, code := sweep(t, "harvest", dir, "--csv")
	if code != 0 || !strings.HasPrefix(csv, "id,label,name,state,nose_radius,taper_angle,drag_mean") {
		t.Errorf("harvest --csv: %d %q", code, csv)
	}
	// One judge: every variant the run stopped because its drag had
	// settled (the marker in its log) is reported converged or steady by
	// the harvest too.
	hj, _, _ := sweep(t, "harvest", dir, "--json")
	var h struct {
		Variants []struct {
			Label   string `json:"label"`
			Results map[string]struct {
				Verdict string `json:"verdict"`
			} `json:"results"`
		} `json:"variants"`
	}
	if err := json.Unmarshal([]byte(hj), &h); err != nil {
		t.Fatal(err)
	}
	settled := 0
	for _, v := range h.Variants {
		log, _ := os.ReadFile(filepath.Join(dir, "variants", v.Label, "solve.log"))
		if !strings.Contains(string(log), "=== sweep: averages settled at ") {
			continue
		}
		settled++
		if vd := v.Results["drag"].Verdict; vd != "converged" && vd != "steady" {
			t.Errorf("%s was stopped because its drag settled, but harvest says %s", v.Label, vd)
		}
	}
	if settled == 0 {
		t.Error("no variant was stopped as settled; the check proves nothing")
	}
}

// Ensure that sweep stats prints the fields scripts read and recovers the
// mean of a known signal: a sinusoid of period 2.0 plus noise about 0.8,
// with an exponential start-up transient (a history of our own making).
func TestStatsJSON(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("# time Cd Cl\r\n")
	rng := rand.New(rand.NewPCG(3, 5))
	for i := range 40000 {
		tm := float64(i) * 0.01
		cd := 0.8 + 0.5*math.Exp(-tm/5) + 0.05*math.Sin(math.Pi*tm) + 0.01*rng.NormFloat64()
		fmt.Fprintf(&b, "%.2f %.6f 0\r\n", tm, cd)
	}
	b.WriteString("400.00 0.8") // cut off mid-write
	studytest.WriteFile(t, filepath.Join(dir, "forces.dat"), b.String(), 0o644)
	out, errs, code := sweep(t, "stats", filepath.Join(dir, "forces.dat"), "--column", "Cd", "--json")
	if code != 0 {
		t.Fatalf("stats: %d %s", code, errs)
	}
	var r map[string]any
	if err := json.Unmarshal([]byte(out), &r); err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{"mean", "half_width", "samples", "effective_samples", "transient_end", "verdict"} {
		if _, ok := r[k]; !ok {
			t.Errorf("stats --json lacks %q", k)
		}
	}
	mean, hw := r["mean"].(float64), r["half_width"].(float64)
	if math.Abs(mean-0.8) > hw || hw <= 0 || hw > 0.008 {
		t.Errorf("mean %.5f ± %.5f, true 0.8", mean, hw)
	}
	// The transient 0.5 e^(-t/5) is below the noise (0.01) after t ≈ 20.
	if te := r["transient_end"].(float64); te < 10 || te > 200 {
		t.Errorf("transient cut at %v", te)
	}
	if _, errs, code := sweep(t, "stats", filepath.Join(dir, "nothing.dat")); code == 0 || !strings.Contains(errs, "nothing.dat") {
		t.Errorf("missing file: %d %q", code, errs)
	}
}
