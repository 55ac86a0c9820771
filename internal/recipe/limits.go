package recipe

import (
	"fmt"
	"math"
	"strconv"

	"github.com/sweep-cfd/sweep/internal/doe"
)

// Limits on what one recipe may ask for. Load checks every design's size
// and every list's length against them before a single point is
// generated, so a mistyped number (count = 1000000000) is a recipe error
// with its line, never a machine that runs out of memory.
const (
	// MaxVariants is the most variants one study may have: the number of
	// points of every design, and the rows of a design table.
	MaxVariants = 100_000
	// MaxLatinPoints is the most points of a latin design. Its maximin
	// search keeps the n(n-1)/2 pairwise distances of the design and its
	// work grows with n²: 2,000 points take about 45 s and 64 MB on one
	// core. Larger space-filling designs are sobol designs, which allow
	// MaxVariants points.
	MaxLatinPoints = 2_000
	// MaxParams is the most parameters a recipe may declare.
	MaxParams = 1_000
	// MaxLevels is the most entries of one parameter's levels list.
	MaxLevels = 10_000
	// MaxSteps is the largest steps of a range parameter or of [design].
	MaxSteps = 10_000
	// MaxCentre is the largest centre of a composite or Box-Behnken design.
	MaxCentre = 1_000
	// MaxGridLevels is the largest grid_levels of a Morris design.
	MaxGridLevels = 1_000
	// MaxConstraints is the most constraints [design] may list.
	MaxConstraints = 1_000
)

// checkSize refuses a generated design with more points than MaxVariants.
// It runs after the parameters and the design's settings are checked (a
// size is only computed from settings that are valid themselves) and
// before anything is generated. Sizes are computed in floating point, so
// that no product or sum overflows.
func checkSize(pr *problems, r *Recipe) {
	d := r.Design
	k := len(r.Params)
	switch d.Scheme {
	case "factorial":
		n := 1.0
		for _, p := range r.Params {
			n *= float64(max(p.Levels(d.Steps), 1))
		}
		if n > MaxVariants {
			pr.at("design", "the full factorial makes %s points (the product of the parameters' levels), over the limit of %d variants a study may have: lower steps or shorten the levels lists, or use a sampling design such as latin or sobol",
				points(n), MaxVariants)
		}
	case "latin":
		if d.Count > MaxLatinPoints {
			pr.at("design.count", "count = %d is over the %d points a latin design may have (its maximin search grows with the square of the count: %d points take under a minute): lower count, or use scheme = \"sobol\", which allows up to %d",
				d.Count, MaxLatinPoints, MaxLatinPoints, MaxVariants)
		}
	case "sobol":
		if d.Count > MaxVariants {
			pr.at("design.count", "count = %d is over the limit of %d variants a study may have: lower count", d.Count, MaxVariants)
		}
	case "composite":
		if k > 10 {
			return // refused as such
		}
		if n := math.Pow(2, float64(k)) + float64(2*k+d.Centre); n > MaxVariants {
			pr.at("design", "the composite design makes %s points (2^%d corners, %d axial and %d centre points), over the limit of %d variants a study may have: lower centre",
				points(n), k, 2*k, d.Centre, MaxVariants)
		}
	case "box_behnken":
		if k < 3 || k > 7 {
			return // refused as such
		}
		if n := float64(len(doe.BoxBehnkenCoded(k, 0)) + d.Centre); n > MaxVariants {
			pr.at("design", "the Box-Behnken design makes %s points (with %d centre points), over the limit of %d variants a study may have: lower centre",
				points(n), d.Centre, MaxVariants)
		}
	case "one_at_a_time":
		if n := float64(1 + 2*k); n > MaxVariants {
			pr.at("design", "the one_at_a_time design makes %s points (1 + 2 x %d parameters), over the limit of %d variants a study may have: vary fewer parameters",
				points(n), k, MaxVariants)
		}
	case "morris":
		if n := float64(d.Trajectories) * float64(k+1); n > MaxVariants {
			pr.at("design.trajectories", "trajectories = %d of %d points each (parameters + 1) make %s points, over the limit of %d variants a study may have: lower trajectories",
				d.Trajectories, k+1, points(n), MaxVariants)
		}
	}
}

// points writes a design size: exactly while it is a whole number that
// float64 holds exactly, else as a power of ten.
func points(n float64) string {
	if n < 1e15 {
		return strconv.FormatFloat(n, 'f', 0, 64)
	}
	if math.IsInf(n, 1) {
		return "more than 10^308"
	}
	return fmt.Sprintf("about 10^%d", int(math.Floor(math.Log10(n))))
}
