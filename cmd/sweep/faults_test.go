package main

import (
	"bytes"
	"fmt"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"

	"github.com/sweep-cfd/sweep/internal/studytest"
)

// The fault campaign: each sub-test injects one kind of fault into real
// studies run by the program as a user runs it, and logs one line of
// figures ("FAULT kind=... injected=... variants=... completed=...
// lost=... repeated=... panics=..."), which scripts/faults collects into a
// table. Lost variants, repeated stage runs and crashes must all be 0.
//
// Every stage appends "start LABEL STAGE" and "end LABEL STAGE" to the
// study's ledger file, so a stage run that was cut short (a start without
// its end) or run again (two starts) shows.

type faultFigures struct {
	kind                         string
	injected, variants           int
	completed, lost, repeated    int
	panics                       int
	note                         string
	allowRepeat, allowIncomplete bool
}

// crashSigns are what a Go crash prints.
var crashSigns = []string{"panic:", "fatal error:", "goroutine ", "[signal SIG", "runtime error"}

func crashed(out string) bool {
	for _, s := range crashSigns {
		if strings.Contains(out, s) {
			return true
		}
	}
	return false
}

// campaign runs the program and counts crashes in what it prints.
type campaign struct {
	t      *testing.T
	mu     sync.Mutex
	panics int
}

func (c *campaign) sweep(args ...string) (string, string, int) {
	c.t.Helper()
	out, errs, code := sweep(c.t, args...)
	if crashed(out + errs) {
		c.mu.Lock()
		c.panics++
		c.mu.Unlock()
		c.t.Errorf("sweep %s crashed: %s", strings.Join(args, " "), errs)
	}
	return out, errs, code
}

// ledgerStage returns a stage command that records its start and end.
func ledgerStage(body string) string {
	return `sh -c 'echo start $SWEEP_VARIANT_LABEL $SWEEP_STAGE >> ../../ledger; ` + body + `; echo end $SWEEP_VARIANT_LABEL $SWEEP_STAGE >> ../../ledger'`
}

// faultStudy writes and plans a study of n variants (k = 1..n) with the
// given stage tables.
func (c *campaign) faultStudy(dir string, n int, stages string) string {
	c.t.Helper()
	studytest.Write(c.t, dir, studytest.Levels(n, stages), studytest.CaseFiles())
	if _, errs, code := c.sweep("plan", dir); code != 0 {
		c.t.Fatalf("plan: %s", errs)
	}
	return dir
}

// tally reads the ledger and the final status of a study.
func (c *campaign) tally(dir string, f *faultFigures, stages []string) {
	c.t.Helper()
	b, _ := os.ReadFile(filepath.Join(dir, "ledger"))
	starts, ends := map[string]int{}, map[string]int{}
	for _, line := range strings.Split(strings.TrimSpace(string(b)), "\n") {
		fs := strings.Fields(line)
		if len(fs) != 3 {
			continue
		}
		key := fs[1] + "/" + fs[2]
		if fs[0] == "start" {
			starts[key]++
		} else {
			ends[key]++
		}
	}
	s := status(c.t, dir)
	f.variants = len(s.Variants)
	for _, v := range s.Variants {
		if v.State == "done" {
			f.completed++
		} else if !f.allowIncomplete {
			f.lost++
		}
		for _, st := range stages {
			n := starts[v.Label+"/"+st]
			if n > 1 && !f.allowRepeat {
				f.repeated += n - 1
			}
			if n > ends[v.Label+"/"+st] && v.State == "done" && !f.allowRepeat {
				f.repeated++ // a run cut short before its end
			}
		}
	}
	if log, err := os.ReadFile(filepath.Join(dir, ".sweep", "executor.log")); err == nil && crashed(string(log)) {
		c.panics++
		c.t.Errorf("the executor crashed: %s", log)
	}
}

func (c *campaign) report(f faultFigures) {
	c.t.Helper()
	f.panics = c.panics
	c.t.Logf("FAULT kind=%s injected=%d variants=%d completed=%d lost=%d repeated=%d panics=%d note=%q",
		f.kind, f.injected, f.variants, f.completed, f.lost, f.repeated, f.panics, f.note)
	if f.lost != 0 || f.repeated != 0 || f.panics != 0 {
		c.t.Errorf("%s: %d lost, %d repeated, %d panics; all must be 0", f.kind, f.lost, f.repeated, f.panics)
	}
}

func TestFaultCampaign(t *testing.T) {
	if testing.Short() {
		t.Skip("the fault campaign takes a few minutes")
	}
	t.Run("runner-sigkill", faultKills)
	t.Run("sighup", faultHangup)
	t.Run("solver-killed", faultSolverKilled)
	t.Run("timeout-with-children", faultHang)
	t.Run("retry-then-succeed", faultRetry)
	t.Run("always-fail", faultAlwaysFail)
	t.Run("stdout-100MB", faultBigOutput)
	t.Run("full-disk", faultFullDisk)
	t.Run("damaged-database", faultDamagedDB)
	t.Run("database-copied-during-run", faultCopiedDB)
}

// At least 20 SIGKILLs of the runner at random moments of a 100-variant,
// two-stage study (each followed by a new run; a second run started
// meanwhile must be refused): nothing lost, no stage run repeated or cut
// short.
func faultKills(t *testing.T) {
	c := &campaign{t: t}
	dir := c.faultStudy(t.TempDir(), 100, `
[[stage]]
name = "mesh"
run = "`+strings.ReplaceAll(ledgerStage(`sleep 0.0$((SWEEP_PARAM_K % 9 + 1))`), `"`, `\"`)+`"
[[stage]]
name = "solve"
run = "`+strings.ReplaceAll(ledgerStage(`sleep 0.$((SWEEP_PARAM_K % 3 + 1))`), `"`, `\"`)+`"
`)
	rng := rand.New(rand.NewPCG(2026, 12))
	f := faultFigures{kind: "runner-sigkill"}
	refused := 0
	for f.injected < 24 {
		cmd := exec.Command(sweepBin, "run", dir, "--cores", "2", "-q")
		var errb bytes.Buffer
		cmd.Stderr = &errb
		if err := cmd.Start(); err != nil {
			t.Fatal(err)
		}
		wait := time.Duration(150+rng.IntN(900)) * time.Millisecond
		if rng.IntN(4) == 0 {
			time.Sleep(wait / 2)
			if _, errs, code := c.sweep("run", dir); code != 0 && strings.Contains(errs, "study is in use") {
				refused++
			} else {
				t.Errorf("a second run at the same time was not refused: %d %s", code, errs)
			}
			wait /= 2
		}
		time.Sleep(wait)
		done := cmd.ProcessState != nil
		cmd.Process.Signal(syscall.SIGKILL)
		cmd.Wait()
		if crashed(errb.String()) {
			c.panics++
		}
		if done {
			break
		}
		f.injected++
		if s := status(t, dir); s.Counts.Done == 100 {
			break
		}
	}
	if _, errs, code := c.sweep("run", dir, "--cores", "2", "-q"); code != 0 {
		t.Fatalf("final run: %s", errs)
	}
	c.tally(dir, &f, []string{"mesh", "solve"})
	f.note = "each kill followed by a new run, which took the running stages over"
	c.report(f)
	two := f
	two.kind, two.injected, two.note = "two-runs-at-once", refused, "a second run on the same study is refused at once, naming the holder"
	if refused == 0 {
		t.Error("no second run was tried")
	}
	c.report(two)
	if f.injected < 20 {
		t.Errorf("only %d kills injected before the study finished; the campaign needs 20", f.injected)
	}
}

// SIGHUP (a closed terminal) does not stop the run: it goes on, writing
// to .sweep/run.log, and finishes.
func faultHangup(t *testing.T) {
	c := &campaign{t: t}
	dir := c.faultStudy(t.TempDir(), 8, `
[[stage]]
name = "solve"
run = "`+strings.ReplaceAll(ledgerStage(`sleep 0.4`), `"`, `\"`)+`"
`)
	cmd := exec.Command(sweepBin, "run", dir, "--cores", "2")
	stdout, _ := cmd.StdoutPipe()
	stderr, _ := cmd.StderrPipe()
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	time.Sleep(500 * time.Millisecond)
	cmd.Process.Signal(syscall.SIGHUP)
	time.Sleep(300 * time.Millisecond)
	stdout.Close()
	stderr.Close()
	err := cmd.Wait()
	f := faultFigures{kind: "sighup", injected: 1}
	if err != nil {
		t.Errorf("the run ended with %v after SIGHUP; it must go on and finish", err)
	}
	log, _ := os.ReadFile(filepath.Join(dir, ".sweep", "run.log"))
	if !bytes.Contains(log, []byte("the terminal closed")) || !bytes.Contains(log, []byte("8 of 8 variants done")) {
		t.Errorf("run.log after SIGHUP:\n%s", log)
	}
	c.tally(dir, &f, []string{"solve"})
	f.note = "the run went on, writing to .sweep/run.log"
	c.report(f)
}

// A solver killed from outside is a failed attempt: retried as the recipe
// allows, while the other variants go on.
func faultSolverKilled(t *testing.T) {
	c := &campaign{t: t}
	dir := c.faultStudy(t.TempDir(), 4, `
[[stage]]
name = "solve"
retries = 1
shell = true
run = "echo start $SWEEP_VARIANT_LABEL $SWEEP_STAGE >> ../../ledger; if [ $SWEEP_PARAM_K = 2 ] && [ ! -e pid ]; then echo $$ > pid; sleep 30; fi; sleep 0.2; echo end $SWEEP_VARIANT_LABEL $SWEEP_STAGE >> ../../ledger"
`)
	cmd := exec.Command(sweepBin, "run", dir, "--cores", "2", "-q")
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	pidFile := filepath.Join(dir, "variants", "v002", "pid")
	var pid int
	for range 100 {
		if b, err := os.ReadFile(pidFile); err == nil && len(bytes.TrimSpace(b)) > 0 {
			pid, _ = strconv.Atoi(strings.TrimSpace(string(b)))
			break
		}
		time.Sleep(50 * time.Millisecond)
	}
	if pid == 0 {
		t.Fatal("the solver never wrote its pid")
	}
	syscall.Kill(pid, syscall.SIGKILL)
	if err := cmd.Wait(); err != nil {
		t.Errorf("run: %v", err)
	}
	f := faultFigures{kind: "solver-killed", injected: 1, allowRepeat: true}
	c.tally(dir, &f, []string{"solve"})
	log, _ := os.ReadFile(filepath.Join(dir, "variants", "v002", "solve.log"))
	if !bytes.Contains(log, []byte("killed by signal: killed")) || !bytes.Contains(log, []byte("attempt 2")) {
		t.Errorf("the killed solver's log:\n%s", log)
	}
	f.note = "the killed attempt was retried (retries = 1)"
	c.report(f)
}

// processesOf returns the PIDs of processes whose environment names the
// study directory.
func processesOf(dir string) []int {
	want := []byte("SWEEP_STUDY_DIR=" + dir + "\x00")
	ents, _ := os.ReadDir("/proc")
	var pids []int
	for _, e := range ents {
		pid, err := strconv.Atoi(e.Name())
		if err != nil {
			continue
		}
		env, err := os.ReadFile("/proc/" + e.Name() + "/environ")
		if err == nil && bytes.Contains(env, want) {
			pids = append(pids, pid)
		}
	}
	return pids
}

// A solver that hangs past its timeout, with children of its own (one in
// the background, one that left the stage's process group with setsid):
// all of them end, the stage is failed as timed out, the others go on.
func faultHang(t *testing.T) {
	c := &campaign{t: t}
	dir := c.faultStudy(t.TempDir(), 3, `
[[stage]]
name = "solve"
timeout = "1s"
shell = true
run = "echo start $SWEEP_VARIANT_LABEL $SWEEP_STAGE >> ../../ledger; if [ $SWEEP_PARAM_K = 1 ]; then sleep 300 & setsid sleep 301 & sleep 302; fi; echo end $SWEEP_VARIANT_LABEL $SWEEP_STAGE >> ../../ledger"
`)
	start := time.Now()
	_, _, code := c.sweep("run", dir, "--cores", "2", "-q")
	if code != 1 {
		t.Errorf("run with a timed-out stage: exit %d, want 1", code)
	}
	var left []int
	for range 50 {
		if left = processesOf(dir); len(left) == 0 {
			break
		}
		time.Sleep(100 * time.Millisecond)
	}
	if len(left) > 0 {
		t.Errorf("processes of the timed-out stage survived: %v", left)
		for _, p := range left {
			syscall.Kill(p, syscall.SIGKILL)
		}
	}
	f := faultFigures{kind: "timeout-with-children", injected: 1, allowIncomplete: true}
	c.tally(dir, &f, []string{"solve"})
	s := status(t, dir)
	if s.Counts.Failed != 1 || s.Counts.Done != 2 {
		t.Errorf("counts %+v, want 1 failed (timed out), 2 done", s.Counts)
	}
	out, _, _ := c.sweep("status", dir)
	if !strings.Contains(out, "timed out after 1s") {
		t.Errorf("status does not say it timed out:\n%s", out)
	}
	f.lost = f.variants - f.completed - 1 // the hung one fails by design
	f.note = fmt.Sprintf("all its processes ended (process group, job token, child subreaper) within %.1f s", time.Since(start).Seconds())
	c.report(f)
}

// A stage that fails once and then succeeds is retried and done.
func faultRetry(t *testing.T) {
	c := &campaign{t: t}
	dir := c.faultStudy(t.TempDir(), 3, `
[[stage]]
name = "solve"
retries = 2
shell = true
run = "echo start $SWEEP_VARIANT_LABEL $SWEEP_STAGE >> ../../ledger; if [ ! -e tried ]; then touch tried; exit 2; fi; echo end $SWEEP_VARIANT_LABEL $SWEEP_STAGE >> ../../ledger"
`)
	if _, errs, code := c.sweep("run", dir, "-q"); code != 0 {
		t.Errorf("run: %s", errs)
	}
	f := faultFigures{kind: "retry-then-succeed", injected: 3, allowRepeat: true}
	c.tally(dir, &f, []string{"solve"})
	f.note = "each variant failed once and was retried"
	c.report(f)
}

// A stage that always fails: its variant is failed with the exit status
// and the log's telling line; the others finish.
func faultAlwaysFail(t *testing.T) {
	c := &campaign{t: t}
	dir := c.faultStudy(t.TempDir(), 4, `
[[stage]]
name = "solve"
shell = true
run = "echo start $SWEEP_VARIANT_LABEL $SWEEP_STAGE >> ../../ledger; if [ $SWEEP_PARAM_K = 3 ]; then echo 'step 812: diverged: negative density' >&2; exit 3; fi; echo end $SWEEP_VARIANT_LABEL $SWEEP_STAGE >> ../../ledger"
`)
	_, errs, code := c.sweep("run", dir, "-q")
	if code != 1 || !strings.Contains(errs, "v003 solve failed: exit status 3") {
		t.Errorf("run: exit %d, %s", code, errs)
	}
	f := faultFigures{kind: "always-fail", injected: 1, allowIncomplete: true}
	c.tally(dir, &f, []string{"solve"})
	out, _, _ := c.sweep("status", dir)
	if !strings.Contains(out, "exit status 3") {
		t.Errorf("status:\n%s", out)
	}
	f.lost = f.variants - f.completed - 1
	f.note = "the failing variant failed with its exit status; the others finished"
	c.report(f)
}

// 100 MB of solver output goes to the stage's log without trouble.
func faultBigOutput(t *testing.T) {
	c := &campaign{t: t}
	dir := c.faultStudy(t.TempDir(), 2, `
[[stage]]
name = "solve"
run = "`+strings.ReplaceAll(ledgerStage(`yes step residual 1e-6 drag 0.5 | head -c 100000000`), `"`, `\"`)+`"
`)
	start := time.Now()
	if _, errs, code := c.sweep("run", dir, "-q"); code != 0 {
		t.Errorf("run: %s", errs)
	}
	st, err := os.Stat(filepath.Join(dir, "variants", "v001", "solve.log"))
	if err != nil || st.Size() < 100_000_000 {
		t.Errorf("log: %v, %d bytes", err, st.Size())
	}
	f := faultFigures{kind: "stdout-100MB", injected: 2}
	c.tally(dir, &f, []string{"solve"})
	f.note = fmt.Sprintf("two 100 MB logs written in %.1f s", time.Since(start).Seconds())
	c.report(f)
}

// A full disk while rendering (plan fails cleanly, writes nothing half
// way, and succeeds once there is room) and while the stages write their
// logs (the stages fail; with room again, a reset and a run finish the
// study). Needs root, to mount a small tmpfs.
func faultFullDisk(t *testing.T) {
	if os.Getuid() != 0 {
		t.Skip("needs root to mount a size-limited tmpfs")
	}
	c := &campaign{t: t}
	mnt := t.TempDir()
	if err := syscall.Mount("tmpfs", mnt, "tmpfs", 0, "size=3m"); err != nil {
		t.Skipf("cannot mount a tmpfs: %v", err)
	}
	defer syscall.Unmount(mnt, syscall.MNT_DETACH)
	dir := filepath.Join(mnt, "render")
	for i := range 20 {
		studytest.WriteFile(t, filepath.Join(dir, "template", fmt.Sprintf("part%02d.dat", i)), strings.Repeat("x", 50_000), 0o644)
	}
	studytest.WriteFile(t, filepath.Join(dir, "template", "case.txt"), "k {{.k}}\n", 0o644)
	studytest.WriteFile(t, filepath.Join(dir, "study.toml"), "[case]\nbase = \"template\"\nrender = [\"case.txt\"]\n[[param]]\nname = \"k\"\nlevels = [1, 2, 3, 4]\n[design]\nscheme = \"factorial\"\n[[stage]]\nname = \"solve\"\nrun = \""+
		strings.ReplaceAll(ledgerStage("true"), `"`, `\"`)+"\"\n", 0o644)
	_, errs, code := c.sweep("plan", dir)
	if code == 0 || !strings.Contains(errs, "no space left on device") {
		t.Errorf("plan on a full disk: exit %d, %q", code, errs)
	}
	if ents, _ := os.ReadDir(filepath.Join(dir, "variants")); len(ents) != 0 {
		t.Errorf("a failed plan left %d entries in variants/", len(ents))
	}
	if err := syscall.Mount("tmpfs", mnt, "tmpfs", syscall.MS_REMOUNT, "size=40m"); err != nil {
		t.Fatal(err)
	}
	if _, errs, code := c.sweep("plan", dir); code != 0 {
		t.Fatalf("plan with room: %s", errs)
	}
	if _, errs, code := c.sweep("run", dir, "-q"); code != 0 {
		t.Errorf("run: %s", errs)
	}
	f := faultFigures{kind: "full-disk", injected: 2}
	c.tally(dir, &f, []string{"solve"})

	// Logs: the stages' output fills the disk.
	os.RemoveAll(dir)
	if err := syscall.Mount("tmpfs", mnt, "tmpfs", syscall.MS_REMOUNT, "size=2m"); err != nil {
		t.Fatal(err)
	}
	logs := filepath.Join(mnt, "logs")
	c.faultStudy(logs, 3, `
[[stage]]
name = "solve"
run = "`+strings.ReplaceAll(ledgerStage(`yes residual 1e-6 | head -c 1500000 > history.dat || exit 1`), `"`, `\"`)+`"
`)
	_, errs, code = c.sweep("run", logs, "-q")
	if code == 0 || !(strings.Contains(errs, "o space left on device") || strings.Contains(errs, "exit status 1")) {
		t.Errorf("run on a full disk: exit %d, %q; want a failure that says the disk is full", code, errs)
	}
	t.Logf("the run on a full disk said: %s", strings.TrimSpace(errs))
	if err := syscall.Mount("tmpfs", mnt, "tmpfs", syscall.MS_REMOUNT, "size=40m"); err != nil {
		t.Fatal(err)
	}
	c.sweep("reset", logs, "--failed")
	if _, errs, code := c.sweep("run", logs, "-q"); code != 0 {
		t.Errorf("run with room again: %s", errs)
	}
	g := faultFigures{kind: "full-disk-logs", injected: 1, allowRepeat: true}
	c.tally(logs, &g, []string{"solve"})
	f.variants += g.variants
	f.completed += g.completed
	f.lost += g.lost
	f.note = "plan refused with no half-written variant; the stages that filled the disk ran again once there was room"
	c.report(f)
}

// A truncated, a garbage and an emptied database: every command says so
// (no crash), and recover rebuilds the study with nothing run twice.
func faultDamagedDB(t *testing.T) {
	c := &campaign{t: t}
	dir := c.faultStudy(t.TempDir(), 6, `
[[stage]]
name = "solve"
run = "`+strings.ReplaceAll(ledgerStage(`true`), `"`, `\"`)+`"
`)
	if _, errs, code := c.sweep("run", dir, "-q"); code != 0 {
		t.Fatalf("run: %s", errs)
	}
	db := filepath.Join(dir, ".sweep", "study.db")
	f := faultFigures{kind: "damaged-database"}
	for _, damage := range []func() error{
		func() error { st, _ := os.Stat(db); return os.Truncate(db, st.Size()/2+123) },
		func() error { return os.WriteFile(db, bytes.Repeat([]byte("garbage "), 5000), 0o600) },
		func() error { return os.Truncate(db, 0) },
	} {
		if err := damage(); err != nil {
			t.Fatal(err)
		}
		f.injected++
		for _, args := range [][]string{{"status", dir}, {"run", dir}, {"plan", dir}, {"harvest", dir}, {"rank", dir}, {"report", dir}, {"fit", dir}, {"gci", dir}, {"reset", dir, "--failed"}} {
			if _, errs, code := c.sweep(args...); code == 0 || !strings.Contains(errs, "damaged") {
				t.Errorf("%s on a damaged database: exit %d, %q", args[0], code, errs)
			}
		}
		if out, errs, code := c.sweep("recover", dir); code != 0 || !strings.Contains(out, "6 variants") {
			t.Errorf("recover: %d %s %s", code, out, errs)
		}
	}
	if _, errs, code := c.sweep("run", dir, "-q"); code != 0 {
		t.Errorf("run after recovery: %s", errs)
	}
	c.tally(dir, &f, []string{"solve"})
	f.note = "every command refused with the damage and the advice; recover rebuilt it each time"
	c.report(f)
}

// Copies of the database taken while a run writes it: each copy opens as
// a sound study or is reported damaged, never a crash.
func faultCopiedDB(t *testing.T) {
	c := &campaign{t: t}
	dir := c.faultStudy(t.TempDir(), 40, `
[[stage]]
name = "solve"
run = "`+strings.ReplaceAll(ledgerStage(`sleep 0.05`), `"`, `\"`)+`"
`)
	cmd := exec.Command(sweepBin, "run", dir, "--cores", "2", "-q")
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	f := faultFigures{kind: "database-copied-during-run"}
	sound, damaged := 0, 0
	for i := range 20 {
		cp := filepath.Join(t.TempDir(), fmt.Sprint("copy", i))
		studytest.WriteFile(t, filepath.Join(cp, "template", "case.txt"), "k {{.k}}\n", 0o644)
		b, _ := os.ReadFile(filepath.Join(dir, "study.toml"))
		studytest.WriteFile(t, filepath.Join(cp, "study.toml"), string(b), 0o644)
		db, _ := os.ReadFile(filepath.Join(dir, ".sweep", "study.db"))
		studytest.WriteFile(t, filepath.Join(cp, ".sweep", "study.db"), string(db), 0o600)
		f.injected++
		switch _, errs, code := c.sweep("status", cp, "--json"); {
		case code == 0:
			sound++
		case strings.Contains(errs, "damaged"):
			damaged++
		default:
			t.Errorf("status of a copy: exit %d, %s", code, errs)
		}
		time.Sleep(40 * time.Millisecond)
	}
	if err := cmd.Wait(); err != nil {
		t.Errorf("run: %v", err)
	}
	c.tally(dir, &f, []string{"solve"})
	f.note = fmt.Sprintf("%d copies read as sound studies, %d reported damaged", sound, damaged)
	c.report(f)
}
