package main

import (
	"encoding/csv"
	"encoding/json"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/sweep-cfd/sweep/internal/studytest"
)

// Ensure that harvesting while a run goes on says which variants still
// run and keeps their state out of the summary (unless asked), that their
// verdict is running, and that the statistics of a quantity's cycles
// (statistics = [...]) are harvested, written and ranked like any
// quantity, with the values the scripted history holds: a lift of
// amplitude 0.4 and period 2 (St = f L/U = 0.5·0.1/1 = 0.05).
func TestHarvestWhileRunningAndCycleStatistics(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a study in the background")
	}
	dir := filepath.Join(t.TempDir(), "study")
	studytest.WriteFile(t, filepath.Join(dir, "template", "gen.awk"), `BEGIN { srand(seed); print "# t Cd Cl"
  for (i = 0; i < 4000; i++) { t = i * 0.05
    printf "%.3f %.6f %.6f\n", t, 1 + 0.1 * a + 0.02 * sin(2 * 3.14159265358979 * t) + 0.001 * (rand() - 0.5), 0.4 * sin(3.14159265358979 * t) } }
`, 0o644)
	studytest.WriteFile(t, filepath.Join(dir, "study.toml"), `[case]
base = "template"
[[param]]
name = "a"
levels = [1, 2, 3]
[design]
scheme = "factorial"
[[quantity]]
name = "drag"
files = "h.dat"
value = "Cd"
better = "lower"
[[quantity]]
name = "lift"
files = "h.dat"
value = "Cl"
statistics = ["amplitude", "max", "strouhal"]
strouhal = { length = 0.1, speed = 1.0 }
[[stage]]
name = "solve"
shell = true
run = "awk -v a=$SWEEP_PARAM_A -v seed=${SWEEP_VARIANT_LABEL#v} -f gen.awk > h.dat; if [ $SWEEP_VARIANT_LABEL = v002 ]; then while [ ! -e ../../release ]; do sleep 0.1; done; fi"
`, 0o644)
	if _, errs, code := sweep(t, "plan", dir); code != 0 {
		t.Fatalf("plan: %s", errs)
	}
	run := exec.Command(sweepBin, "run", dir, "-q")
	if err := run.Start(); err != nil {
		t.Fatal(err)
	}
	defer run.Process.Kill()
	for range 200 {
		if s := status(t, dir); s.Counts.Done == 2 && s.Counts.Running == 1 {
			break
		}
		time.Sleep(50 * time.Millisecond)
	}
	out, errs, code := sweep(t, "harvest", dir, "--json")
	if code != 0 || !strings.Contains(errs, "still running: v002; results/summary.* keep their last finished harvest") {
		t.Fatalf("harvest during the run: exit %d, %q", code, errs)
	}
	var h struct {
		Variants []struct {
			Label   string `json:"label"`
			Results map[string]struct {
				Verdict   string   `json:"verdict"`
				Mean      *float64 `json:"mean"`
				HalfWidth *float64 `json:"half_width"`
			} `json:"results"`
		} `json:"variants"`
	}
	if err := json.Unmarshal([]byte(out), &h); err != nil {
		t.Fatal(err)
	}
	if v := h.Variants[1].Results["drag"]; v.Verdict != "running" {
		t.Errorf("v002 while it runs: %+v", v)
	}
	rows := readCSV(t, filepath.Join(dir, "results", "summary.csv"))
	if rows[2][1] != "v002" || rows[2][3] != "running" || rows[2][col(rows[0], "drag_mean")] != "" {
		t.Errorf("summary row of the running variant: %v", rows[2])
	}
	os.WriteFile(filepath.Join(dir, "release"), nil, 0o644)
	if err := run.Wait(); err != nil {
		t.Fatalf("run: %v", err)
	}
	if _, errs, code := sweep(t, "harvest", dir); code != 0 || strings.Contains(errs, "still running") {
		t.Fatalf("harvest after the run: %d %s", code, errs)
	}
	rows = readCSV(t, filepath.Join(dir, "results", "summary.csv"))
	for _, name := range []string{"lift_amplitude_mean", "lift_max_mean", "lift_strouhal_mean"} {
		if col(rows[0], name) < 0 {
			t.Fatalf("summary lacks %s: %v", name, rows[0])
		}
	}
	for _, row := range rows[1:] {
		for name, want := range map[string]float64{"lift_amplitude_mean": 0.8, "lift_max_mean": 0.4, "lift_strouhal_mean": 0.05} {
			var got float64
			if err := json.Unmarshal([]byte(row[col(rows[0], name)]), &got); err != nil || math.Abs(got-want) > 0.01*want {
				t.Errorf("%s %s = %q, want %v within 1 %%", row[1], name, row[col(rows[0], name)], want)
			}
		}
	}
	if out, errs, code := sweep(t, "rank", dir, "--by", "lift_max", "--json"); code != 0 || !strings.Contains(out, `"quantity"`) && !strings.Contains(out, `"label"`) {
		t.Errorf("rank --by lift_max: %d %s %s", code, out, errs)
	}
}

func readCSV(t *testing.T, path string) [][]string {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	return rows
}

func col(header []string, name string) int {
	for i, h := range header {
		if h == name {
			return i
		}
	}
	return -1
}
