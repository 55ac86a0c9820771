package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/sweep-cfd/sweep/internal/studytest"
)

// sweepBin is the program built once for the tests that run it as users do.
var sweepBin string

func TestMain(m *testing.M) {
	dir, err := os.MkdirTemp("", "sweep-bin-")
	if err != nil {
		panic(err)
	}
	sweepBin = filepath.Join(dir, "sweep")
	if runtime.GOOS == "windows" {
		sweepBin += ".exe"
	}
	build := exec.Command("go", "build", "-o", sweepBin, ".")
	build.Stderr = os.Stderr
	if err := build.Run(); err != nil {
		panic("build sweep: " + err.Error())
	}
	code := m.Run()
	os.RemoveAll(dir)
	os.Exit(code)
}

// sweep runs the program and returns its stdout, stderr and exit status.
func sweep(t *testing.T, args ...string) (string, string, int) {
	t.Helper()
	cmd := exec.Command(sweepBin, args...)
	var out, errb bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &errb
	err := cmd.Run()
	code := 0
	if ee, ok := err.(*exec.ExitError); ok {
		code = ee.ExitCode()
	} else if err != nil {
		t.Fatal(err)
	}
	return out.String(), errb.String(), code
}

type statusJSON struct {
	Counts struct {
		Done, Failed, Pending, Running int
	} `json:"counts"`
	Variants []struct {
		ID     string         `json:"id"`
		Label  string         `json:"label"`
		State  string         `json:"state"`
		Params map[string]any `json:"params"`
	} `json:"variants"`
}

func status(t *testing.T, dir string) statusJSON {
	t.Helper()
	out, errs, code := sweep(t, "status", dir, "--json")
	if code != 0 {
		t.Fatalf("status: %d %s", code, errs)
	}
	var s statusJSON
	if err := json.Unmarshal([]byte(out), &s); err != nil {
		t.Fatalf("status --json: %v\n%s", err, out)
	}
	return s
}

// Ensure that a runner killed with SIGKILL at random moments of a study,
// and started again each time, finishes the study with every variant's
// stages run exactly once, and that no kill costs solver time: each stage
// run that starts also ends by itself (the executor keeps it running
// while no runner is attached, and the next run takes it over), so the
// solver seconds lost per kill are 0.
func TestKillAndResume(t *testing.T) {
	if testing.Short() {
		t.Skip("crash test skipped under -short")
	}
	dir := t.TempDir()
	studytest.WriteFile(t, filepath.Join(dir, "template", "case.txt"), "k {{.k}}\n", 0o644)
	studytest.WriteFile(t, filepath.Join(dir, "study.toml"), `name = "crash"
[case]
base = "template"
render = ["case.txt"]
[[param]]
name = "k"
levels = [1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12]
[design]
scheme = "factorial"
[[stage]]
name = "mesh"
run = "sh -c 'echo start $SWEEP_VARIANT_LABEL >> ../../mesh-count; sleep 0.15; echo end $SWEEP_VARIANT_LABEL >> ../../mesh-count'"
[[stage]]
name = "solve"
run = "sh -c 'echo start $SWEEP_VARIANT_LABEL >> ../../solve-count; sleep 0.35; echo end $SWEEP_VARIANT_LABEL >> ../../solve-count'"
`, 0o644)
	if _, errs, code := sweep(t, "plan", dir); code != 0 {
		t.Fatalf("plan: %s", errs)
	}
	// Kill the runner at seeded random moments, each run given 0.3 to 1 s.
	rng := rand.New(rand.NewPCG(7, 11))
	kills := 0
	for range 5 {
		after := time.Duration(300+rng.IntN(700)) * time.Millisecond
		cmd := exec.Command(sweepBin, "run", dir, "--cores", "2")
		if err := cmd.Start(); err != nil {
			t.Fatal(err)
		}
		time.Sleep(after / 2)
		// A second run on the same study must fail at once, naming the holder.
		_, errs, code := sweep(t, "run", dir)
		if code == 0 || !strings.Contains(errs, "study is in use") || !strings.Contains(errs, "pid") {
			t.Errorf("second run: exit %d, %q", code, errs)
		}
		time.Sleep(after / 2)
		if cmd.ProcessState == nil {
			cmd.Process.Signal(syscall.SIGKILL)
			kills++
		}
		cmd.Wait()
	}
	mid := status(t, dir)
	if mid.Counts.Done == 12 {
		t.Fatal("the study finished before the runner was killed; the test proves nothing")
	}
	if _, errs, code := sweep(t, "run", dir, "--cores", "2"); code != 0 {
		t.Fatalf("resumed run: exit %d: %s", code, errs)
	}
	for _, stage := range []string{"mesh", "solve"} {
		b, err := os.ReadFile(filepath.Join(dir, stage+"-count"))
		if err != nil {
			t.Fatal(err)
		}
		starts, ends := map[string]int{}, map[string]int{}
		for _, line := range strings.Split(strings.TrimSpace(string(b)), "\n") {
			f := strings.Fields(line)
			if f[0] == "start" {
				starts[f[1]]++
			} else {
				ends[f[1]]++
			}
		}
		for i := 1; i <= 12; i++ {
			label := fmt.Sprintf("v%03d", i)
			if starts[label] != 1 || ends[label] != 1 {
				t.Errorf("%s of %s started %d and ended %d times; want once each (a killed runner must cost no stage run)", stage, label, starts[label], ends[label])
			}
		}
	}
	end := status(t, dir)
	if end.Counts.Done != 12 || end.Counts.Failed+end.Counts.Pending+end.Counts.Running != 0 {
		t.Errorf("final counts %+v", end.Counts)
	}
	t.Logf("%d runner kills; every stage ran once, none was cut short", kills)
}

// Ensure that parameter values reach the solver only as data: payloads
// that a shell would run create no file, nothing is written outside the
// study directory, and the values arrive byte for byte.
func TestValuesNeverReachShell(t *testing.T) {
	root := t.TempDir()
	dir := filepath.Join(root, "study")
	payloads := []string{"$(touch INJECTED)", "; touch INJECTED2", "`touch INJECTED3`", "../../outside", "'; touch INJECTED4; '"}
	quoted := make([]string, len(payloads))
	for i, p := range payloads {
		b, _ := json.Marshal(p)
		quoted[i] = string(b)
	}
	studytest.WriteFile(t, filepath.Join(dir, "template", "case.txt"), "value {{.v}}\n", 0o644)
	studytest.WriteFile(t, filepath.Join(dir, "study.toml"), `[case]
base = "template"
render = ["case.txt"]
[[param]]
name = "v"
levels = [`+strings.Join(quoted, ", ")+`]
[design]
scheme = "factorial"
[[stage]]
name = "direct"
run = "sh -c 'printf %s \"$SWEEP_PARAM_V\" > value.txt'"
[[stage]]
name = "script"
shell = true
run = "cat case.txt > copy.txt; echo \"$SWEEP_PARAM_V\" >> copy.txt"
`, 0o644)
	before, _ := os.ReadDir(root)
	if _, errs, code := sweep(t, "plan", dir); code != 0 {
		t.Fatalf("plan: %s", errs)
	}
	if _, errs, code := sweep(t, "run", dir); code != 0 {
		t.Fatalf("run: %s", errs)
	}
	filepath.WalkDir(root, func(p string, d os.DirEntry, err error) error {
		if err == nil && strings.HasPrefix(d.Name(), "INJECTED") {
			t.Errorf("a parameter value was run by a shell: %s exists", p)
		}
		return nil
	})
	after, _ := os.ReadDir(root)
	if len(after) != len(before) {
		t.Errorf("something was written beside the study: %v", after)
	}
	if _, err := os.Stat(filepath.Join(root, "outside")); err == nil {
		t.Error("a value wrote outside the study")
	}
	for _, v := range status(t, dir).Variants {
		val := v.Params["v"].(string)
		b, err := os.ReadFile(filepath.Join(dir, "variants", v.Label, "value.txt"))
		if err != nil || string(b) != val {
			t.Errorf("%s: value.txt = %q, want %q (%v)", v.Label, b, val, err)
		}
		c, _ := os.ReadFile(filepath.Join(dir, "variants", v.Label, "copy.txt"))
		if string(c) != "value "+val+"\n"+val+"\n" {
			t.Errorf("%s: copy.txt = %q", v.Label, c)
		}
		if strings.ContainsAny(v.Label, "/.$;`'") {
			t.Errorf("variant directory named from a value: %q", v.Label)
		}
	}
}

// Ensure that the starter study that `sweep new` writes plans and runs to
// completion with nothing but this program installed, and that a bad
// recipe gives exit status 2 with its file and line.
func TestStarterStudy(t *testing.T) {
	if testing.Short() {
		t.Skip("runs the starter study (about 10 s)")
	}
	dir := filepath.Join(t.TempDir(), "starter")
	if _, errs, code := sweep(t, "new", dir); code != 0 {
		t.Fatalf("new: %s", errs)
	}
	if _, errs, code := sweep(t, "plan", dir); code != 0 {
		t.Fatalf("plan: %s", errs)
	}
	if _, errs, code := sweep(t, "run", dir, "-q"); code != 0 {
		t.Fatalf("run: %s", errs)
	}
	s := status(t, dir)
	if s.Counts.Done != 12 || len(s.Variants) != 12 {
		t.Errorf("starter: %+v", s.Counts)
	}
	if _, errs, code := sweep(t, "new", dir); code != 2 || !strings.Contains(errs, "is not empty") {
		t.Errorf("new over a study: %d %q", code, errs)
	}
	recipe := filepath.Join(dir, "study.toml")
	b, _ := os.ReadFile(recipe)
	os.WriteFile(recipe, bytes.Replace(b, []byte("min = 0.0"), []byte("min = 0.5"), 1), 0o644)
	_, errs, code := sweep(t, "plan", dir)
	if code != 2 || !strings.Contains(errs, "study.toml:28: parameter \"nose\" has min (0.5) above max (0.3): swap them") {
		t.Errorf("bad recipe: exit %d, %q", code, errs)
	}
}
