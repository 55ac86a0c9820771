package lbm

import (
	"bufio"
	"context"
	"encoding/csv"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// longTests reports whether the slow validation runs are enabled: not under
// -short, and SWEEP_TEST_LONG=1.
func longTests() bool { return !testing.Short() && os.Getenv("SWEEP_TEST_LONG") == "1" }

// historyData is a parsed history file.
type historyData struct {
	t, cd, cl []float64
}

// readHistory parses a history file written by Run, checking its format:
// the header line "# time Cd Cl", then rows of three numbers.
func readHistory(t *testing.T, path string) historyData {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	var h historyData
	sc := bufio.NewScanner(f)
	for no := 1; sc.Scan(); no++ {
		line := sc.Text()
		if no == 1 {
			if line != "# time Cd Cl" {
				t.Fatalf("%s: header %q, want %q", path, line, "# time Cd Cl")
			}
			continue
		}
		fs := strings.Fields(line)
		if len(fs) != 3 {
			t.Fatalf("%s:%d: %d fields in %q, want 3", path, no, len(fs), line)
		}
		var v [3]float64
		for i, s := range fs {
			if v[i], err = strconv.ParseFloat(s, 64); err != nil {
				t.Fatalf("%s:%d: %v", path, no, err)
			}
		}
		h.t = append(h.t, v[0])
		h.cd = append(h.cd, v[1])
		h.cl = append(h.cl, v[2])
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	return h
}

// window returns the samples with t ≥ t0.
func (h historyData) window(t0 float64) historyData {
	var w historyData
	for i, t := range h.t {
		if t >= t0 {
			w.t = append(w.t, t)
			w.cd = append(w.cd, h.cd[i])
			w.cl = append(w.cl, h.cl[i])
		}
	}
	return w
}

func mean(x []float64) float64 {
	s := 0.0
	for _, v := range x {
		s += v
	}
	return s / float64(len(x))
}

func stddev(x []float64) float64 {
	m, s := mean(x), 0.0
	for _, v := range x {
		s += (v - m) * (v - m)
	}
	return math.Sqrt(s / float64(len(x)))
}

// shedding measures a periodic history over the samples with t ≥ t0. The
// periods are delimited by the upward zero crossings of the lift (linear
// interpolation between samples); it returns the mean period over all
// complete periods, the largest drag and lift coefficients within them, and
// the largest drag coefficient of each period.
func shedding(t *testing.T, h historyData, t0 float64) (period, cdMax, clMax float64, perPeriod []float64) {
	t.Helper()
	var cross []float64
	var idx []int
	for i := 1; i < len(h.t); i++ {
		if h.t[i-1] < t0 || !(h.cl[i-1] < 0 && h.cl[i] >= 0) {
			continue
		}
		cross = append(cross, h.t[i-1]+(h.t[i]-h.t[i-1])*(-h.cl[i-1])/(h.cl[i]-h.cl[i-1]))
		idx = append(idx, i)
	}
	if len(cross) < 3 {
		t.Fatalf("only %d lift zero crossings after t = %g: no periodic shedding", len(cross), t0)
	}
	cdMax, clMax = math.Inf(-1), math.Inf(-1)
	for p := 0; p+1 < len(idx); p++ {
		m := math.Inf(-1)
		for i := idx[p]; i < idx[p+1]; i++ {
			m = math.Max(m, h.cd[i])
			clMax = math.Max(clMax, h.cl[i])
		}
		perPeriod = append(perPeriod, m)
		cdMax = math.Max(cdMax, m)
	}
	n := len(cross) - 1
	return (cross[n] - cross[0]) / float64(n), cdMax, clMax, perPeriod
}

// dfgRef holds one row of testdata/dfg_reference.csv.
type dfgRef struct{ lower, upper, value float64 }

// loadDFGReference reads testdata/dfg_reference.csv, keyed "case/quantity".
func loadDFGReference(t *testing.T) map[string]dfgRef {
	t.Helper()
	f, err := os.Open(filepath.Join("testdata", "dfg_reference.csv"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	r := csv.NewReader(f)
	ref := map[string]dfgRef{}
	for first := true; ; first = false {
		rec, err := r.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatal(err)
		}
		if first {
			continue
		}
		var v dfgRef
		v.lower, _ = strconv.ParseFloat(rec[2], 64)
		v.upper, _ = strconv.ParseFloat(rec[3], 64)
		v.value = math.NaN()
		if rec[4] != "" {
			v.value, _ = strconv.ParseFloat(rec[4], 64)
		}
		ref[rec[0]+"/"+rec[1]] = v
	}
	return ref
}

// bandError returns the relative distance of x from the band [lo, hi]:
// 0 inside, (lo − x)/lo below, (x − hi)/hi above.
func bandError(x, lo, hi float64) float64 {
	switch {
	case x < lo:
		return (lo - x) / lo
	case x > hi:
		return (x - hi) / hi
	}
	return 0
}

// runCase runs c in a temporary directory and returns its history.
func runCase(t *testing.T, c Case) (Result, historyData) {
	t.Helper()
	dir := t.TempDir()
	var log strings.Builder
	res, err := Run(context.Background(), c, dir, &log)
	if err != nil {
		t.Fatalf("Run: %v\nlog:\n%s", err, log.String())
	}
	t.Logf("%d steps, %.1f s, %.1f MLUPS", res.Steps, res.Elapsed.Seconds(), res.MLUPS)
	return res, readHistory(t, res.Output)
}

// loadTestCase loads a case from testdata.
func loadTestCase(t *testing.T, name string) Case {
	t.Helper()
	c, err := LoadCase(filepath.Join("testdata", name))
	if err != nil {
		t.Fatal(err)
	}
	return c
}
