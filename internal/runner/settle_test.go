package runner

import (
	"bufio"
	"context"
	"fmt"
	"math/rand/v2"
	"os"
	"os/signal"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/sweep-cfd/sweep/internal/plan"
	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/store"
)

// fakeSolver writes a history "t y" of AR(1) noise (φ = 0.5) about 1.0,
// 2,000 rows at a time every 10 ms, for at most 60 s. It ends cleanly
// (status 0) on SIGTERM or when a file named STOP appears, as a solver
// that supports an early stop does.
func fakeSolver() int {
	sig := make(chan os.Signal, 1)
	signal.Notify(sig, syscall.SIGTERM)
	f, err := os.Create("hist.dat")
	if err != nil {
		return 1
	}
	defer f.Close()
	w := bufio.NewWriter(f)
	fmt.Fprintln(w, "# t y")
	rng := rand.New(rand.NewPCG(7, 11))
	x, t := 0.0, 0.0
	deadline := time.Now().Add(60 * time.Second)
	for time.Now().Before(deadline) {
		for range 2000 {
			x = 0.5*x + rng.NormFloat64()
			t += 0.01
			fmt.Fprintf(w, "%.2f %.6f\n", t, 1+0.1*x)
		}
		w.Flush()
		select {
		case <-sig:
			return 0
		case <-time.After(10 * time.Millisecond):
		}
		if _, err := os.Stat("STOP"); err == nil {
			return 0
		}
	}
	return 3 // ran to the end: the early stop did not work
}

// Ensure that a stage with an early stop is ended once its average has
// converged, by a signal or by a stop file, and recorded as done with the
// reason; the fake solver would otherwise run for a minute and fail.
func TestSettle(t *testing.T) {
	self, err := os.Executable()
	must(t, err)
	for _, by := range []string{`by = "signal"`, `by = "file"` + "\nfile = \"STOP\""} {
		t.Run(strings.Fields(by)[2], func(t *testing.T) {
			stages := fmt.Sprintf(`
[[quantity]]
name = "y"
files = "hist.dat"
value = "y"
tolerance = 0.002

[[stage]]
name = "solve"
run = %q
env = { FAKE_SOLVER_FOR_TEST = "1" }
[stage.settle]
quantities = ["y"]
every = "200ms"
min_samples = 5000
%s
`, self, by)
			dir, r := newStudy(t, 1, stages)
			start := time.Now()
			snap, err := Run(context.Background(), r, Options{Cores: 1, Grace: 5 * time.Second})
			must(t, err)
			if snap.Done != 1 {
				t.Fatalf("snapshot %+v", snap)
			}
			if el := time.Since(start); el > 30*time.Second {
				t.Errorf("early stop took %s", el)
			}
			j := jobs(t, dir)[0]
			if j.State != store.Done || j.ExitCode != 0 || !strings.HasPrefix(j.Settled, "stopped early: y converged: ") ||
				!strings.Contains(j.Settled, "(tolerance 0.002)") {
				t.Errorf("job %+v", j)
			}
			// The stopped history's average agrees with the known mean (1.0)
			// within three half-widths (about six standard errors: the stop
			// time, and so the sample, depends on timing).
			var mean, hw float64
			fmt.Sscanf(j.Settled[strings.Index(j.Settled, "converged: ")+len("converged: "):], "%g ± %g", &mean, &hw)
			if hw <= 0 || hw > 0.002 || mean < 1-3*hw || mean > 1+3*hw {
				t.Errorf("stopped average %g ± %g does not cover the true mean 1", mean, hw)
			}
			if _, err := os.Stat(filepath.Join(plan.Dir(dir, "v001"), "hist.dat")); err != nil {
				t.Error(err)
			}
		})
	}
}

// Ensure that a recipe's early stop must name declared quantities.
func TestSettleRecipe(t *testing.T) {
	dir := t.TempDir()
	must(t, os.MkdirAll(filepath.Join(dir, "template"), 0o755))
	text := "[case]\nbase = \"template\"\n[[param]]\nname = \"k\"\nlevels = [1]\n[design]\nscheme = \"factorial\"\n" +
		"[[stage]]\nname = \"s\"\nrun = \"true\"\n[stage.settle]\nquantities = [\"drag\"]\nby = \"carrier pigeon\"\n"
	must(t, os.WriteFile(filepath.Join(dir, recipe.FileName), []byte(text), 0o644))
	_, err := recipe.Load(filepath.Join(dir, recipe.FileName))
	if err == nil || !strings.Contains(err.Error(), `study.toml:12: stage "s": [stage.settle] names "drag", which is not a declared [[quantity]]`) ||
		!strings.Contains(err.Error(), `study.toml:13: stage "s": by must be "signal", "file" or "command"`) {
		t.Errorf("err = %v", err)
	}
}
