package main

import (
	"bufio"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/sweep-cfd/sweep/internal/plan"
	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/recipes"
)

// Ensure that `sweep flow2d` ends cleanly on SIGTERM: status 0 within a
// second, every history line complete, so an early stop loses nothing.
func TestFlow2dStopsOnSIGTERM(t *testing.T) {
	dir := t.TempDir()
	if err := recipes.Write("box-demo", filepath.Join(dir, "s")); err != nil {
		t.Fatal(err)
	}
	tpl, _ := os.ReadFile(filepath.Join(dir, "s", "template", "case.toml"))
	text := strings.NewReplacer("{{.nose_radius}}", "0.2", "{{.taper_angle}}", "10", "end_time = 100.0", "end_time = 1000.0").Replace(string(tpl))
	writeFile(t, filepath.Join(dir, "case.toml"), text, 0o644)
	cmd := exec.Command(sweepBin, "flow2d", "case.toml")
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

// Ensure that every shipped study is a valid recipe whose template
// renders (the recipes under recipes/ run as they are).
func TestShippedRecipes(t *testing.T) {
	for _, name := range recipes.Names() {
		t.Run(name, func(t *testing.T) {
			dir := filepath.Join(t.TempDir(), name)
			if err := recipes.Write(name, dir); err != nil {
				t.Fatal(err)
			}
			r, err := recipe.Load(filepath.Join(dir, recipe.FileName))
			if err != nil {
				t.Fatal(err)
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

// Ensure that the demo study runs end to end with the built-in solver (at
// a fifth of its length, to keep the test short).
func TestDemoStudyRuns(t *testing.T) {
	if testing.Short() {
		t.Skip("runs nine solver cases (about 20 s)")
	}
	dir := filepath.Join(t.TempDir(), "demo")
	if err := recipes.Write("box-demo", dir); err != nil {
		t.Fatal(err)
	}
	casef := filepath.Join(dir, "template", "case.toml")
	b, _ := os.ReadFile(casef)
	writeFile(t, casef, strings.Replace(string(b), "end_time = 100.0", "end_time = 20.0", 1), 0o644)
	if _, errs, code := sweep(t, "plan", dir); code != 0 {
		t.Fatalf("plan: %s", errs)
	}
	if _, errs, code := sweep(t, "run", dir, "-q"); code != 0 {
		t.Fatalf("run: %s", errs)
	}
	if s := status(t, dir); s.Counts.Done != 9 {
		t.Errorf("counts %+v", s.Counts)
	}
}
