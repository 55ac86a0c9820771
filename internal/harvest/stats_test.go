package harvest

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/sweep-cfd/sweep/internal/estimate"
	"github.com/sweep-cfd/sweep/internal/studytest"
)

func seq(n int) []float64 {
	t := make([]float64, n)
	for i := range t {
		t[i] = float64(i)
	}
	return t
}

// Ensure that uneven steps give a time average: on any grid, linear
// interpolation of y = a + b t onto an even grid reproduces the line, so the
// sample mean equals a + b (t_0 + t_end)/2 exactly (plain calculus).
func TestUniformGridTimeAverage(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 5))
	tt := []float64{0}
	for len(tt) < 5000 {
		tt = append(tt, tt[len(tt)-1]+0.001+0.01*rng.Float64())
	}
	y := make([]float64, len(tt))
	for i, v := range tt {
		y[i] = 2 + 3*v
	}
	ys, dt, resampled := uniformGrid(tt, y)
	if !resampled {
		t.Fatal("uneven steps not resampled")
	}
	m, _ := estimate.MeanVariance(ys)
	want := 2 + 3*(tt[0]+tt[len(tt)-1])/2
	if math.Abs(m-want) > 1e-9*want {
		t.Errorf("time average %v, want %v", m, want)
	}
	if math.Abs(dt-(tt[len(tt)-1]-tt[0])/float64(len(tt)-1)) > 1e-15 {
		t.Errorf("step %v", dt)
	}
	// Even steps are left alone.
	even := seq(100)
	if _, _, r := uniformGrid(even, even); r {
		t.Error("even steps resampled")
	}
}

// Ensure that a settled history (a steady solution approached
// exponentially, as iterative solvers do) is reported steady with its last
// value; the drift over the last quarter is derived by hand below.
func TestAnalyzeSteady(t *testing.T) {
	n := 4000
	y := make([]float64, n)
	for i := range y {
		y[i] = 0.3 + 0.2*math.Exp(-float64(i)/200)
	}
	r := Analyze(seq(n), y, Options{Rel: 1e-3})
	if r.Verdict != Steady {
		t.Fatalf("verdict %s (%s), want steady", r.Verdict, r.Message)
	}
	if r.Mean != y[n-1] || r.Last != y[n-1] {
		t.Errorf("mean %v, last %v, want %v", r.Mean, r.Last, y[n-1])
	}
	// Over the last 1000 samples the curve falls by
	// 0.2 (e^{−15} − e^{−19.995}) ≈ 6.1e−8; a fitted line sees about that.
	if r.Drift > 0 || r.Drift < -1e-7 {
		t.Errorf("drift %v, want about −6e−8", r.Drift)
	}
	if r.HalfWidth > r.Tolerance {
		t.Errorf("bound %v above tolerance %v", r.HalfWidth, r.Tolerance)
	}
}

// Ensure that a too-uncertain average says so and that the time it asks
// for is about right: rerunning with that length meets the tolerance. The
// half-width falls like 1/√N (common practice); with 36 effective batches
// of randomness the check allows 25 %.
func TestAnalyzeNotConvergedNeededTime(t *testing.T) {
	rng := rand.New(rand.NewPCG(6, 6))
	n := 20000
	x := studytest.AR1(rng, n, 0.9, 1)
	for i := range x {
		x[i] += 10
	}
	opts := Options{Rel: 0.002}
	r := Analyze(seq(n), x, opts)
	if r.Verdict != NotConverged {
		t.Fatalf("verdict %s, want not_converged", r.Verdict)
	}
	if !(r.ExtraTime > 0) || r.ExtraCapped {
		t.Fatalf("extra %v (capped %v)", r.ExtraTime, r.ExtraCapped)
	}
	long := studytest.AR1(rng, int(r.ExtraTime)+n, 0.9, 1)
	for i := range long {
		long[i] += 10
	}
	r2 := Analyze(seq(len(long)), long, opts)
	if r2.HalfWidth > 1.25*r2.Tolerance {
		t.Errorf("with the asked length the half-width is %v, tolerance %v", r2.HalfWidth, r2.Tolerance)
	}
}

// Ensure that unusable histories get the verdict that says why, and a
// message: no data, a diverged run (failed), too short to judge (with the
// time still needed), or a start time beyond the history.
func TestAnalyzeUnusable(t *testing.T) {
	nan := seq(500)
	nan[300] = math.NaN()
	late := 1e9
	cases := []struct {
		name    string
		t, y    []float64
		opts    Options
		verdict Verdict
		msg     string
	}{
		{"empty", nil, nil, Options{}, NoData, "no data"},
		{"one", []float64{0}, []float64{1}, Options{}, TooShort, "spanning no time"},
		{"nan", seq(500), nan, Options{}, Failed, "non-finite value at sample 301: the run diverged"},
		{"short", seq(60), studytest.AR1(rand.New(rand.NewPCG(7, 7)), 60, 0.5, 1), Options{}, TooShort, "too short to judge: "},
		{"start", seq(500), studytest.AR1(rand.New(rand.NewPCG(8, 8)), 500, 0.5, 1), Options{Start: &late}, TooShort, "after the last sample"},
		{"correlated", seq(2000), studytest.AR1(rand.New(rand.NewPCG(9, 9)), 2000, 0.995, 1), Options{}, TooShort, "correlation times"},
	}
	for _, c := range cases {
		r := Analyze(c.t, c.y, c.opts)
		if r.Verdict != c.verdict || !strings.Contains(r.Message, c.msg) {
			t.Errorf("%s: verdict %s, message %q, want %s with %q", c.name, r.Verdict, r.Message, c.verdict, c.msg)
		}
		if !math.IsNaN(r.HalfWidth) {
			t.Errorf("%s: half-width %v for an unusable history, want NaN (unknown)", c.name, r.HalfWidth)
		}
		if c.verdict == TooShort && c.name != "one" && c.name != "start" && !(r.ExtraTime > 0) {
			t.Errorf("%s: too short but no time asked for (%v)", c.name, r.ExtraTime)
		}
	}
}

// Ensure that a fixed start time is honoured.
func TestAnalyzeFixedStart(t *testing.T) {
	rng := rand.New(rand.NewPCG(10, 10))
	x := studytest.AR1(rng, 5000, 0.5, 1)
	start := 1234.5
	r := Analyze(seq(5000), x, Options{Start: &start, Abs: 1})
	if r.TransientEnd != 1235 || r.TransientMethod != "fixed" || r.Samples != 5000-1235 {
		t.Errorf("transient end %v (%s), samples %d", r.TransientEnd, r.TransientMethod, r.Samples)
	}
	m, _ := estimate.MeanVariance(x[1235:])
	if r.Mean != m {
		t.Errorf("mean %v, want %v", r.Mean, m)
	}
}

// Ensure that every verdict encodes to JSON with the names scripts read.
func TestResultJSON(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 11))
	x := studytest.AR1(rng, 20000, 0.5, 1)
	steady := make([]float64, 1000)
	for i := range steady {
		steady[i] = 1
	}
	for _, r := range []Result{
		Analyze(seq(20000), x, Options{Abs: 1}),
		Analyze(seq(20000), x, Options{Abs: 1e-6}),
		Analyze(seq(1000), steady, Options{}),
		Analyze(nil, nil, Options{}),
	} {
		b, err := json.Marshal(r)
		if err != nil {
			t.Fatalf("%s: %v", r.Verdict, err)
		}
		var m map[string]any
		if err := json.Unmarshal(b, &m); err != nil {
			t.Fatal(err)
		}
		for _, k := range []string{"mean", "half_width", "samples", "effective_samples", "transient_end", "verdict"} {
			if _, ok := m[k]; !ok {
				t.Errorf("%s: JSON lacks %q: %s", r.Verdict, k, b)
			}
		}
	}
}

// BenchmarkAnalyze analyses 140,000 samples of AR(1) noise (φ = 0.9) with
// a transient, the length of the 10 MB history of BenchmarkReadHistory.
func BenchmarkAnalyze(b *testing.B) {
	rng := rand.New(rand.NewPCG(13, 13))
	n := 140000
	x := studytest.AR1(rng, n, 0.9, 1)
	for i := range x {
		x[i] += 1 + 10*math.Exp(-float64(i)/2000)
	}
	tt := seq(n)
	for b.Loop() {
		if r := Analyze(tt, x, Options{}); r.Verdict == Failed {
			b.Fatal(r.Message)
		}
	}
}

// Ensure that the printed digits set a floor under the standard error: a
// steady history printed to six significant digits that never changes is
// known to its last digit, q/√12 for a uniform rounding error (common
// practice), and the shortest decimal form gives each value's step.
func TestResolutionFloor(t *testing.T) {
	if q := resolution([]float64{4.025, 4.02501, 4.0251}); q != 1e-5 {
		t.Errorf("resolution %g, want 1e-5", q)
	}
	if q := resolution([]float64{1234.5, 1.2e-7}); math.Abs(q-1e-8)/1e-8 > 1e-12 {
		t.Errorf("resolution %g, want 1e-8", q)
	}
	y := make([]float64, 400)
	for i := range y {
		y[i] = 4.02501
	}
	r := Analyze(seq(400), y, Options{})
	if r.Verdict != Steady || r.HalfWidth != 0 {
		t.Fatalf("constant history: %s ± %v", r.Verdict, r.HalfWidth)
	}
	if se, want := r.Estimate().StdError, 1e-5/math.Sqrt(12); math.Abs(se-want) > 1e-12*want {
		t.Errorf("standard error of a constant printed to six digits %g, want q/√12 = %g", se, want)
	}
}
