package doe_test

import (
	"fmt"

	"github.com/sweep-cfd/sweep/internal/doe"
)

func ExampleCompileConstraint() {
	names := []string{"nose_radius", "taper_length"}
	_, err := doe.CompileConstraint("nose_radius + taper_lenght < 0.8", names)
	fmt.Println(err)
	c, _ := doe.CompileConstraint("nose_radius + taper_length < 0.8", names)
	ok, _ := c.Eval(map[string]float64{"nose_radius": 0.3, "taper_length": 0.4})
	fmt.Println(ok)
	// Output:
	// constraint "nose_radius + taper_lenght < 0.8": line 1, column 15: unknown name taper_lenght
	// true
}

func ExampleCentralCompositeCoded() {
	for _, run := range doe.CentralCompositeCoded(2, doe.FaceCentred, 1) {
		fmt.Println(run)
	}
	// Output:
	// [-1 -1]
	// [1 -1]
	// [-1 1]
	// [1 1]
	// [-1 0]
	// [1 0]
	// [0 -1]
	// [0 1]
	// [0 0]
}

func ExampleLatinHypercube() {
	pts, dmin := doe.LatinHypercube(10, 2, doe.LatinHypercubeOptions{Seed: 1})
	fmt.Println(len(pts), len(pts[0]))
	fmt.Printf("%.4f\n", dmin)
	// Output:
	// 10 2
	// 0.3162
}
