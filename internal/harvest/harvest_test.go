package harvest

import (
	"bytes"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/sweep-cfd/sweep/internal/history"
	"github.com/sweep-cfd/sweep/internal/studytest"
)

var update = flag.Bool("update", false, "rewrite golden files in testdata")

// Ensure that harvesting the restart example gives the recorded result
// (testdata/harvest_restart.golden, rewritten with -update) of the
// restart files the reader is tested on (../history/testdata). The history is
// Cd = 0.9 + 0.5 e^{−t} + 0.05 sin(2πt/0.4) + N(0, 0.02²) sampled every
// 0.01 s to t = 25 s, so the true mean is 0.9 and the period 0.4 s; the
// result must hold both within its interval, whatever the golden says.
func TestHarvestGolden(t *testing.T) {
	q := history.Quantity{Files: "restart/forces_*.dat", Time: history.ColumnName("Time"), Value: []history.Term{{Column: history.ColumnName("Cd")}}}
	r, err := Harvest(filepath.Join("..", "history", "testdata"), q, Options{Rel: 0.001})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(r.Mean-0.9) > r.HalfWidth {
		t.Errorf("mean %v ± %v misses 0.9", r.Mean, r.HalfWidth)
	}
	if math.Abs(r.Period-0.4) > 0.001 {
		t.Errorf("period %v, want 0.4 s", r.Period)
	}
	if r.TransientEnd < 2 || r.TransientEnd > 12.5 {
		t.Errorf("transient end %v: the transient 0.5 e^{−t} falls below the noise (0.02) after 3.2 s", r.TransientEnd)
	}
	if len(r.Overlaps) != 1 || !strings.Contains(r.Message, "restart overlap") {
		t.Errorf("overlap not reported: %v, %q", r.Overlaps, r.Message)
	}
	got, err := json.MarshalIndent(r, "", "  ")
	if err != nil {
		t.Fatal(err)
	}
	golden := filepath.Join("testdata", "harvest_restart.golden")
	if *update {
		if err := os.WriteFile(golden, append(got, '\n'), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	want, err := os.ReadFile(golden)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(bytes.TrimSpace(got), bytes.TrimSpace(want)) {
		t.Errorf("result differs from %s (run with -update if intended):\n%s", golden, got)
	}
}

// Ensure that a read error still yields a usable failed Result and a
// typed error.
func TestHarvestReadError(t *testing.T) {
	dir := t.TempDir()
	studytest.WriteFile(t, filepath.Join(dir, "f.dat"), "0 1\n1 nan\n", 0o644)
	r, err := Harvest(dir, history.Quantity{Files: "f.dat", Value: []history.Term{{Column: history.ColumnIndex(2)}}}, Options{})
	if !errors.Is(err, history.ErrNonFinite) || r.Verdict != Failed || !strings.Contains(r.Message, "f.dat:2") {
		t.Errorf("verdict %s, message %q, error %v", r.Verdict, r.Message, err)
	}
}

// Ensure that a runner polling a growing history is told to stop only once
// the average meets the tolerance, and not before the file exists or holds
// enough samples; a line being written is ignored.
func TestSettled(t *testing.T) {
	dir := t.TempDir()
	q := history.Quantity{Files: "out/coef*.dat", Value: []history.Term{{Column: history.ColumnIndex(2)}}}
	opts := Options{Abs: 0.01}

	stop, r, err := Settled(dir, q, opts, 500)
	if stop || err != nil || r.Verdict != NoData {
		t.Fatalf("no file yet: stop %v, %v, %v", stop, r.Verdict, err)
	}
	if err := os.Mkdir(filepath.Join(dir, "out"), 0o755); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(dir, "out", "coef.dat")
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	fmt.Fprintln(f, "# time cd")
	stop, _, err = Settled(dir, q, opts, 500)
	if stop || err != nil {
		t.Fatalf("header only: stop %v, %v", stop, err)
	}

	// AR(1) noise, φ = 0.5, σ² = 4/3, around 1.5: the half-width reaches
	// 0.01 after roughly (1.96/0.01)²·σ²·τ ≈ 150,000 samples.
	rng := rand.New(rand.NewPCG(12, 12))
	x := studytest.AR1(rng, 400000, 0.5, 1)
	i, stoppedAt := 0, 0
	for step := 20000; i < len(x); i += step {
		for j := i; j < i+step; j++ {
			fmt.Fprintf(f, "%d %.9f\n", j, 1.5+x[j])
		}
		fmt.Fprintf(f, "%d 1.5", i+step) // being written
		stop, r, err = Settled(dir, q, opts, 500)
		if err != nil {
			t.Fatal(err)
		}
		if _, err := f.Seek(-int64(len(fmt.Sprintf("%d 1.5", i+step))), io.SeekEnd); err != nil {
			t.Fatal(err)
		}
		if stop {
			stoppedAt = i + step
			break
		}
	}
	if stoppedAt == 0 {
		t.Fatal("never stopped")
	}
	t.Logf("stopped at %d samples: %.4f ± %.4f (%s)", stoppedAt, r.Mean, r.HalfWidth, r.Verdict)
	if stoppedAt < 80000 || stoppedAt > 300000 {
		t.Errorf("stopped at %d samples, expected about 150,000", stoppedAt)
	}
	if r.HalfWidth > 0.01 || math.Abs(r.Mean-1.5) > 3*r.StdError {
		t.Errorf("stopped with %v ± %v", r.Mean, r.HalfWidth)
	}
}

// BenchmarkHarvest reads and analyses a 10 MB, 140,000-line history (see
// history.BenchmarkReadHistory for the reading alone).
func BenchmarkHarvest(b *testing.B) {
	dir := b.TempDir()
	size := studytest.ForceHistory(b, filepath.Join(dir, "forces.dat"), 140000)
	q := history.Quantity{Files: "forces.dat", Value: []history.Term{{Column: history.ColumnIndex(2)}}}
	b.SetBytes(size)
	for b.Loop() {
		if _, err := Harvest(dir, q, Options{}); err != nil {
			b.Fatal(err)
		}
	}
}
