package surface

import (
	"math"
	"math/rand/v2"
	"testing"
)

// ishigami is the Ishigami & Homma (1990) function on [−π, π]³.
func ishigami(a, b float64) func([]float64) float64 {
	return func(x []float64) float64 {
		return math.Sin(x[0]) + a*math.Sin(x[1])*math.Sin(x[1]) + b*math.Pow(x[2], 4)*math.Sin(x[0])
	}
}

// ishigamiIndices returns the analytic first-order and total indices
// (Ishigami & Homma 1990; formulas as given in Saltelli et al. 2008, "Global
// Sensitivity Analysis: The Primer"):
//
//	V   = a²/8 + bπ⁴/5 + b²π⁸/18 + 1/2,  V1 = (1 + bπ⁴/5)²/2,  V2 = a²/8,
//	V13 = b²π⁸(1/18 − 1/50),  V3 = 0.
func ishigamiIndices(a, b float64) (s, st []float64) {
	p4, p8 := math.Pow(math.Pi, 4), math.Pow(math.Pi, 8)
	v := a*a/8 + b*p4/5 + b*b*p8/18 + 0.5
	v1 := 0.5 * (1 + b*p4/5) * (1 + b*p4/5)
	v2 := a * a / 8
	v13 := b * b * p8 * (1.0/18 - 1.0/50)
	return []float64{v1 / v, v2 / v, 0}, []float64{(v1 + v13) / v, v2 / v, v13 / v}
}

// gFunction is Sobol's g-function on [0,1]^k.
func gFunction(a []float64) func([]float64) float64 {
	return func(x []float64) float64 {
		y := 1.0
		for i, ai := range a {
			y *= (math.Abs(4*x[i]-2) + ai) / (1 + ai)
		}
		return y
	}
}

// gIndices returns the g-function's analytic indices (Saltelli & Sobol'
// 1995; Saltelli et al. 2010 §4): V_i = 1/(3(1+a_i)²), V = Π(1+V_i) − 1,
// S_i = V_i/V, ST_i = V_i Π_{j≠i}(1+V_j)/V.
func gIndices(a []float64) (s, st []float64) {
	vi := make([]float64, len(a))
	prod := 1.0
	for i, ai := range a {
		vi[i] = 1 / (3 * (1 + ai) * (1 + ai))
		prod *= 1 + vi[i]
	}
	v := prod - 1
	for i := range a {
		s = append(s, vi[i]/v)
		st = append(st, vi[i]*prod/(1+vi[i])/v)
	}
	return s, st
}

// checkIndices compares estimates with analytic values within 4 bootstrap
// standard errors (plus 1e-9 for rounding, when an index and its SE are
// both zero), and requires those errors to be below maxSE so that the
// comparison has teeth.
func checkIndices(t *testing.T, name string, got Indices, s, st []float64, maxSE float64) {
	t.Helper()
	for i := range s {
		e1, et := got.First[i]-s[i], got.Total[i]-st[i]
		if math.Abs(e1) > 4*got.FirstSE[i]+1e-9 || math.Abs(et) > 4*got.TotalSE[i]+1e-9 || got.FirstSE[i] > maxSE || got.TotalSE[i] > maxSE {
			t.Errorf("%s x%d: S %.4f ± %.4f (analytic %.4f), ST %.4f ± %.4f (analytic %.4f)",
				name, i+1, got.First[i], got.FirstSE[i], s[i], got.Total[i], got.TotalSE[i], st[i])
		}
		t.Logf("%s x%d: S error %+.4f (SE %.4f), ST error %+.4f (SE %.4f)", name, i+1, e1, got.FirstSE[i], et, got.TotalSE[i])
	}
}

// Ensure that the Ishigami indices match the analytic values, which in turn
// match the values printed in Saltelli et al. (2008) for a = 7, b = 0.1.
func TestSobolIshigami(t *testing.T) {
	s, st := ishigamiIndices(7, 0.1)
	// Printed to 4 decimals in Saltelli et al. (2008): abs 5e-5.
	printed := [][2]float64{{s[0], 0.3139}, {s[1], 0.4424}, {s[2], 0}, {st[0], 0.5576}, {st[1], 0.4424}, {st[2], 0.2437}}
	for _, p := range printed {
		if math.Abs(p[0]-p[1]) > 5e-5 {
			t.Fatalf("closed form %.5f, printed %.4f", p[0], p[1])
		}
	}
	b := Bounds{Lo: []float64{-math.Pi, -math.Pi, -math.Pi}, Hi: []float64{math.Pi, math.Pi, math.Pi}}
	got := SobolIndices(ishigami(7, 0.1), b, SobolOptions{N: 1 << 15, Seed: 1})
	checkIndices(t, "Ishigami", got, s, st, 0.01)
	if got.Evaluations != 5<<15 {
		t.Errorf("evaluations %d, want N(k+2) = %d", got.Evaluations, 5<<15)
	}
}

// Ensure that the g-function indices match the analytic values for the
// coefficients a = (0, 1, 4.5, 9, 99, 99, 99, 99) used by Saltelli et al.
// (2010) (from memory).
func TestSobolGFunction(t *testing.T) {
	a := []float64{0, 1, 4.5, 9, 99, 99, 99, 99}
	s, st := gIndices(a)
	b := Bounds{Lo: make([]float64, 8), Hi: []float64{1, 1, 1, 1, 1, 1, 1, 1}}
	got := SobolIndices(gFunction(a), b, SobolOptions{N: 1 << 14, Seed: 2})
	checkIndices(t, "g-function", got, s, st, 0.02)
}

// Ensure that indices of a fitted linear surface match the analytic shares
// c_i² Var(x_i) / Σ c_j² Var(x_j) of a linear response (no interactions, so
// S_i = ST_i).
func TestSensitivitiesOfFittedModel(t *testing.T) {
	rng := rand.New(rand.NewPCG(2, 3))
	b := Bounds{Lo: []float64{0, 0, 5}, Hi: []float64{1, 4, 6}}
	d := Data{Bounds: b}
	for _, u := range latin(rng, 12, 3) {
		x := b.fromUnit(u)
		d.X = append(d.X, x)
		d.Y = append(d.Y, 2*x[0]+x[1]+0*x[2]+1)
	}
	m, err := FitPoly(d, LinearTerms(3))
	if err != nil {
		t.Fatal(err)
	}
	// Var of 2·U(0,1) is 4/12, of U(0,4) is 16/12: shares 0.2, 0.8, 0.
	want := []float64{0.2, 0.8, 0}
	got := Sensitivities(m, SobolOptions{N: 1 << 14, Seed: 4})
	checkIndices(t, "linear", got, want, want, 0.01)
}
