package report

import (
	"bytes"
	"encoding/csv"
	"encoding/xml"
	"errors"
	"html"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"
)

const hostile = `<script>alert(1)</script>`

func ptr(v float64) *float64 { return &v }

// history returns n samples of a force settling from a start-up
// transient onto a noisy oscillation about mean, seeded.
func history(n int, dt, mean float64, seed uint64) (t, y []float64) {
	rng := rand.New(rand.NewPCG(seed, 1))
	t = make([]float64, n)
	y = make([]float64, n)
	for i := range n {
		t[i] = float64(i) * dt
		y[i] = mean + 2*mean*math.Exp(-t[i]/0.5) + 0.02*mean*math.Sin(2*math.Pi*t[i]/0.3) + 0.005*mean*rng.NormFloat64()
	}
	return t, y
}

// celikColumn1 reads column 1 of Celik et al. (2008) Table 1 from testdata.
func celikColumn1(t testing.TB) map[string]float64 {
	t.Helper()
	f, err := os.Open("testdata/celik_2008_gci_example.csv")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	out := map[string]float64{}
	for i, name := range recs[0] {
		if v, err := strconv.ParseFloat(recs[1][i], 64); err == nil {
			out[name] = v
		}
	}
	return out
}

// celikMesh is the mesh study of Celik et al. (2008) Table 1, column 1,
// with h = N^(-1/2) for the two-dimensional grids (their eq. 1).
func celikMesh(t testing.TB) MeshStudy {
	c := celikColumn1(t)
	return MeshStudy{
		Title:        "reattachment length, Celik et al. (2008) Table 1",
		H:            []float64{math.Pow(c["N1"], -0.5), math.Pow(c["N2"], -0.5), math.Pow(c["N3"], -0.5)},
		Value:        []float64{c["phi1"], c["phi2"], c["phi3"]},
		HalfWidth:    []float64{0.01, 0.01, 0.012},
		Extrapolated: c["phi_ext21"],
		GCI:          c["gci_fine21_percent"] / 100,
		Order:        c["p"],
		Convergence:  "monotonic",
		Warnings:     []string{"grid ratio " + hostile},
	}
}

func testStudy(t testing.TB) Study {
	var variants []Variant
	means := []float64{5.58, 5.71, 5.93}
	labels := []string{"v03", "v01", "v02"}
	for i, m := range means {
		tt, cd := history(400, 0.01, m, uint64(i+1))
		_, cl := history(300, 0.0133, 0.01, uint64(i+11))
		name := "case " + labels[i]
		if i == 1 {
			name = hostile
		}
		variants = append(variants, Variant{
			Label: labels[i], Name: name, State: "done",
			Params:  map[string]string{"angle": strconv.Itoa(2 * i), "flap": "0.2"},
			Runtime: 93*time.Minute + 7*time.Second, Cores: 16,
			Quantities: []QuantitySeries{
				{Name: "drag coefficient", Time: tt, Value: cd, TransientEnd: 2.5, Mean: m, HalfWidth: 0.012, Verdict: "converged", Message: "stationary after 2.5 s"},
				{Name: "lift coefficient", Time: tt[:300], Value: cl, TransientEnd: 1, Mean: 0.01, HalfWidth: 0.002, Verdict: "drifting", Message: "trend " + hostile},
			},
		})
	}
	variants = append(variants, Variant{
		Label: "v04", Name: "steep", State: "failed", Params: map[string]string{"angle": "8", "flap": "0.4"},
		Runtime: 12 * time.Second, Cores: 16, ExitStatus: "exit status 3",
		LogTail: []string{"step 1200: residual 3.1e+02", "floating point exception", hostile},
	})
	nx, ny := 21, 15
	c := Contour{XName: "angle (deg)", YName: "flap (–)", OptX: 2.1, OptY: 0.18}
	for i := range nx {
		c.X = append(c.X, 8*float64(i)/float64(nx-1))
	}
	for j := range ny {
		c.Y = append(c.Y, 0.4*float64(j)/float64(ny-1))
	}
	for j := range ny {
		row := make([]float64, nx)
		for i := range nx {
			dx, dy := c.X[i]-2.1, (c.Y[j]-0.18)/0.1
			row[i] = 5.5 + 0.02*dx*dx + 0.3*dy*dy
		}
		c.Z = append(c.Z, row)
	}
	c.RunsX = []float64{0, 2, 4, 0, 2, 4}
	c.RunsY = []float64{0, 0, 0, 0.2, 0.2, 0.2}
	return Study{
		Name: "wing flap " + hostile, Description: "angle and flap sweep",
		Generated: time.Date(2026, 3, 4, 5, 6, 0, 0, time.UTC),
		Params: []Param{
			{Name: "angle", Kind: "levels", Range: "0, 2, 4", Unit: "deg"},
			{Name: "flap", Kind: "range", Range: "0 .. 0.4", Unit: "m"},
		},
		Design: "full factorial, 9 points", Objective: "drag coefficient", Better: "lower",
		Counts:   Counts{Done: 3, Failed: 1},
		Baseline: "v01",
		Ranking: []RankRow{
			{Rank: 1, Label: "v03", Name: "case v03", Params: map[string]string{"angle": "0", "flap": "0.2"}, Mean: 5.58, HalfWidth: 0.012, Verdict: "converged", Group: "a", Delta: ptr(-0.13), DeltaHalfWidth: ptr(0.017), ChangePercent: ptr(-2.28)},
			{Rank: 2, Label: "v01", Name: hostile, Params: map[string]string{"angle": "2", "flap": "0.2"}, Mean: 5.71, HalfWidth: 0.012, Verdict: "converged", Group: "b", Delta: ptr(0), DeltaHalfWidth: ptr(0), ChangePercent: ptr(0)},
			{Rank: 3, Label: "v02", Name: "case v02", Params: map[string]string{"angle": "4", "flap": "0.2"}, Mean: 5.93, HalfWidth: 0.012, Verdict: "drifting", Group: "c", Delta: ptr(0.22), DeltaHalfWidth: ptr(0.017), ChangePercent: ptr(3.85)},
		},
		Variants: variants,
		Surface: &Surface{
			Model: "quadratic", Response: "drag coefficient", LOORMSE: 0.011, Noise: 0.006, Q2: ptr(0.93),
			Flag:     "extrapolating " + hostile,
			Observed: []float64{5.58, 5.71, 5.93, 5.60, 5.68, 5.95}, LOOPredicted: []float64{5.59, 5.70, 5.91, 5.62, 5.69, 5.93},
			Labels: []string{"v03", hostile, "v02", "v05", "v06", "v07"},
			Sensitivities: []Sensitivity{
				{Param: "angle", First: 0.62, FirstSE: 0.04, Total: 0.70, TotalSE: 0.05},
				{Param: "flap " + hostile, First: 0.25, FirstSE: 0.03, Total: 0.33, TotalSE: 0.04},
			},
			Contours: []Contour{c},
			Optimum:  map[string]float64{"angle": 2.1, "flap": 0.18}, OptimumValue: 5.5, OptimumHalfWidth: 0.02,
		},
		Mesh:    []MeshStudy{celikMesh(t)},
		Caution: "Two variants are still drifting " + hostile,
	}
}

var (
	svgOpenTag = regexp.MustCompile(`<svg\b[^>]*>`)
	attrNum    = func(name string) *regexp.Regexp {
		return regexp.MustCompile(`\s` + name + `="([0-9.eE+-]+)(pt|px)?"`)
	}
	svgWidth  = attrNum("width")
	svgHeight = attrNum("height")
	urlRef    = regexp.MustCompile(`(?i)https?://`)
	xmlnsDecl = regexp.MustCompile(`xmlns(:xlink)?="http://www\.w3\.org/(2000/svg|1999/xlink)"`)
	linkAttr  = regexp.MustCompile(`(?i)\s(src|href|xlink:href)\s*=\s*"([^"]*)"`)
	svgBlock  = regexp.MustCompile(`(?s)<svg\b.*?</svg>`)
)

func render(t *testing.T, s Study) string {
	t.Helper()
	var buf bytes.Buffer
	if err := Render(&buf, s); err != nil {
		t.Fatalf("Render: %v", err)
	}
	return buf.String()
}

// Ensure that the page of a full study has one ranking row per ranked
// variant, sized inline figures, no script, no external reference, and
// escaped study text.
func TestRenderStudy(t *testing.T) {
	s := testStudy(t)
	out := render(t, s)
	if os.Getenv("SWEEP_REPORT_KEEP") != "" {
		_ = os.WriteFile(os.Getenv("SWEEP_REPORT_KEEP"), []byte(out), 0o644)
	}

	if !strings.HasPrefix(out, "<!DOCTYPE html>") {
		t.Errorf("page does not start with the HTML doctype")
	}
	if n := strings.Count(out, `<table id="ranking">`); n != 1 {
		t.Errorf("ranking tables = %d, want 1", n)
	}
	if n := strings.Count(out, `<tr class="rank-row">`); n != len(s.Ranking) {
		t.Errorf("rank rows = %d, want %d", n, len(s.Ranking))
	}
	if n := strings.Count(out, "<details"); n != len(s.Variants) {
		t.Errorf("variant blocks = %d, want %d", n, len(s.Variants))
	}
	if !strings.Contains(out, "<details open>\n<summary>v04") {
		t.Errorf("the failed variant's block is not open")
	}

	// Figures: ranking, 3 variants × 2 histories, 1 contour, LOO,
	// sensitivities, 1 mesh study.
	tags := svgOpenTag.FindAllString(out, -1)
	if want := 1 + 3*2 + 1 + 1 + 1 + 1; len(tags) != want {
		t.Errorf("svg figures = %d, want %d", len(tags), want)
	}
	for i, tag := range tags {
		for _, re := range []*regexp.Regexp{svgWidth, svgHeight} {
			m := re.FindStringSubmatch(tag)
			if m == nil {
				t.Errorf("svg %d has no %s: %.120s", i, re, tag)
				continue
			}
			if v, err := strconv.ParseFloat(m[1], 64); err != nil || !(v > 0) {
				t.Errorf("svg %d: %s = %q, want > 0", i, re, m[1])
			}
		}
	}
	// Each figure must be well-formed XML, which also proves the text
	// drawn inside was escaped.
	for i, b := range svgBlock.FindAllString(out, -1) {
		d := xml.NewDecoder(strings.NewReader(b))
		for {
			_, err := d.Token()
			if errors.Is(err, io.EOF) {
				break
			}
			if err != nil {
				t.Errorf("svg %d is not well-formed XML: %v", i, err)
				break
			}
		}
	}

	if strings.Contains(strings.ToLower(out), "<script") {
		t.Errorf("page contains a <script tag")
	}
	if strings.Contains(out, "<?xml") {
		t.Errorf("page contains an XML declaration")
	}
	if n := len(urlRef.FindAllString(xmlnsDecl.ReplaceAllString(out, ""), -1)); n != 0 {
		t.Errorf("page has %d http(s) references besides the SVG namespaces", n)
	}
	for _, m := range linkAttr.FindAllStringSubmatch(out, -1) {
		if !strings.HasPrefix(m[2], "#") && !strings.HasPrefix(m[2], "data:") {
			t.Errorf("%s points outside the page: %q", m[1], m[2])
		}
	}

	esc := "&lt;script&gt;alert(1)&lt;/script&gt;"
	// Title, caution, ranking name, variant summary, quantity message,
	// log line, surface flag, warning: html/template escaping.
	if n := strings.Count(out, esc); n < 8 {
		t.Errorf("escaped hostile text appears %d times, want >= 8", n)
	}
	if !strings.Contains(out, "floating point exception\n"+esc+"</pre>") {
		t.Errorf("log tail not found escaped inside <pre>")
	}
	// Drawn text (LOO label, sensitivity axis): escaped by the SVG canvas.
	inSVG := 0
	for _, b := range svgBlock.FindAllString(out, -1) {
		inSVG += strings.Count(b, esc)
	}
	if inSVG < 2 {
		t.Errorf("escaped hostile text appears %d times inside figures, want >= 2", inSVG)
	}
	// Baseline columns are present since a baseline is set.
	for _, want := range []string{"Δ vs baseline", "+0.220 ± 0.017", "-2.28 %", `<span class="tag">baseline</span>`, "1h33m7s"} {
		if !strings.Contains(html.UnescapeString(out), want) {
			t.Errorf("page lacks %q", want)
		}
	}
}

// Ensure that the mesh section shows the GCI of Celik et al. (2008)
// Table 1, column 1, and that the band is φ1 ± GCI·φ1.
func TestMeshCelik(t *testing.T) {
	c := celikColumn1(t)
	m := celikMesh(t)
	fine, lo, hi, ok := gciBand(m)
	if !ok {
		t.Fatal("gciBand: not ok")
	}
	// Celik et al. (2008) Table 1 column 1: φ1 = 6.063, GCI_fine21 = 2.2 %.
	const tol = 1e-12
	if fine != c["phi1"] {
		t.Errorf("fine value = %v, want φ1 = %v", fine, c["phi1"])
	}
	if want := 6.063 * (1 - 0.022); math.Abs(lo-want) > tol*want {
		t.Errorf("band low = %v, want %v (rel %g)", lo, want, tol)
	}
	if want := 6.063 * (1 + 0.022); math.Abs(hi-want) > tol*want {
		t.Errorf("band high = %v, want %v (rel %g)", hi, want, tol)
	}
	// With the safety factor 1.25 > 1 and monotonic convergence the
	// extrapolated value (6.1685, Table 1) lies inside the GCI band.
	if ext := c["phi_ext21"]; ext < lo || ext > hi {
		t.Errorf("φ_ext21 = %v outside the GCI band [%v, %v]", ext, lo, hi)
	}
	out := render(t, Study{Name: "mesh", Mesh: []MeshStudy{m}})
	for _, want := range []string{"2.2 %", "5.93 .. 6.196", "6.168", "<td class=\"num\">6.063 ± 0.010</td>"} {
		if !strings.Contains(out, want) {
			t.Errorf("mesh section lacks %q", want)
		}
	}
}

// Ensure that decimation keeps at most the requested samples, both ends,
// the extremes, and the time order.
func TestDecimate(t *testing.T) {
	tt, y := history(100_000, 1e-3, 1, 7)
	y[54321] = 9  // spike
	y[77777] = -9 // dip
	xs, ys := decimate(tt, y, maxPlotPoints)
	if len(xs) > maxPlotPoints || len(xs) != len(ys) {
		t.Fatalf("decimated to %d/%d samples, want <= %d", len(xs), len(ys), maxPlotPoints)
	}
	if len(xs) < maxPlotPoints-2 {
		t.Errorf("decimated to %d samples, want close to %d", len(xs), maxPlotPoints)
	}
	if xs[0] != tt[0] || xs[len(xs)-1] != tt[len(tt)-1] {
		t.Errorf("ends not kept: %v..%v", xs[0], xs[len(xs)-1])
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for i, v := range ys {
		lo, hi = min(lo, v), max(hi, v)
		if i > 0 && !(xs[i] > xs[i-1]) {
			t.Fatalf("time not increasing at %d: %v after %v", i, xs[i], xs[i-1])
		}
	}
	if lo != -9 || hi != 9 {
		t.Errorf("extremes = %v, %v, want -9, 9", lo, hi)
	}
	// A short series is kept whole, minus non-finite samples.
	xs, _ = decimate([]float64{0, 1, 2, 3}, []float64{1, math.NaN(), 2, 3}, 8)
	if len(xs) != 3 {
		t.Errorf("short series: %d samples, want 3", len(xs))
	}
}

// Ensure that estimates print with two significant digits of their
// half-width (JCGM 100:2008 §7.2.6, from memory).
func TestFmtPM(t *testing.T) {
	for _, c := range []struct {
		mean, hw float64
		want     string
	}{
		{6.063, 0.0217, "6.063 ± 0.022"},         // Celik et al. (2008) φ1 with its GCI width
		{5.57953523384, 0.0123, "5.580 ± 0.012"}, // DFG 2D-1 drag coefficient (Nabh 1998)
		{1234.4, 56, "1234 ± 56"},
		{0.5, 0.25, "0.50 ± 0.25"},
		{3, 0, "3"},
		{3, math.NaN(), "3"},
		{math.NaN(), 1, "–"},
		{1.5e20, 2e18, "1.5e+20 ± 2e+18"},
	} {
		if got := fmtPM(c.mean, c.hw); got != c.want {
			t.Errorf("fmtPM(%v, %v) = %q, want %q", c.mean, c.hw, got, c.want)
		}
	}
}

// Ensure that a contour grid that does not match its axes is refused
// before anything is written.
func TestRenderBadContour(t *testing.T) {
	s := testStudy(t)
	s.Surface.Contours[0].Z = s.Surface.Contours[0].Z[1:]
	var buf bytes.Buffer
	if err := Render(&buf, s); err == nil {
		t.Fatal("Render accepted a contour with a short Z")
	}
	if buf.Len() != 0 {
		t.Errorf("Render wrote %d bytes before failing", buf.Len())
	}
}

// Ensure that an empty study still gives a valid page without figures.
func TestRenderEmpty(t *testing.T) {
	out := render(t, Study{Name: "empty"})
	if strings.Contains(out, "<svg") || strings.Contains(out, "rank-row") {
		t.Errorf("empty study drew figures or rows")
	}
	if !strings.Contains(out, "No variant has been ranked yet.") {
		t.Errorf("empty study lacks the no-ranking note")
	}
}

func BenchmarkRender(b *testing.B) {
	s := testStudy(b)
	// 20 variants with 20 000-sample histories.
	s.Variants = s.Variants[:0]
	for i := range 20 {
		tt, y := history(20_000, 1e-3, 5.6, uint64(i))
		s.Variants = append(s.Variants, Variant{Label: "v" + strconv.Itoa(i), State: "done",
			Quantities: []QuantitySeries{{Name: "drag coefficient", Time: tt, Value: y, TransientEnd: 2.5, Mean: 5.6, HalfWidth: 0.01}}})
	}
	for b.Loop() {
		if err := Render(io.Discard, s); err != nil {
			b.Fatal(err)
		}
	}
}

// Ensure that a one-parameter surface is drawn as a curve with its band
// and the runs' error bars, that its single index is said to be 1 by
// definition instead of drawn, and that a study without a surface says
// why in the surface section.
func TestRenderCurveAndNoSurface(t *testing.T) {
	s := Study{Name: "curve", Objective: "drag", Better: "lower"}
	c := &Curve{Param: "re"}
	for i := range 41 {
		x := 10 + 30*float64(i)/40
		c.X, c.Mean, c.HalfWidth = append(c.X, x), append(c.Mean, 80/x), append(c.HalfWidth, 0.2)
	}
	for _, x := range []float64{10, 20, 30, 40} {
		c.RunX, c.RunY, c.RunHalfWide = append(c.RunX, x), append(c.RunY, 80/x), append(c.RunHalfWide, 0.05)
	}
	s.Surface = &Surface{Model: "quadratic", Response: "drag", Curve: c, Observed: []float64{8, 4, 2.7, 2}, LOOPredicted: []float64{8.1, 4, 2.6, 2.1},
		Sensitivities: []Sensitivity{{Param: "re", First: 1, Total: 1}}, OptimumSource: "run v004", OptimumValue: 2, OptimumHalfWidth: 0.05}
	out := render(t, s)
	sec := out[strings.Index(out, `<section id="surface">`):]
	if !strings.Contains(sec, "drag against re: the fitted mean in its 95 % band") || strings.Count(sec, "<svg") != 2 {
		t.Errorf("curve section: %d figures (want the curve and the leave-one-out check)\n%.2000s", strings.Count(sec, "<svg"), sec)
	}
	if !strings.Contains(sec, "its Sobol&#39; index is 1 by definition") || !strings.Contains(sec, "(run v004, measured)") {
		t.Errorf("curve section lacks the index note or the optimum's source")
	}
	out = render(t, Study{Name: "none", SurfaceNote: "2 variants have an average of drag with an interval, and a surface needs at least 3"})
	if !strings.Contains(out, "No surface is shown: 2 variants have an average of drag") {
		t.Errorf("no surface note in:\n%s", out)
	}
}

// Ensure that a trade-off section lists every variant with its averages
// and its status, marks the front, says the limits and draws one figure.
func TestRenderTradeoff(t *testing.T) {
	tr := &Tradeoff{Objectives: []string{"drag", "downforce"}, Better: []string{"lower", "higher"}, Limits: []string{"lift ≤ 0.3"},
		Lo: []float64{math.Inf(-1), math.Inf(-1)}, Hi: []float64{math.Inf(1), 2.4}, Draws: 5000,
		Predicted: [][]float64{{1, 1}, {1.2, 2}, {1.5, 2.5}}}
	for i, m := range [][2]float64{{1, 1}, {1.2, 2}, {1.5, 2.5}, {1.3, 1.9}} {
		tr.Rows = append(tr.Rows, TradeRow{Label: "v00" + strconv.Itoa(i+1), Params: map[string]string{}, Mean: m[:], HalfWidth: []float64{0.01, 0.02},
			Front: i < 3, Chance: map[bool]float64{true: 1, false: 0}[i < 3], Status: "on the front"})
	}
	out := render(t, Study{Name: "trade", Tradeoff: tr})
	sec := out[strings.Index(out, `<section id="tradeoff">`):]
	sec = sec[:strings.Index(sec, "</section>")]
	if n := strings.Count(sec, `<tr class="front">`); n != 3 {
		t.Errorf("front rows %d, want 3", n)
	}
	if n := strings.Count(sec, "<svg"); n != 1 || !strings.Contains(sec, "within lift ≤ 0.3") || !strings.Contains(sec, "1.200 ± 0.010") {
		t.Errorf("trade-off section:\n%s", sec)
	}
}
