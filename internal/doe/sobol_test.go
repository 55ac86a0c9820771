package doe

import (
	"bufio"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// Ensure that the embedded direction numbers equal the rows d = 2..21 of
// new-joe-kuo-6.21201 (Joe & Kuo 2008), exactly.
func TestSobolDirectionTable(t *testing.T) {
	f, err := os.Open(filepath.Join("testdata", "joe_kuo_new_6_21201_dims_2_to_21.txt"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	sc.Scan() // header: d s a m_i
	rows := 0
	for sc.Scan() {
		fields := strings.Fields(sc.Text())
		if len(fields) == 0 {
			continue
		}
		var v []uint32
		for _, s := range fields {
			x, err := strconv.ParseUint(s, 10, 32)
			if err != nil {
				t.Fatalf("line %q: %v", sc.Text(), err)
			}
			v = append(v, uint32(x))
		}
		d := int(v[0])
		if d-2 >= len(joeKuo) {
			t.Fatalf("file has d = %d beyond the embedded table", d)
		}
		row := joeKuo[d-2]
		if row.s != v[1] || row.a != v[2] || len(row.m) != len(v)-3 {
			t.Errorf("d=%d: embedded s=%d a=%d m=%v, file %v", d, row.s, row.a, row.m, v)
			continue
		}
		for i, m := range v[3:] {
			if row.m[i] != m {
				t.Errorf("d=%d: m_%d = %d, file %d", d, i+1, row.m[i], m)
			}
		}
		rows++
	}
	if rows != MaxSobolDim-1 {
		t.Errorf("compared %d rows, want %d", rows, MaxSobolDim-1)
	}
}

// Ensure that the unscrambled sequence reproduces the output of Joe and
// Kuo's reference program sobol.cc with new-joe-kuo-6.21201 (Gray-code
// order, point 0 included): first 8 points in 2-D and first 16 in 5-D,
// exactly (all are dyadic rationals).
func TestSobolJoeKuoFirstPoints(t *testing.T) {
	for _, name := range []string{"sobol_2d_first8.csv", "sobol_joe_kuo_5d_first16.csv"} {
		_, table := readTable(t, name)
		dim := len(table[0]) - 1
		pts := SobolPoints(len(table), dim, SobolOptions{})
		for i, row := range table {
			if int(row[0]) != i {
				t.Fatalf("%s: row %d has index %v", name, i, row[0])
			}
			for j := range dim {
				if pts[i][j] != row[j+1] {
					t.Errorf("%s: point %d = %v, want %v", name, i, pts[i], row[1:])
					break
				}
			}
		}
	}
}

// Ensure that SkipZero starts at point 1 of the reference output (0.5 in
// every coordinate, sobol.cc point 1).
func TestSobolSkipZero(t *testing.T) {
	_, table := readTable(t, "sobol_joe_kuo_5d_first16.csv")
	s := NewSobol(5, SobolOptions{SkipZero: true})
	if s.Index() != 1 {
		t.Fatalf("Index() = %d after SkipZero, want 1", s.Index())
	}
	pts := s.Points(15)
	for i, p := range pts {
		for j := range p {
			if p[j] != table[i+1][j+1] {
				t.Fatalf("point %d = %v, want %v", i+1, p, table[i+1][1:])
			}
		}
	}
}

// Ensure the (t,m,s)-net property in one dimension (Sobol' 1967; Owen 1995
// for the scrambled case): for m = 0..10, the first 2^m points put exactly
// one point in each of the 2^m equal intervals of every coordinate, in all
// 21 dimensions, unscrambled and scrambled with three seeds.
func TestSobolOneDimensionalNet(t *testing.T) {
	for _, opts := range []SobolOptions{{}, {Scramble: true, Seed: 1}, {Scramble: true, Seed: 2}, {Scramble: true, Seed: 0xdeadbeef}} {
		pts := SobolPoints(1<<10, MaxSobolDim, opts)
		for m := 0; m <= 10; m++ {
			n := 1 << m
			for j := range MaxSobolDim {
				seen := make([]bool, n)
				for _, p := range pts[:n] {
					c := int(p[j] * float64(n))
					if c < 0 || c >= n || seen[c] {
						t.Fatalf("%+v m=%d dim %d: interval %d holds two points", opts, m, j+1, c)
					}
					seen[c] = true
				}
			}
		}
	}
}

// Ensure that dimensions 1 and 2 form a (0, m, 2)-net for m = 1..10: every
// elementary interval [a/2^q, (a+1)/2^q) × [b/2^(m−q), (b+1)/2^(m−q)) holds
// exactly one of the first 2^m points (from memory: the first two Sobol'
// coordinates are a (0,2)-sequence in base 2; scrambling keeps it, Owen
// 1995).
func TestSobolTwoDimensionalNet(t *testing.T) {
	for _, opts := range []SobolOptions{{}, {Scramble: true, Seed: 5}} {
		pts := SobolPoints(1<<10, 2, opts)
		for m := 1; m <= 10; m++ {
			n := 1 << m
			for q := 0; q <= m; q++ {
				nx, ny := 1<<q, 1<<(m-q)
				seen := make([]bool, n)
				for _, p := range pts[:n] {
					c := int(p[0]*float64(nx))*ny + int(p[1]*float64(ny))
					if seen[c] {
						t.Fatalf("%+v m=%d q=%d: elementary interval %d holds two points", opts, m, q, c)
					}
					seen[c] = true
				}
			}
		}
	}
}

// Ensure that scrambling depends on the seed, is reproducible, keeps points
// strictly inside (0,1), and makes a point uniform over seeds: the mean of
// point 0's coordinates over 4000 seeds is ½ within 4 standard errors
// (√(1/12/4000) each), the property E[x] = ½ of Owen scrambling.
func TestSobolScrambleSeeds(t *testing.T) {
	a := SobolPoints(64, 4, SobolOptions{Scramble: true, Seed: 11})
	b := SobolPoints(64, 4, SobolOptions{Scramble: true, Seed: 11})
	c := SobolPoints(64, 4, SobolOptions{Scramble: true, Seed: 12})
	differ := 0
	for i := range a {
		for j := range a[i] {
			if a[i][j] != b[i][j] {
				t.Fatalf("same seed, point %d differs", i)
			}
			if a[i][j] != c[i][j] {
				differ++
			}
			if !(a[i][j] > 0 && a[i][j] < 1) {
				t.Errorf("scrambled coordinate %v outside (0,1)", a[i][j])
			}
		}
	}
	if differ < 64*4*9/10 {
		t.Errorf("seeds 11 and 12 share %d of 256 coordinates", 64*4-differ)
	}
	const seeds = 4000
	sums := make([]float64, 4)
	for seed := range uint64(seeds) {
		p := NewSobol(4, SobolOptions{Scramble: true, Seed: seed}).Next()
		for j, x := range p {
			sums[j] += x
		}
	}
	tol := 4 * math.Sqrt(1.0/12/seeds)
	for j, s := range sums {
		if math.Abs(s/seeds-0.5) > tol {
			t.Errorf("dim %d: mean of scrambled point 0 over seeds = %.4f, want 0.5 ± %.4f", j+1, s/seeds, tol)
		}
	}
}

// Ensure that Sobol' points fill the cube more evenly than independent
// uniform points: the centred L2 discrepancy (Hickernell 1998) of the first
// 256 points, plain and scrambled, is below that of each of ten seeded
// uniform sets of the same size (the purpose of low-discrepancy sequences;
// CD₂ of uniform points falls as n^(−1/2), of Sobol' points nearly as n^(−1)).
func TestSobolDiscrepancyBelowRandom(t *testing.T) {
	const n = 256
	for _, k := range []int{2, 5} {
		plain := CenteredL2Discrepancy(SobolPoints(n, k, SobolOptions{}))
		scr := CenteredL2Discrepancy(SobolPoints(n, k, SobolOptions{Scramble: true, Seed: 3}))
		var best, mean float64
		best = math.Inf(1)
		for seed := uint64(1); seed <= 10; seed++ {
			src := NewUniformCandidates(k, seed)
			pts := make([][]float64, n)
			for i := range pts {
				pts[i] = src.Next()
			}
			d := CenteredL2Discrepancy(pts)
			best = min(best, d)
			mean += d / 10
		}
		if plain >= best || scr >= best {
			t.Errorf("k=%d: CD₂ Sobol' %.3g, scrambled %.3g, best uniform %.3g", k, plain, scr, best)
		}
		t.Logf("k=%d n=%d: CD₂ Sobol' %.4g, scrambled %.4g; uniform mean %.4g, best %.4g", k, n, plain, scr, mean, best)
	}
}

// Ensure that scrambled Sobol' points integrate a smooth function without
// bias and with far less variance than plain Monte Carlo: for f = x₁x₂ on
// [0,1]², ∫f = 1/4 and Var f = 1/9 − 1/16 = 7/144, so Monte Carlo with 256
// points has variance 7/144/256; a scrambled net has variance
// O(n^(−3) (log n)^(s−1)) for smooth f (Owen 1997, "Scrambled net variance
// for integrals of smooth functions", Ann. Statist. 25). Over 200 seeds the
// mean must be 1/4 within 4 standard errors and the variance below 1/100 of
// the Monte Carlo variance.
func TestSobolScrambledIntegration(t *testing.T) {
	const n, seeds = 256, 200
	var sum, sum2 float64
	for seed := range uint64(seeds) {
		var est float64
		for _, p := range SobolPoints(n, 2, SobolOptions{Scramble: true, Seed: seed}) {
			est += p[0] * p[1]
		}
		est /= n
		sum += est
		sum2 += est * est
	}
	mean := sum / seeds
	v := (sum2 - seeds*mean*mean) / (seeds - 1)
	mc := 7.0 / 144 / n
	if math.Abs(mean-0.25) > 4*math.Sqrt(v/seeds) {
		t.Errorf("mean estimate %.8f, want 0.25 ± %.2g", mean, 4*math.Sqrt(v/seeds))
	}
	if v > mc/100 {
		t.Errorf("variance %.3g, want below Monte Carlo %.3g / 100", v, mc)
	}
	t.Logf("n=%d: scrambled Sobol' variance %.3g, Monte Carlo %.3g (ratio %.2g)", n, v, mc, v/mc)
}

func TestSobolPanics(t *testing.T) {
	mustPanic(t, "dim 0", func() { NewSobol(0, SobolOptions{}) })
	mustPanic(t, "dim too large", func() { NewSobol(MaxSobolDim+1, SobolOptions{}) })
	mustPanic(t, "dst", func() { NewSobol(2, SobolOptions{}).NextTo(make([]float64, 3)) })
	mustPanic(t, "n", func() { SobolPoints(-1, 2, SobolOptions{}) })
}

func BenchmarkSobol1024x10(b *testing.B) {
	for b.Loop() {
		SobolPoints(1024, 10, SobolOptions{})
	}
}

func BenchmarkSobolScrambled1024x10(b *testing.B) {
	for b.Loop() {
		SobolPoints(1024, 10, SobolOptions{Scramble: true, Seed: 1})
	}
}
