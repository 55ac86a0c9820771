package compare

import (
	"encoding/csv"
	"math"
	"math/rand/v2"
	"os"
	"reflect"
	"strconv"
	"testing"
)

// readCertified reads a quantity,value[,…] CSV from testdata.
func readCertified(t *testing.T, name string) map[string]float64 {
	t.Helper()
	f, err := os.Open("testdata/" + name)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	r := csv.NewReader(f)
	r.Comment = '#'
	r.FieldsPerRecord = -1
	rows, err := r.ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	m := map[string]float64{}
	for _, row := range rows[1:] {
		v, err := strconv.ParseFloat(row[1], 64)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		m[row[0]] = v
	}
	return m
}

// Ensure that Cd 0.600 → 0.574 reads as a 4.3 % reduction (plain
// arithmetic, common practice): (0.574 − 0.600)/0.600 = −0.04333….
func TestRelativeChange(t *testing.T) {
	if got := RelativeChange(0.600, 0.574); math.Abs(got-(-0.043333333333333)) > 1e-12 {
		t.Errorf("relative change %v, want −0.0433", got)
	}
	if got := RelativeChange(-2, -1); got != 0.5 {
		t.Errorf("from a negative base: %v, want 0.5", got)
	}
	if !math.IsNaN(RelativeChange(0, 1)) {
		t.Error("zero base should give NaN")
	}
}

// Ensure that Welch's test reproduces the NIST/SEMATECH e-Handbook car
// mileage example (§1.3.5.3: US cars n = 249, mean 20.14458, sd 6.41470;
// Japanese cars n = 79, mean 30.48101, sd 6.10771), whose unequal-variance
// results are printed as T = −12.94627, ν = 136.87499 and two-sided
// p = 1.571e−25 by the students_t_two_samples example of Boost.Math
// (secondary; values copied in testdata/welch_nist_auto83b.csv). The
// summary statistics give the SEs s/√n and dof n − 1. Tolerances: T and ν
// to the printed digits (rel 1e-6); p to its three printed digits.
func TestCompareWelchNIST(t *testing.T) {
	ref := readCertified(t, "welch_nist_auto83b.csv")
	us := Estimate{Mean: ref["mean1"], StdError: ref["sd1"] / math.Sqrt(ref["n1"]), Dof: ref["n1"] - 1}
	jp := Estimate{Mean: ref["mean2"], StdError: ref["sd2"] / math.Sqrt(ref["n2"]), Dof: ref["n2"] - 1}
	d := Compare(jp, us, 0.95) // us − jp, as printed
	if math.Abs(d.T/ref["t"]-1) > 1e-6 {
		t.Errorf("T = %.6f, want %v", d.T, ref["t"])
	}
	if math.Abs(d.Dof/ref["dof"]-1) > 1e-6 {
		t.Errorf("ν = %.5f, want %v", d.Dof, ref["dof"])
	}
	if math.Abs(d.P/ref["p"]-1) > 1e-3 {
		t.Errorf("p = %.4g, want %v", d.P, ref["p"])
	}
	if !d.Significant || !Distinguishable(us, jp, 0.95) {
		t.Error("the two means should be distinguishable")
	}
	// The 95 % interval is T's quantile times the SE: it excludes 0.
	if lo := d.Delta + d.HalfWidth; lo >= 0 {
		t.Errorf("interval of us − jp reaches %v", lo)
	}
}

// Ensure that equal or error-free estimates behave.
func TestCompareEdges(t *testing.T) {
	a := Estimate{Mean: 1, StdError: 0.1, Dof: 9}
	if d := Compare(a, a, 0.95); d.Significant || d.Delta != 0 || d.P != 1 {
		t.Errorf("self comparison: %+v", d)
	}
	x := Estimate{Mean: 1, StdError: 0, Dof: math.Inf(1)}
	y := Estimate{Mean: 1.001, StdError: 0, Dof: math.Inf(1)}
	if d := Compare(x, y, 0.95); !d.Significant || d.Dof != 0 || d.P != 0 {
		t.Errorf("exact values: %+v", d)
	}
	// Normal errors: half-width is 1.959964 SE (normal quantile, common
	// practice), rel 1e-6.
	n1 := Estimate{Mean: 0, StdError: 0.3, Dof: math.Inf(1)}
	n2 := Estimate{Mean: 1, StdError: 0.4, Dof: math.Inf(1)}
	if d := Compare(n1, n2, 0.95); math.Abs(d.HalfWidth/(1.959964*0.5)-1) > 1e-6 {
		t.Errorf("normal half-width %v, want %v", d.HalfWidth, 1.959964*0.5)
	}
}

// Ensure that the letter display follows Piepho's rule on hand-made
// examples. All errors are normal (dof = ∞), so two variants differ when
// |Δ| > 1.959964·√(se_i² + se_j²).
func TestRankLetters(t *testing.T) {
	inf := math.Inf(1)
	// Example 1 (minimise), SE 0.01 each, so the threshold is
	// 1.959964·0.014142 = 0.02772:
	//   A 1.00, B 1.02, C 1.04, D 1.10.
	//   A–B 0.02 same; A–C 0.04 differ; A–D differ; B–C 0.02 same;
	//   B–D differ; C–D 0.06 differ.
	// Maximal sets of mutually alike variants: {A,B}, {B,C}, {D}, so
	// A: a, B: ab, C: b, D: c. Only B shares a letter with the best.
	ex1 := []Candidate{
		{"D", Estimate{1.10, 0.01, inf}},
		{"B", Estimate{1.02, 0.01, inf}},
		{"A", Estimate{1.00, 0.01, inf}},
		{"C", Estimate{1.04, 0.01, inf}},
	}
	checkRank(t, "example 1", Rank(ex1, true, 0.95),
		[]string{"A", "B", "C", "D"}, []string{"a", "ab", "b", "c"}, []bool{true, true, false, false})

	// Example 2 (minimise), a set that is not contiguous in rank order:
	//   A 1.00 ± 0.001, B 1.02 ± 0.001, C 1.03 ± 0.05.
	//   A–B: 0.02 > 1.96·0.00141 = 0.0028, differ.
	//   A–C: 0.03 < 1.96·0.05001 = 0.098, same.
	//   B–C: 0.01, same.
	// Maximal sets: {A,C}, {B,C}, so A: a, B: b, C: ab.
	ex2 := []Candidate{
		{"A", Estimate{1.00, 0.001, inf}},
		{"B", Estimate{1.02, 0.001, inf}},
		{"C", Estimate{1.03, 0.05, inf}},
	}
	checkRank(t, "example 2", Rank(ex2, true, 0.95),
		[]string{"A", "B", "C"}, []string{"a", "b", "ab"}, []bool{true, false, true})

	// Example 3: maximise a lift-like quantity; the same numbers as
	// example 1 read the other way: D best, C 0.06 away (differ), C–B
	// same, B–A same, C–A differ. Sets {D}, {B,C}, {A,B}: D: a, C: b,
	// B: bc, A: c.
	checkRank(t, "example 3", Rank(ex1, false, 0.95),
		[]string{"D", "C", "B", "A"}, []string{"a", "b", "bc", "c"}, []bool{true, false, false, false})
}

func checkRank(t *testing.T, name string, got []Ranked, names, labels []string, tied []bool) {
	t.Helper()
	var gn, gl []string
	var gt []bool
	for i, r := range got {
		if r.Rank != i+1 {
			t.Errorf("%s: %s has rank %d at position %d", name, r.Name, r.Rank, i+1)
		}
		gn = append(gn, r.Name)
		gl = append(gl, r.Label())
		gt = append(gt, r.TiedWithBest)
	}
	if !reflect.DeepEqual(gn, names) || !reflect.DeepEqual(gl, labels) || !reflect.DeepEqual(gt, tied) {
		t.Errorf("%s: got %v %v %v, want %v %v %v", name, gn, gl, gt, names, labels, tied)
	}
}

// Ensure that labels past z stay unambiguous.
func TestLetters(t *testing.T) {
	for i, want := range map[int]string{0: "a", 25: "z", 26: "aa", 27: "ab", 51: "az", 52: "ba", 701: "zz", 702: "aaa"} {
		if got := letter(i); got != want {
			t.Errorf("letter(%d) = %q, want %q", i, got, want)
		}
	}
	r := Ranked{Groups: []string{"a", "ab"}}
	if r.Label() != "a,ab" {
		t.Errorf("label %q", r.Label())
	}
}

// Ensure that with every pair distinguishable each variant has its own
// letter, and with none all share one.
func TestRankExtremes(t *testing.T) {
	var far, near []Candidate
	for i := 0; i < 40; i++ {
		far = append(far, Candidate{strconv.Itoa(i), Estimate{float64(i), 0.01, 30}})
		near = append(near, Candidate{strconv.Itoa(i), Estimate{float64(i) * 1e-3, 1, 30}})
	}
	for i, r := range Rank(far, true, 0.95) {
		if r.Label() != letter(i) {
			t.Fatalf("far: rank %d has %q", i+1, r.Label())
		}
	}
	for _, r := range Rank(near, true, 0.95) {
		if r.Label() != "a" || !r.TiedWithBest {
			t.Fatalf("near: %s has %q", r.Name, r.Label())
		}
	}
}

// BenchmarkRank ranks 200 variants whose means are spread over about ten
// standard errors, so the letter groups overlap heavily.
func BenchmarkRank(b *testing.B) {
	var c []Candidate
	for i := 0; i < 200; i++ {
		c = append(c, Candidate{strconv.Itoa(i), Estimate{1 + 0.0005*float64(i), 0.01, 29}})
	}
	for b.Loop() {
		Rank(c, true, 0.95)
	}
}

// Ensure that the tail-based decision of Distinguishable agrees with the
// interval of Compare (the same test read two ways).
func TestDistinguishableAgrees(t *testing.T) {
	rng := rand.New(rand.NewPCG(14, 14))
	for i := 0; i < 3000; i++ {
		a := Estimate{rng.NormFloat64(), 0.1 + rng.Float64(), float64(1 + rng.IntN(40))}
		b := Estimate{rng.NormFloat64(), 0.1 + rng.Float64(), float64(1 + rng.IntN(40))}
		if i%7 == 0 {
			b.Dof = math.Inf(1)
		}
		for _, conf := range []float64{0.9, 0.95, 0.99} {
			d := Compare(a, b, conf)
			if math.Abs(math.Abs(d.T)*d.StdError-d.HalfWidth) < 1e-9 {
				continue // on the boundary
			}
			if Distinguishable(a, b, conf) != d.Significant {
				t.Fatalf("%+v %+v at %v: Distinguishable %v, Compare %+v", a, b, conf, !d.Significant, d)
			}
		}
	}
}
