package surface_test

import (
	"fmt"

	"github.com/sweep-cfd/sweep/internal/surface"
)

// A drag coefficient at five angles of attack, fitted by a quadratic; the
// optimum is the angle of least drag. The values follow
// 0.031 − 0.0032·alpha + 0.0004·alpha² exactly, so the fit recovers them.
func ExampleFitPoly() {
	d := surface.Data{
		X:      [][]float64{{0}, {2}, {4}, {6}, {8}},
		Y:      []float64{0.0310, 0.0262, 0.0246, 0.0262, 0.0310},
		Names:  []string{"alpha"},
		Bounds: surface.Bounds{Lo: []float64{0}, Hi: []float64{8}},
	}
	terms, err := surface.ParseTerms("1, alpha, alpha^2", d.Names)
	if err != nil {
		fmt.Println(err)
		return
	}
	m, err := surface.FitPoly(d, terms)
	if err != nil {
		fmt.Println(err)
		return
	}
	for i, name := range m.TermNames {
		fmt.Printf("%-8s %.6f\n", name, m.Coef[i])
	}
	o, err := surface.FindOptimum(m, surface.OptimumOptions{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("least drag %.5f at alpha = %.3f\n", o.Mean, o.X[0])
	// Output:
	// 1        0.031000
	// alpha    -0.003200
	// alpha^2  0.000400
	// least drag 0.02460 at alpha = 4.000
}
