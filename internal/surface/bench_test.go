package surface

import (
	"math"
	"math/rand/v2"
	"testing"
)

// smooth6 is a smooth test response in six parameters (a sum of ridge
// functions; an arbitrary choice with no reference value).
func smooth6(x []float64) float64 {
	return math.Sin(3*x[0]+x[1]) + 0.5*x[2]*x[2] - x[3]*x[4] + 0.3*math.Cos(4*x[5]) + 0.2*x[0]*x[5]
}

var unit6 = Bounds{Lo: make([]float64, 6), Hi: []float64{1, 1, 1, 1, 1, 1}}

func data6(n int) Data {
	rng := rand.New(rand.NewPCG(1, 2))
	d := Data{Bounds: unit6}
	for _, u := range latin(rng, n, 6) {
		d.X = append(d.X, u)
		d.Y = append(d.Y, smooth6(u))
	}
	return d
}

// BenchmarkKrigingFit300x6 fits kriging (Matérn 5/2, constant trend,
// estimated nugget, 3 restarts), including the likelihood optimisation,
// through 300 Latin-hypercube runs in 6 parameters. Measured: 1.3-1.5 s
// per fit with GOMAXPROCS=1 on a 2-core virtual machine (about 130
// likelihood evaluations with gradient, 8 ms each).
func BenchmarkKrigingFit300x6(b *testing.B) {
	d := data6(300)
	for b.Loop() {
		if _, err := FitKriging(d, KrigingOptions{}); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkKrigingFit60x6 is the typical study size. Measured: 46 ms per fit (GOMAXPROCS=1).
func BenchmarkKrigingFit60x6(b *testing.B) {
	d := data6(60)
	for b.Loop() {
		if _, err := FitKriging(d, KrigingOptions{}); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkPolyFitQuadratic6 fits the full quadratic (28 terms) through 60
// runs in 6 parameters. Measured: 0.37 ms (GOMAXPROCS=1).
func BenchmarkPolyFitQuadratic6(b *testing.B) {
	d := data6(60)
	terms := QuadraticTerms(6)
	for b.Loop() {
		if _, err := FitPoly(d, terms); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkSensitivitiesKriging60x6 estimates Sobol' indices (N = 4096,
// 32768 evaluations, 200 bootstrap resamples) on a 60-run kriging model.
// Measured: 110 ms (GOMAXPROCS=1).
func BenchmarkSensitivitiesKriging60x6(b *testing.B) {
	m, err := FitKriging(data6(60), KrigingOptions{})
	if err != nil {
		b.Fatal(err)
	}
	for b.Loop() {
		Sensitivities(m, SobolOptions{})
	}
}

// BenchmarkProposeEI4 proposes a batch of 4 expected-improvement points
// (kriging believer) for a 60-run model in 6 parameters. Measured:
// 0.18 s (GOMAXPROCS=1).
func BenchmarkProposeEI4(b *testing.B) {
	m, err := FitKriging(data6(60), KrigingOptions{})
	if err != nil {
		b.Fatal(err)
	}
	for b.Loop() {
		if _, err := Propose(m, InfillOptions{K: 4}); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkFindOptimumKriging60x6 searches the optimum of a 60-run kriging
// model in 6 parameters. Measured: 41 ms (GOMAXPROCS=1).
func BenchmarkFindOptimumKriging60x6(b *testing.B) {
	m, err := FitKriging(data6(60), KrigingOptions{})
	if err != nil {
		b.Fatal(err)
	}
	for b.Loop() {
		if _, err := FindOptimum(m, OptimumOptions{}); err != nil {
			b.Fatal(err)
		}
	}
}
