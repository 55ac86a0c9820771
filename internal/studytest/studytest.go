// Package studytest writes what tests of studies need: study directories
// with a recipe and a template case, files, and the histories and
// scripts of fake solvers. It imports nothing of the program's, so that
// the tests of every package can use it.
package studytest

import (
	"bufio"
	"bytes"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// Must fails the test on err.
func Must(tb testing.TB, err error) {
	tb.Helper()
	if err != nil {
		tb.Fatal(err)
	}
}

// WriteFile writes text to path, making its directories.
func WriteFile(tb testing.TB, path, text string, mode os.FileMode) {
	tb.Helper()
	Must(tb, os.MkdirAll(filepath.Dir(path), 0o755))
	Must(tb, os.WriteFile(path, []byte(text), mode))
}

// CaseFile is the template file a study of Levels renders: "k {{.k}}".
const CaseFile = "case.txt"

// Write writes a study into dir (a new temporary directory when dir is
// ""): study.toml holding text, and a template directory with files
// (relative path → content; a script, starting with "#!", is made
// executable). It returns the study directory.
func Write(tb testing.TB, dir, text string, files map[string]string) string {
	tb.Helper()
	if dir == "" {
		dir = tb.TempDir()
	}
	Must(tb, os.MkdirAll(filepath.Join(dir, "template"), 0o755))
	for name, content := range files {
		mode := os.FileMode(0o644)
		if strings.HasPrefix(content, "#!") {
			mode = 0o755
		}
		WriteFile(tb, filepath.Join(dir, "template", name), content, mode)
	}
	WriteFile(tb, filepath.Join(dir, "study.toml"), text, 0o644)
	return dir
}

// Levels returns the recipe of a study of n variants, parameter k = 1..n
// on listed levels in a factorial design, whose template renders case.txt
// (see CaseFiles), followed by tail (stages, quantities, a backend).
func Levels(n int, tail string) string {
	vals := make([]string, n)
	for i := range vals {
		vals[i] = strconv.Itoa(i + 1)
	}
	return "[case]\nbase = \"template\"\nrender = [\"" + CaseFile + "\"]\n[[param]]\nname = \"k\"\nlevels = [" +
		strings.Join(vals, ", ") + "]\n[design]\nscheme = \"factorial\"\n" + tail
}

// CaseFiles is the template of a Levels study.
func CaseFiles() map[string]string { return map[string]string{CaseFile: "k {{.k}}\n"} }

// ForceHistory writes a five-column force history of n samples (time, the
// total Fx and its pressure and viscous parts, Fy), as a solver's
// post-processing prints it, and returns its size in bytes.
func ForceHistory(tb testing.TB, path string, n int) int64 {
	tb.Helper()
	rng := rand.New(rand.NewPCG(1, 2))
	var b bytes.Buffer
	b.WriteString("# Time Fx Fx_p Fx_v Fy\n")
	for i := range n {
		p := 0.9 + 0.05*rng.NormFloat64()
		v := 0.1 + 0.01*rng.NormFloat64()
		fmt.Fprintf(&b, "%.6e\t%.8e\t%.8e\t%.8e\t%.8e\n", float64(i)*1e-3, p+v, p, v, 0.3*rng.NormFloat64())
	}
	Must(tb, os.WriteFile(path, b.Bytes(), 0o644))
	return int64(b.Len())
}

// AR1History writes n samples "i value 0" of an AR(1) series about mean
// (coefficient phi, innovation standard deviation sd), each value times
// scale, under the header "# time Fx Fy".
func AR1History(tb testing.TB, path string, n int, mean, phi, sd, scale float64, seed uint64) {
	tb.Helper()
	f, err := os.Create(path)
	Must(tb, err)
	defer f.Close()
	w := bufio.NewWriter(f)
	fmt.Fprintln(w, "# time Fx Fy")
	rng := rand.New(rand.NewPCG(seed, 99))
	x := 0.0
	for i := range n {
		x = phi*x + sd*rng.NormFloat64()
		fmt.Fprintf(w, "%d %.9g 0\n", i, (mean+x)*scale)
	}
	Must(tb, w.Flush())
}

// AR1 returns n samples of a stationary AR(1) series x_i = φ x_{i−1} + s ε_i
// (ε standard normal), started from its stationary distribution: noise
// whose integrated autocorrelation time is (1 + φ)/(1 − φ), the test
// signal of the averaging's coverage checks.
func AR1(rng *rand.Rand, n int, phi, s float64) []float64 {
	x := make([]float64, n)
	v := rng.NormFloat64() * s / math.Sqrt(1-phi*phi)
	for i := range x {
		if i > 0 {
			v = phi*v + s*rng.NormFloat64()
		}
		x[i] = v
	}
	return x
}
