package runner

import (
	"context"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/sweep-cfd/sweep/internal/history"
	"github.com/sweep-cfd/sweep/internal/plan"
	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/store"
	"github.com/sweep-cfd/sweep/internal/studytest"
)

// The test binary doubles as the executor, as the sweep binary does.
func TestMain(m *testing.M) {
	if IsExecutor() {
		os.Exit(ExecutorMain())
	}
	if os.Getenv("FAKE_SOLVER_FOR_TEST") != "" {
		os.Exit(fakeSolver())
	}
	os.Exit(m.Run())
}

// newStudy writes and plans a study of n variants (parameter k = 1..n)
// whose stages are the given shell scripts.
func newStudy(t *testing.T, n int, stages string) (string, *recipe.Recipe) {
	t.Helper()
	dir := studytest.Write(t, "", studytest.Levels(n, stages), studytest.CaseFiles())
	r, err := recipe.Load(filepath.Join(dir, recipe.FileName))
	must(t, err)
	_, err = plan.Plan(context.Background(), r, plan.Options{})
	must(t, err)
	return dir, r
}

func must(t *testing.T, err error) { t.Helper(); studytest.Must(t, err) }

func jobs(t *testing.T, dir string) []store.Job {
	t.Helper()
	st, err := store.OpenExisting(dir, store.Options{})
	must(t, err)
	defer st.Close()
	var js []store.Job
	must(t, st.View(func(tx *store.Tx) error {
		return tx.Jobs(func(j store.Job) error { js = append(js, j); return nil })
	}))
	return js
}

func count(js []store.Job, s store.State) int {
	n := 0
	for _, j := range js {
		if j.State == s {
			n++
		}
	}
	return n
}

// Ensure that every stage runs once per variant, in order, in the
// variant's directory, with the documented environment.
func TestRunStages(t *testing.T) {
	dir, r := newStudy(t, 5, `
[[stage]]
name = "mesh"
run = "sh -c 'echo mesh-$SWEEP_PARAM_K > mesh.txt'"
[[stage]]
name = "solve"
run = "sh -c 'cat mesh.txt case.txt > out.txt; echo $SWEEP_VARIANT_LABEL $SWEEP_STAGE $SWEEP_CORES >> out.txt; echo $SWEEP_VARIANT_DIR >> out.txt'"
`)
	snap, err := Run(context.Background(), r, Options{Cores: 2})
	must(t, err)
	if snap.Done != 5 || snap.Failed != 0 {
		t.Fatalf("snapshot %+v", snap)
	}
	b, err := os.ReadFile(filepath.Join(plan.Dir(dir, "v003"), "out.txt"))
	must(t, err)
	want := "mesh-3\nk 3\nv003 solve 1\n" + plan.Dir(dir, "v003") + "\n"
	if string(b) != want {
		t.Errorf("out.txt = %q, want %q", b, want)
	}
	if js := jobs(t, dir); count(js, store.Done) != 10 {
		t.Errorf("%d jobs done, want 10", count(js, store.Done))
	}
	log, _ := os.ReadFile(filepath.Join(plan.Dir(dir, "v001"), "solve.log"))
	if !strings.Contains(string(log), "=== sweep: stage solve of v001, attempt 1") {
		t.Errorf("log header missing: %q", log)
	}
}

// Ensure that a failing stage is retried as the recipe allows, then its
// variant is marked failed with the exit status and the log's last lines,
// while the other variants finish; and that reset re-queues it.
func TestRunRetryThenFail(t *testing.T) {
	dir, r := newStudy(t, 3, `
[[stage]]
name = "solve"
retries = 2
run = "sh -c 'echo try >> ../../tries-$SWEEP_PARAM_K; if [ $SWEEP_PARAM_K = 2 ]; then echo diverged at step 7 >&2; exit 3; fi'"
[[stage]]
name = "post"
run = "true"
`)
	snap, err := Run(context.Background(), r, Options{Cores: 2})
	must(t, err)
	if snap.Done != 2 || snap.Failed != 1 {
		t.Fatalf("snapshot %+v", snap)
	}
	b, _ := os.ReadFile(filepath.Join(dir, "tries-2"))
	if n := strings.Count(string(b), "try"); n != 3 {
		t.Errorf("failing stage ran %d times, want 1 + 2 retries", n)
	}
	var failed store.Job
	for _, j := range jobs(t, dir) {
		if j.State == store.Failed {
			failed = j
		}
	}
	if failed.ExitCode != 3 || failed.Reason != "exit status 3" || failed.Attempts != 3 {
		t.Errorf("failed job %+v", failed)
	}
	if len(failed.Tail) == 0 || failed.Tail[len(failed.Tail)-1] != "diverged at step 7" {
		t.Errorf("log tail %q", failed.Tail)
	}
	st, err := store.OpenExisting(dir, store.Options{})
	must(t, err)
	n, err := ResetFailed(st)
	st.Close()
	must(t, err)
	if n != 1 {
		t.Errorf("reset re-queued %d, want 1", n)
	}
	if js := jobs(t, dir); count(js, store.Pending) != 2 || count(js, store.Failed) != 0 {
		t.Errorf("after reset: %d pending, %d failed", count(js, store.Pending), count(js, store.Failed))
	}
}

// Ensure that a stage past its timeout is stopped with its whole process
// group and reported as timed out.
func TestRunTimeout(t *testing.T) {
	dir, r := newStudy(t, 1, `
[[stage]]
name = "solve"
timeout = "300ms"
run = "sh -c 'sleep 30 & sleep 30; wait'"
`)
	start := time.Now()
	snap, err := Run(context.Background(), r, Options{Cores: 1, Grace: 200 * time.Millisecond})
	must(t, err)
	if snap.Failed != 1 {
		t.Fatalf("snapshot %+v", snap)
	}
	if el := time.Since(start); el > 10*time.Second {
		t.Errorf("timeout took %s to act", el)
	}
	js := jobs(t, dir)
	if js[0].Reason != "timed out after 300ms" {
		t.Errorf("reason %q", js[0].Reason)
	}
}

// Ensure that the core budget is never exceeded: stages that need two
// cores each never overlap on a budget of three.
func TestRunCoreBudget(t *testing.T) {
	dir, r := newStudy(t, 4, `
[[stage]]
name = "solve"
cores = 2
run = "sh -c 'mkdir ../../slot || echo overlap >> ../../bad; sleep 0.2; rmdir ../../slot'"
`)
	snap, err := Run(context.Background(), r, Options{Cores: 3})
	must(t, err)
	if snap.Done != 4 {
		t.Fatalf("snapshot %+v", snap)
	}
	if b, err := os.ReadFile(filepath.Join(dir, "bad")); err == nil {
		t.Errorf("two-core jobs overlapped on a 3-core budget: %q", b)
	}
	r.Stages[0].Cores = 4
	if _, err := Run(context.Background(), r, Options{Cores: 3}); err == nil || !strings.Contains(err.Error(), `stage "solve" needs 4 cores but the run may use 3`) {
		t.Errorf("oversized stage: %v", err)
	}
}

// Ensure that cancelling a run stops its jobs and re-queues them as
// interrupted, not failed, and that the next run finishes them.
func TestRunInterrupt(t *testing.T) {
	dir, r := newStudy(t, 3, `
[[stage]]
name = "solve"
run = "sh -c 'sleep 1; echo $SWEEP_PARAM_K >> ../../finished'"
`)
	ctx, cancel := context.WithTimeout(context.Background(), 300*time.Millisecond)
	defer cancel()
	_, err := Run(ctx, r, Options{Cores: 2, Grace: time.Second})
	if !errors.Is(err, ErrInterrupted) {
		t.Fatalf("err = %v, want ErrInterrupted", err)
	}
	js := jobs(t, dir)
	if count(js, store.Failed) != 0 || count(js, store.Running) != 0 {
		t.Fatalf("after interrupt: %+v", js)
	}
	interrupted := 0
	for _, j := range js {
		interrupted += j.Interrupts
	}
	if interrupted != 2 {
		t.Errorf("%d interruptions recorded, want 2 (two jobs were running)", interrupted)
	}
	snap, err := Run(context.Background(), r, Options{Cores: 2})
	must(t, err)
	if snap.Done != 3 {
		t.Errorf("second run: %+v", snap)
	}
	b, _ := os.ReadFile(filepath.Join(dir, "finished"))
	if got := len(strings.Fields(string(b))); got != 3 {
		t.Errorf("finished %d times, want 3: %q", got, b)
	}
}

// Ensure that recovery keeps the job ends an executor journalled after
// its runner died (a clean end is done; a failure with a retry left goes
// back to the queue; a stop the executor caused is an interruption
// whatever its exit status), and re-queues a running job that has none.
func TestRecoverJournal(t *testing.T) {
	dir, r := newStudy(t, 4, "[[stage]]\nname = \"solve\"\nrun = \"true\"\nretries = 1\n")
	st, err := store.OpenExisting(dir, store.Options{})
	must(t, err)
	toks := []string{"tok-ended", "tok-failed", "tok-stopped", "tok-lost"}
	must(t, st.Update(func(tx *store.Tx) error {
		for i, tok := range toks {
			j, _, _ := tx.Job(uint64(i+1), 0)
			j.State, j.Token = store.Running, tok
			if err := tx.PutJob(j); err != nil {
				return err
			}
		}
		return nil
	}))
	meta := filepath.Join(dir, store.Dir)
	journal := `{"token":"tok-ended","ev":"exit","code":0}
{"token":"tok-failed","ev":"exit","code":3}
{"token":"tok-stopped","ev":"exit","code":0,"stopped":true}
`
	must(t, os.WriteFile(filepath.Join(meta, "exits"), []byte(journal), 0o600))
	var events []string
	exe, _ := os.Executable()
	x, adopted, err := takeOver(context.Background(), st, r, meta, exe, eventRecorder{&events})
	must(t, err)
	x.close()
	st.Close()
	if len(adopted) != 0 {
		t.Errorf("adopted %d jobs from a dead executor", len(adopted))
	}
	js := jobs(t, dir)
	if js[0].State != store.Done || js[0].Attempts != 1 {
		t.Errorf("journalled clean end: %+v", js[0])
	}
	if js[1].State != store.Pending || js[1].Attempts != 1 || js[1].Reason != "exit status 3; retried" {
		t.Errorf("journalled failure with a retry left: %+v", js[1])
	}
	if js[2].State != store.Pending || js[2].Attempts != 0 || js[2].Interrupts != 1 {
		t.Errorf("journalled end of a stage its executor stopped: %+v", js[2])
	}
	if js[3].State != store.Pending || js[3].Interrupts != 1 {
		t.Errorf("lost job: %+v", js[3])
	}
	if b, err := os.ReadFile(filepath.Join(meta, "exits")); err == nil && len(b) > 0 {
		t.Errorf("journal not cleared after recovery: %q", b)
	}
	if len(events) != 1 || !strings.Contains(events[0], "3 job ends kept, 1 unfinished jobs re-queued") {
		t.Errorf("events %q", events)
	}
}

type eventRecorder struct{ list *[]string }

func (e eventRecorder) Update(Snapshot)  {}
func (e eventRecorder) Event(msg string) { *e.list = append(*e.list, msg) }

// Ensure that a stage interrupted mid-run is continued with the recipe's
// continue command rather than started again, and that the harvest merges
// the restarted history (which overlaps the first one) by time, the later
// file winning.
func TestContinueAfterInterrupt(t *testing.T) {
	dir, r := newStudy(t, 1, `
[[quantity]]
name = "y"
files = "h_*.dat"
value = 2
[[stage]]
name = "solve"
shell = true
run = "echo '# t y' > h_0.dat; i=0; while [ $i -lt 400 ]; do echo \"$i 1\" >> h_0.dat; i=$((i+1)); sleep 0.01; done; echo first >> ../../runs"
continue = "last=$(tail -n 1 h_0.dat | cut -d' ' -f1); i=$((last - 5)); echo '# t y' > h_1.dat; while [ $i -lt 400 ]; do echo \"$i 2\" >> h_1.dat; i=$((i+1)); done; echo continued >> ../../runs"
`)
	ctx, cancel := context.WithTimeout(context.Background(), 1500*time.Millisecond)
	defer cancel()
	if _, err := Run(ctx, r, Options{Cores: 1, Grace: time.Second}); !errors.Is(err, ErrInterrupted) {
		t.Fatalf("first run: %v", err)
	}
	if _, err := Run(context.Background(), r, Options{Cores: 1}); err != nil {
		t.Fatal(err)
	}
	b, _ := os.ReadFile(filepath.Join(dir, "runs"))
	if string(b) != "continued\n" {
		t.Errorf("runs = %q, want one continued run and no full one", b)
	}
	vdir := plan.Dir(dir, "v001")
	s, err := history.ReadSeries(vdir, r.Quantities[0].Spec)
	if err != nil {
		t.Fatal(err)
	}
	if len(s.Overlaps) != 1 || s.Value[len(s.Value)-1] != 2 || s.Time[len(s.Time)-1] != 399 {
		t.Errorf("merge: overlaps %+v, last %v at %v", s.Overlaps, s.Value[len(s.Value)-1], s.Time[len(s.Time)-1])
	}
	for i := 1; i < len(s.Time); i++ {
		if s.Time[i] <= s.Time[i-1] {
			t.Fatalf("merged times not increasing at %d: %v, %v", i, s.Time[i-1], s.Time[i])
		}
	}
}

// Ensure that processes a stage leaves behind when its leader ends are
// stopped, both those in its process group and one that left it with
// setsid (re-parented to the executor), and that the log says so: the
// stage's core is free again when its leader ends.
func TestRunStopsLeftovers(t *testing.T) {
	dir, r := newStudy(t, 1, `
[[stage]]
name = "solve"
run = "sh -c 'sleep 31 & setsid sleep 32 & echo $! > ../../escaped; sleep 0.3; exit 0'"
`)
	snap, err := Run(context.Background(), r, Options{Cores: 1})
	must(t, err)
	if snap.Done != 1 {
		t.Fatalf("snapshot %+v", snap)
	}
	b, err := os.ReadFile(filepath.Join(dir, "escaped"))
	must(t, err)
	pid := strings.TrimSpace(string(b))
	deadline := time.Now().Add(3 * time.Second)
	for {
		st, err := os.ReadFile("/proc/" + pid + "/stat")
		if err != nil || strings.Contains(string(st), ") Z ") {
			break // gone, or a zombie waiting for its reaper
		}
		if time.Now().After(deadline) {
			t.Fatalf("the escaped process %s still runs after its stage ended: %s", pid, st)
		}
		time.Sleep(50 * time.Millisecond)
	}
	log, _ := os.ReadFile(filepath.Join(dir, "variants", "v001", "solve.log"))
	if !strings.Contains(string(log), "process(es) the stage left running") {
		t.Errorf("log does not say the escaped process was stopped:\n%s", log)
	}
}
