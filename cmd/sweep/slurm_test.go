package main

import (
	"os"
	"os/exec"
	"path/filepath"
	"sort"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/sweep-cfd/sweep/internal/studytest"
)

// needSlurm skips a test when no Slurm cluster answers, unless
// SWEEP_TEST_SLURM=1 says one must (CI starts one with scripts/slurm-local).
func needSlurm(t *testing.T) {
	t.Helper()
	if testing.Short() {
		t.Skip("Slurm tests skipped under -short")
	}
	err := exec.Command("sinfo", "-h").Run()
	if err != nil {
		if os.Getenv("SWEEP_TEST_SLURM") == "1" {
			t.Fatalf("SWEEP_TEST_SLURM=1 but no Slurm cluster answers (sinfo: %v); start one with scripts/slurm-local start", err)
		}
		t.Skip("no Slurm cluster here (start one with scripts/slurm-local start, as root)")
	}
}

// slurmStudy writes and plans a study on the Slurm backend.
func slurmStudy(t *testing.T, n int, stages string) string {
	t.Helper()
	dir := studytest.Write(t, "", studytest.Levels(n, "[backend]\nkind = \"slurm\"\npoll = \"1s\"\n"+stages), studytest.CaseFiles())
	if _, errs, code := sweep(t, "plan", dir); code != 0 {
		t.Fatalf("plan: %s", errs)
	}
	return dir
}

func lines(t *testing.T, path string) []string {
	b, _ := os.ReadFile(path)
	l := strings.Fields(string(b))
	sort.Strings(l)
	return l
}

// Ensure that a study runs to completion through sbatch, stages chained.
func TestSlurmStudy(t *testing.T) {
	needSlurm(t)
	dir := slurmStudy(t, 4, `
[[stage]]
name = "mesh"
run = "sh -c 'echo mesh-$SWEEP_PARAM_K > mesh.txt'"
[[stage]]
name = "solve"
run = "sh -c 'cat mesh.txt case.txt > out.txt; echo $SWEEP_VARIANT_LABEL >> ../../count'"
`)
	if _, errs, code := sweep(t, "run", dir, "-q"); code != 0 {
		t.Fatalf("run: %s", errs)
	}
	if s := status(t, dir); s.Counts.Done != 4 {
		t.Errorf("counts %+v", s.Counts)
	}
	b, _ := os.ReadFile(filepath.Join(dir, "variants", "v003", "out.txt"))
	if string(b) != "mesh-3\nk 3\n" {
		t.Errorf("out.txt %q: the stages did not run in order", b)
	}
	if got := strings.Join(lines(t, filepath.Join(dir, "count")), " "); got != "v001 v002 v003 v004" {
		t.Errorf("count %q", got)
	}
}

// Ensure that a job that exits non-zero is retried, then reported failed
// with its exit status, while the other variants finish.
func TestSlurmRetryThenFail(t *testing.T) {
	needSlurm(t)
	dir := slurmStudy(t, 2, `
[[stage]]
name = "solve"
retries = 1
run = "sh -c 'echo try >> ../../tries-$SWEEP_PARAM_K; [ $SWEEP_PARAM_K = 1 ] || exit 3'"
[[stage]]
name = "post"
run = "true"
`)
	_, _, code := sweep(t, "run", dir, "-q")
	if code != 1 {
		t.Errorf("exit status %d, want 1 (a variant failed)", code)
	}
	s := status(t, dir)
	if s.Counts.Done != 1 || s.Counts.Failed != 1 {
		t.Fatalf("counts %+v", s.Counts)
	}
	if n := len(lines(t, filepath.Join(dir, "tries-2"))); n != 2 {
		t.Errorf("the failing job ran %d times, want 2 (1 retry)", n)
	}
	out, _, _ := sweep(t, "status", dir)
	if !strings.Contains(out, "exit status 3") {
		t.Errorf("status does not give the exit status:\n%s", out)
	}
}

// Ensure that a job past its time limit is reported as a timeout.
func TestSlurmTimeout(t *testing.T) {
	needSlurm(t)
	dir := slurmStudy(t, 1, `
[[stage]]
name = "solve"
timeout = "5s"
run = "sleep 600"
`)
	sweep(t, "run", dir, "-q")
	out, _, _ := sweep(t, "status", dir)
	if !strings.Contains(out, "timed out (Slurm time limit)") {
		t.Errorf("status:\n%s", out)
	}
}

// Ensure that sweep killed between submission and completion, started
// again, finds its jobs and finishes the study without resubmitting
// completed jobs: every stage ran exactly once.
func TestSlurmKillAndResume(t *testing.T) {
	needSlurm(t)
	dir := slurmStudy(t, 4, `
[[stage]]
name = "solve"
run = "sh -c 'sleep 3; echo $SWEEP_VARIANT_LABEL >> ../../count'"
`)
	cmd := exec.Command(sweepBin, "run", dir, "-q")
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	time.Sleep(1500 * time.Millisecond)
	cmd.Process.Signal(syscall.SIGKILL)
	cmd.Wait()
	if s := status(t, dir); s.Counts.Done == 4 {
		t.Fatal("finished before the kill; the test proves nothing")
	}
	if _, errs, code := sweep(t, "run", dir, "-q"); code != 0 {
		t.Fatalf("resumed run: %s", errs)
	}
	if got := strings.Join(lines(t, filepath.Join(dir, "count")), " "); got != "v001 v002 v003 v004" {
		t.Errorf("ran %q; want each variant exactly once", got)
	}
}

// Ensure that sweep cancel leaves none of the study's jobs in squeue.
func TestSlurmCancel(t *testing.T) {
	needSlurm(t)
	dir := slurmStudy(t, 3, `
[[stage]]
name = "solve"
run = "sleep 600"
`)
	if _, errs, code := sweep(t, "run", dir, "--detach", "-q"); code != 0 {
		t.Fatalf("detached run: %s", errs)
	}
	if s := status(t, dir); s.Counts.Running != 3 {
		t.Fatalf("after --detach: %+v", s.Counts)
	}
	out, errs, code := sweep(t, "cancel", dir)
	if code != 0 || !strings.Contains(out, "cancelled 3 Slurm jobs") {
		t.Fatalf("cancel: %d %s %s", code, out, errs)
	}
	time.Sleep(2 * time.Second)
	q, _ := exec.Command("squeue", "-h", "-t", "pending,running,completing", "-o", "%j").Output()
	for _, name := range strings.Fields(string(q)) {
		if strings.HasPrefix(name, "sweep-") {
			t.Errorf("job %s still in squeue after cancel", name)
		}
	}
	if s := status(t, dir); s.Counts.Pending != 3 {
		t.Errorf("after cancel: %+v", s.Counts)
	}
}

// Ensure that the early stop works on Slurm through the stop-file route:
// a solver that writes a noisy history about 1.0 and ends when a file
// named STOP appears is stopped once its average has converged, and the
// job is recorded as done, stopped early.
func TestSlurmSettleFile(t *testing.T) {
	needSlurm(t)
	dir := slurmStudy(t, 1, `
[[quantity]]
name = "y"
files = "h.dat"
value = 2
tolerance = 0.002
[[stage]]
name = "solve"
shell = true
run = "echo '# t y' > h.dat; i=0; while [ ! -f STOP ] && [ $i -lt 600 ]; do awk -v s=$i 'BEGIN { srand(s + 1); for (k = 0; k < 500; k++) printf \"%d %.6f\\n\", s * 500 + k, 1 + 0.1 * (rand() - 0.5) }' >> h.dat; i=$((i+1)); sleep 0.1; done; [ -f STOP ]"
[stage.settle]
quantities = ["y"]
every = "1s"
min_samples = 2000
by = "file"
file = "STOP"
`)
	start := time.Now()
	if _, errs, code := sweep(t, "run", dir, "-q"); code != 0 {
		t.Fatalf("run: %s", errs)
	}
	if el := time.Since(start); el > 50*time.Second {
		t.Errorf("took %s: the early stop did not act", el)
	}
	out, _, _ := sweep(t, "status", dir, "--json")
	if !strings.Contains(out, `"state": "done"`) {
		t.Errorf("status: %s", out)
	}
	if _, err := os.Stat(filepath.Join(dir, "variants", "v001", "STOP")); err != nil {
		t.Errorf("no stop file: %v", err)
	}
}
