package lbm

import (
	"bytes"
	"context"
	"math"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"
)

// syncBuffer is a log writer safe for use from Run's goroutine.
type syncBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (s *syncBuffer) Write(p []byte) (int, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.Write(p)
}

func (s *syncBuffer) String() string {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.String()
}

// Ensure that the history file and the log have the documented form: a
// "# time Cd Cl" header, one row per output interval at increasing times,
// the file in the run directory, and a log with the case summary, the
// caution line, τ, the Mach number and MLUPS.
func TestRunOutput(t *testing.T) {
	c := loadTestCase(t, "dfg_2d2_cylinder.toml")
	c.Domain.CellsPerLength = 16
	c.Run.EndTime = 3
	c.Run.OutputInterval = 0.1
	c.Run.Threads = 2
	dir := t.TempDir()
	var log syncBuffer
	res, err := Run(context.Background(), c, dir, &log)
	if err != nil {
		t.Fatal(err)
	}
	if res.Output != filepath.Join(dir, "forces.dat") || res.Stopped || res.MLUPS <= 0 {
		t.Errorf("result %+v", res)
	}
	p, _ := c.lattice()
	h := readHistory(t, res.Output)
	if want := p.steps / p.outEvery; len(h.t) != want {
		t.Errorf("%d rows, want %d", len(h.t), want)
	}
	for i := 1; i < len(h.t); i++ {
		if dt := h.t[i] - h.t[i-1]; math.Abs(dt-float64(p.outEvery)*p.dt) > 1e-4 {
			t.Fatalf("row %d: time step %g, want %g", i, dt, float64(p.outEvery)*p.dt)
		}
	}
	if last := h.t[len(h.t)-1]; math.Abs(last-res.Time) > 1e-4 || res.Time < c.Run.EndTime {
		t.Errorf("last row at t = %g, run ended at %g, end_time %g", last, res.Time, c.Run.EndTime)
	}
	for _, want := range []string{"case: DFG 2D-2", "caution: a 2D laminar demonstrator", "tau+ = ", "Mach", "MLUPS"} {
		if !strings.Contains(log.String(), want) {
			t.Errorf("log lacks %q:\n%s", want, log.String())
		}
	}
}

// Ensure that cancelling the context stops the run cleanly: Run returns nil
// within a second, with Stopped set, and the history file holds complete
// rows up to the stop, the last one at the time Run reports.
func TestRunCancel(t *testing.T) {
	c := loadTestCase(t, "box_demo.toml")
	c.Run.EndTime = 1000 // far longer than the test waits
	dir := t.TempDir()
	ctx, cancel := context.WithCancel(context.Background())
	var log syncBuffer
	type out struct {
		res Result
		err error
	}
	done := make(chan out, 1)
	go func() {
		res, err := Run(ctx, c, dir, &log)
		done <- out{res, err}
	}()

	// Wait until the file has grown by a few rows, then stop the run.
	path := filepath.Join(dir, "forces.dat")
	deadline := time.Now().Add(30 * time.Second)
	for {
		b, _ := os.ReadFile(path)
		if bytes.Count(b, []byte("\n")) > 5 {
			break
		}
		if time.Now().After(deadline) {
			t.Fatal("the history file did not grow")
		}
		time.Sleep(20 * time.Millisecond)
	}
	cancel()
	stop := time.Now()
	var o out
	select {
	case o = <-done:
	case <-time.After(5 * time.Second):
		t.Fatal("Run did not return 5 s after the cancel")
	}
	if d := time.Since(stop); d > time.Second {
		t.Errorf("Run returned %v after the cancel, want under 1 s", d)
	}
	if o.err != nil || !o.res.Stopped {
		t.Fatalf("Run = %+v, %v; want Stopped and a nil error", o.res, o.err)
	}
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if len(b) == 0 || b[len(b)-1] != '\n' {
		t.Error("the history file does not end with a complete line")
	}
	h := readHistory(t, path) // every line complete and well formed
	if last := h.t[len(h.t)-1]; math.Abs(last-o.res.Time) > 1e-4 || last >= c.Run.EndTime {
		t.Errorf("last row at t = %g, Run stopped at %g", last, o.res.Time)
	}
	if !strings.Contains(log.String(), "stopped early") {
		t.Errorf("log does not report the early stop:\n%s", log.String())
	}
}

// Ensure that Run reports an invalid case and an unwritable output before
// doing any work.
func TestRunErrors(t *testing.T) {
	c := loadTestCase(t, "dfg_2d1_cylinder.toml")
	c.Flow.Reynolds = 0
	if _, err := Run(context.Background(), c, t.TempDir(), &bytes.Buffer{}); err == nil {
		t.Error("Re = 0 accepted")
	}
	c = loadTestCase(t, "dfg_2d1_cylinder.toml")
	c.Run.Output = filepath.Join(t.TempDir(), "no", "such", "dir", "f.dat")
	if _, err := Run(context.Background(), c, t.TempDir(), &bytes.Buffer{}); err == nil {
		t.Error("an unwritable output accepted")
	}
}
