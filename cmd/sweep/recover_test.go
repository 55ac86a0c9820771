package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/sweep-cfd/sweep/internal/store"
	"github.com/sweep-cfd/sweep/internal/studytest"
)

func storeHeld(dir string) bool { return store.Held(dir) }

// smallStudy writes and plans a study of n variants with two scripted
// stages, and returns its directory.
func smallStudy(t *testing.T, n int) string {
	t.Helper()
	dir := studytest.Write(t, filepath.Join(t.TempDir(), "study"), studytest.Levels(n, `[[stage]]
name = "mesh"
run = "sh -c 'echo mesh > mesh.out'"
[[stage]]
name = "solve"
run = "sh -c 'echo solve >> ../../solve-count'"
`), studytest.CaseFiles())
	if _, errs, code := sweep(t, "plan", dir); code != 0 {
		t.Fatalf("plan: %s", errs)
	}
	return dir
}

// noCrash fails the test if a command's output shows a Go crash.
func noCrash(t *testing.T, what, errs string) {
	t.Helper()
	for _, sign := range []string{"panic:", "fatal error:", "goroutine ", "SIGBUS", "SIGSEGV"} {
		if strings.Contains(errs, sign) {
			t.Fatalf("%s crashed: %s", what, errs)
		}
	}
}

// Ensure that a damaged database is reported clearly by every command
// (no crash), that `recover` rebuilds it from the copy the run left,
// that without the copy it rebuilds from the variant directories and
// their logs, and that no finished stage runs again afterwards.
func TestRecoverDamagedDatabase(t *testing.T) {
	dir := smallStudy(t, 6)
	if _, errs, code := sweep(t, "run", dir, "-q"); code != 0 {
		t.Fatalf("run: %s", errs)
	}
	db := filepath.Join(dir, ".sweep", "study.db")
	for _, damage := range []string{"emptied", "truncated"} {
		t.Run(damage, func(t *testing.T) {
			switch damage {
			case "emptied":
				os.Truncate(db, 0)
			case "truncated":
				os.Truncate(db, 4096*2+100)
			}
			for _, args := range [][]string{{"status", dir}, {"run", dir}, {"plan", dir}, {"harvest", dir}, {"rank", dir}, {"report", dir}, {"reset", dir, "--failed"}} {
				_, errs, code := sweep(t, args...)
				noCrash(t, args[0], errs)
				if code == 0 || !strings.Contains(errs, "the study database is damaged") || !strings.Contains(errs, "sweep recover") {
					t.Errorf("%s on a damaged database: exit %d, %q", args[0], code, errs)
				}
			}
			out, errs, code := sweep(t, "recover", dir)
			if code != 0 {
				t.Fatalf("recover: %d %s", code, errs)
			}
			if !strings.Contains(out, "rebuilt from the copy of ") || !strings.Contains(out, "6 variants") || !strings.Contains(out, "stage jobs: 12 done") {
				t.Errorf("recover said:\n%s", out)
			}
			if s := status(t, dir); s.Counts.Done != 6 {
				t.Errorf("after recover: %+v", s.Counts)
			}
		})
	}
	t.Run("no copy", func(t *testing.T) {
		os.Truncate(db, 0)
		os.Remove(db + ".bak")
		out, errs, code := sweep(t, "recover", dir, "--json")
		if code != 0 {
			t.Fatalf("recover: %d %s", code, errs)
		}
		var res struct {
			Source   string `json:"Source"`
			Variants int    `json:"Variants"`
			Done     int    `json:"Done"`
			Pending  int    `json:"Pending"`
		}
		if err := json.Unmarshal([]byte(out), &res); err != nil {
			t.Fatal(err)
		}
		if res.Source != "the variant directories" || res.Variants != 6 || res.Done != 12 || res.Pending != 0 {
			t.Errorf("rebuilt from the directories: %+v", res)
		}
		if out, _, _ := sweep(t, "recover", dir); !strings.Contains(out, "sound (6 variants, 12 stage jobs)") {
			t.Errorf("second recover: %s", out)
		}
	})
	// Nothing ran twice through all of this.
	if _, errs, code := sweep(t, "run", dir, "-q"); code != 0 {
		t.Fatalf("run after recovery: %s", errs)
	}
	b, _ := os.ReadFile(filepath.Join(dir, "solve-count"))
	if n := strings.Count(string(b), "solve"); n != 6 {
		t.Errorf("the solve stage ran %d times in all, want 6", n)
	}
	damagedCopies, _ := filepath.Glob(db + ".damaged-*")
	if len(damagedCopies) != 3 {
		t.Errorf("kept aside %v; want each of the three damaged files", damagedCopies)
	}
}

// Ensure that `run --detach` on the local backend starts the run in the
// background and returns at once, that the run finishes there with its
// output in .sweep/run.log, and that `cancel` stops a background run as
// Ctrl-C would: its running stages are re-queued, and a later run
// finishes them.
func TestDetachedLocalRun(t *testing.T) {
	if testing.Short() {
		t.Skip("starts background runs")
	}
	dir := filepath.Join(t.TempDir(), "study")
	studytest.WriteFile(t, filepath.Join(dir, "template", "case.txt"), "k {{.k}}\n", 0o644)
	studytest.WriteFile(t, filepath.Join(dir, "study.toml"), `[case]
base = "template"
render = ["case.txt"]
[[param]]
name = "k"
levels = [1, 2, 3, 4]
[design]
scheme = "factorial"
[[stage]]
name = "solve"
run = "sh -c 'sleep 0.6; echo $SWEEP_VARIANT_LABEL >> ../../done'"
`, 0o644)
	if _, errs, code := sweep(t, "plan", dir); code != 0 {
		t.Fatalf("plan: %s", errs)
	}
	start := time.Now()
	out, errs, code := sweep(t, "run", dir, "--detach", "--cores", "2")
	if code != 0 || !strings.Contains(out, "the run goes on in the background (pid ") || !strings.Contains(out, "sweep cancel "+dir) {
		t.Fatalf("run --detach: exit %d, %q, %q", code, out, errs)
	}
	if el := time.Since(start); el > 3*time.Second {
		t.Errorf("run --detach took %s to return", el)
	}
	if _, errs, code := sweep(t, "run", dir, "--detach"); code == 0 || !strings.Contains(errs, "study is in use") {
		t.Errorf("a second detached run: exit %d, %q", code, errs)
	}
	out, errs, code = sweep(t, "cancel", dir)
	if code != 0 || !strings.Contains(out, "asked the run (pid") || !strings.Contains(out, "the run has ended") {
		t.Fatalf("cancel: exit %d, %q, %q", code, out, errs)
	}
	s := status(t, dir)
	if s.Counts.Running != 0 || s.Counts.Done == 4 {
		t.Errorf("after cancel: %+v", s.Counts)
	}
	log, _ := os.ReadFile(filepath.Join(dir, ".sweep", "run.log"))
	if !strings.Contains(string(log), "started in the background") {
		t.Errorf("run.log:\n%s", log)
	}
	if _, errs, code := sweep(t, "run", dir, "--detach"); code != 0 {
		t.Fatalf("second detached run: %s", errs)
	}
	for range 100 {
		if !storeHeld(dir) {
			break
		}
		time.Sleep(100 * time.Millisecond)
	}
	if s := status(t, dir); s.Counts.Done != 4 {
		t.Errorf("the background run did not finish the study: %+v\n%s", s.Counts, log)
	}
	b, _ := os.ReadFile(filepath.Join(dir, "done"))
	if n := strings.Count(string(b), "v0"); n != 4 {
		t.Errorf("%d stage ends for 4 variants, want 4 (the cancelled runs were stopped before their end)", n)
	}
}

// Ensure that planning says when a stage can never start on this machine
// (more cores than it has) and which quantity is the objective when
// several say which values are better.
func TestPlanWarnsCoresAndObjective(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "study")
	studytest.WriteFile(t, filepath.Join(dir, "template", "case.txt"), "k {{.k}}\n", 0o644)
	studytest.WriteFile(t, filepath.Join(dir, "study.toml"), `[case]
base = "template"
render = ["case.txt"]
[[param]]
name = "k"
levels = [1, 2]
[design]
scheme = "factorial"
[[quantity]]
name = "drag"
files = "f.dat"
value = 2
better = "lower"
[[quantity]]
name = "downforce"
files = "f.dat"
value = 3
better = "higher"
[[stage]]
name = "solve"
cores = 4096
run = "true"
`, 0o644)
	out, errs, code := sweep(t, "plan", dir, "--dry-run")
	if code != 0 {
		t.Fatalf("plan: %s", errs)
	}
	for _, want := range []string{`warning: study.toml:19: stage "solve" asks for 4096 cores and this machine has`,
		"objective: drag (lower is better); also directed: downforce (higher is better)"} {
		if !strings.Contains(out, want) {
			t.Errorf("plan does not say %q:\n%s", want, out)
		}
	}
}
