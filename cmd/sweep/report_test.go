package main

import (
	"encoding/json"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"github.com/sweep-cfd/sweep/internal/studytest"
)

const hostile = "<script>alert(1)</script>"

// reportStudy runs a small study whose stage writes a drag history with a
// start-up transient, one variant named with markup and one that fails
// with markup in its log, and returns its directory.
func reportStudy(t *testing.T) string {
	t.Helper()
	dir := t.TempDir()
	studytest.WriteFile(t, filepath.Join(dir, "template", "gen.awk"), `BEGIN { srand(seed); print "# t Cd Cl"
  m = 1 + (a - 0.3)^2 + 2 * (b - 0.6)^2
  for (i = 1; i <= 3000; i++) printf "%d %.6f %.6f\n", i, m + 0.5 * exp(-i / 200) + 0.01 * (rand() - 0.5), 0.1 * sin(i / 10) }
`, 0o644)
	studytest.WriteFile(t, filepath.Join(dir, "study.toml"), `name = "report check"
[case]
base = "template"
[[param]]
name = "a"
min = 0.0
max = 1.0
[[param]]
name = "b"
min = 0.0
max = 1.0
[design]
scheme = "table"
points = [
  { a = 0.0, b = 0.0 }, { a = 1.0, b = 0.0 }, { a = 0.0, b = 1.0 }, { a = 1.0, b = 1.0 },
  { a = 0.5, b = 0.5, name = "`+hostile+`" }, { a = 0.3, b = 0.6 }, { a = 0.7, b = 0.2 },
  { a = 0.2, b = 0.9 }, { a = 0.9, b = 0.7 }, { a = 0.45, b = 0.05 },
]
[[quantity]]
name = "drag"
files = "h.dat"
value = "Cd"
better = "lower"
tolerance = 0.002
[[stage]]
name = "solve"
shell = true
run = "if [ $SWEEP_VARIANT_LABEL = v010 ]; then echo '`+hostile+` diverged' >&2; exit 4; fi; awk -v a=$SWEEP_PARAM_A -v b=$SWEEP_PARAM_B -v seed=${SWEEP_VARIANT_LABEL#v} -f gen.awk > h.dat"
`, 0o644)
	for _, args := range [][]string{{"plan", dir}, {"run", dir, "-q"}} {
		sweep(t, args...)
	}
	return dir
}

// Ensure that the report is one self-contained file: one ranking row per
// ranked variant, figures with sizes, markup from the study escaped, no
// script and nothing fetched; and, where a browser is installed, that it
// renders in headless Chromium without console errors, every figure of
// non-zero size, with a screenshot kept for people to look at.
func TestReport(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a small study")
	}
	dir := reportStudy(t)
	out, errs, code := sweep(t, "report", dir)
	if code != 0 {
		t.Fatalf("report: %d %s", code, errs)
	}
	path := filepath.Join(dir, "results", "report.html")
	if !strings.Contains(out, path) {
		t.Errorf("output %q does not name %s", out, path)
	}
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	page := string(b)
	rankOut, _, _ := sweep(t, "rank", dir, "--json")
	var rows []map[string]any
	json.Unmarshal([]byte(rankOut), &rows)
	if n := strings.Count(page, `class="rank-row"`); n != len(rows) || n != 9 {
		t.Errorf("%d ranking rows in the report, %d ranked variants (want 9)", n, len(rows))
	}
	if strings.Contains(strings.ToLower(page), "<script") {
		t.Error("the report contains a script tag: markup from the study was not escaped")
	}
	if !strings.Contains(page, "&lt;script&gt;") {
		t.Error("the hostile name is missing from the report")
	}
	for _, m := range regexp.MustCompile(`(?:src|href)\s*=\s*"(https?:[^"]*)"`).FindAllStringSubmatch(page, -1) {
		t.Errorf("the report refers outside itself: %s", m[1])
	}
	svgs := regexp.MustCompile(`<svg[^>]*>`).FindAllString(page, -1)
	if len(svgs) < 4 {
		t.Errorf("only %d figures", len(svgs))
	}

	chromium := os.Getenv("CHROMIUM")
	if chromium == "" {
		chromium = "/usr/bin/chromium"
	}
	script := filepath.Join("..", "..", "tests", "browser", "check-report.js")
	_, nodeErr := exec.LookPath("node")
	_, chromeErr := os.Stat(chromium)
	_, modErr := os.Stat(filepath.Join("..", "..", "tests", "browser", "node_modules", "playwright-core"))
	if nodeErr != nil || chromeErr != nil || modErr != nil {
		if os.Getenv("SWEEP_TEST_BROWSER") == "1" {
			t.Fatalf("SWEEP_TEST_BROWSER=1 but the browser check cannot run (node: %v, chromium: %v, playwright-core: %v)", nodeErr, chromeErr, modErr)
		}
		t.Skip("no headless browser here (apt-get install chromium; npm ci in tests/browser)")
	}
	outDir := os.Getenv("SWEEP_TEST_OUTPUT")
	if outDir == "" {
		outDir = t.TempDir()
	}
	os.MkdirAll(outDir, 0o755)
	shot := filepath.Join(outDir, "report-screenshot.png")
	cmd := exec.Command("node", script, path, shot, strconv.Itoa(len(rows)), hostile)
	cmd.Env = append(os.Environ(), "CHROMIUM="+chromium)
	res, err := cmd.CombinedOutput()
	if err != nil {
		t.Fatalf("browser check failed: %v\n%s", err, res)
	}
	t.Logf("browser: %s; screenshot: %s", strings.TrimSpace(string(res)), shot)
}
