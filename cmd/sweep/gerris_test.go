package main

import (
	"encoding/csv"
	"encoding/json"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"testing"
)

// Ensure that a real external solver (Debian's gerris2D) runs a study
// through sweep end to end, its force columns summed and scaled by the
// generic reader, with physically sensible drag coefficients: each within
// 1.0 to 1.5 times the unbounded-stream value of Tritton (1959; values
// from memory, testdata/cylinder_drag_low_re.csv) — the channel's 12.5 %
// blockage raises the drag, common practice puts the rise at tens of per
// cent at these Reynolds numbers — and falling as the Reynolds number
// rises, as the measured curve does.
func TestExternalSolverCylinder(t *testing.T) {
	if testing.Short() {
		t.Skip("runs an external solver")
	}
	if _, err := exec.LookPath("gerris2D"); err != nil {
		if os.Getenv("SWEEP_TEST_GERRIS") == "1" {
			t.Fatal("SWEEP_TEST_GERRIS=1 but gerris2D is not installed (apt-get install gerris openmpi-bin)")
		}
		t.Skip("gerris2D not installed (apt-get install gerris openmpi-bin)")
	}
	dir := filepath.Join(t.TempDir(), "cyl")
	if err := exec.Command("cp", "-r", filepath.Join("..", "..", "recipes", "cylinder-gerris"), dir).Run(); err != nil {
		t.Fatal(err)
	}
	for _, args := range [][]string{{"plan", dir}, {"run", dir, "-q"}} {
		if _, errs, code := sweep(t, args...); code != 0 {
			// The temporary directory goes with the test: show the
			// solver's own words.
			logs, _ := filepath.Glob(filepath.Join(dir, "variants", "*", "solve.log"))
			for _, l := range logs {
				b, _ := os.ReadFile(l)
				if len(b) > 4000 {
					b = b[len(b)-4000:]
				}
				t.Logf("%s:\n%s", l, b)
			}
			t.Fatalf("%v: %s", args, errs)
		}
	}
	out, errs, code := sweep(t, "rank", dir, "--json")
	if code != 0 {
		t.Fatalf("rank: %s", errs)
	}
	var rows []struct {
		Params  map[string]float64 `json:"params"`
		Mean    float64            `json:"mean"`
		Verdict string             `json:"verdict"`
	}
	if err := json.Unmarshal([]byte(out), &rows); err != nil {
		t.Fatal(err)
	}
	ref := map[float64]float64{}
	f, _ := os.Open(filepath.Join("testdata", "cylinder_drag_low_re.csv"))
	cr := csv.NewReader(f)
	cr.Comment = '#'
	recs, _ := cr.ReadAll()
	f.Close()
	for _, r := range recs[1:] {
		re, _ := strconv.ParseFloat(r[0], 64)
		cd, _ := strconv.ParseFloat(r[1], 64)
		ref[re] = cd
	}
	if len(rows) != 3 {
		t.Fatalf("%d variants ranked: %s", len(rows), out)
	}
	// Ranked by drag, lowest first: the Reynolds numbers must come out
	// highest first (drag falls with Re).
	for i, r := range rows {
		re := r.Params["reynolds"]
		if ratio := r.Mean / ref[re]; ratio < 1.0 || ratio > 1.5 {
			t.Errorf("Re %g: Cd %.3f is %.2f times Tritton's %.2f", re, r.Mean, ratio, ref[re])
		}
		if i > 0 && re >= rows[i-1].Params["reynolds"] {
			t.Errorf("drag does not fall with the Reynolds number: %+v", rows)
		}
	}
}
