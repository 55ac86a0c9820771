package doe

import "math"

// MinDistance returns the smallest Euclidean distance between two rows of
// pts, the maximin criterion of Johnson, Moore & Ylvisaker (1990), "Minimax
// and maximin distance designs", J. Statist. Plann. Inference 26:
//
//	d_min = min_{i<j} ‖x_i − x_j‖₂
//
// A larger value means the points are spread further apart. It returns +Inf
// for fewer than two points. It panics if the rows differ in length.
func MinDistance(pts [][]float64) float64 {
	checkRows(pts)
	best := math.Inf(1)
	for i := range pts {
		for j := i + 1; j < len(pts); j++ {
			if d := sqDist(pts[i], pts[j]); d < best {
				best = d
			}
		}
	}
	return math.Sqrt(best)
}

// PhiP returns the Morris–Mitchell criterion of pts (Morris & Mitchell 1995,
// "Exploratory designs for computational experiments", J. Statist. Plann.
// Inference 43):
//
//	φ_p = ( Σ_{i<j} d_ij^(−p) )^(1/p),  d_ij = ‖x_i − x_j‖₂
//
// A smaller value is better; as p → ∞, φ_p → 1/d_min, so for large p
// minimising φ_p maximises the minimum distance while also reducing the
// number of pairs at that distance. It returns 0 for fewer than two points
// and +Inf when two points coincide. It panics if p ≤ 0 or the rows differ
// in length.
func PhiP(pts [][]float64, p float64) float64 {
	if !(p > 0) {
		panic("doe: φ_p needs p > 0")
	}
	checkRows(pts)
	// Sum the terms scaled by the largest one, (d/d_min)^(−p) ≤ 1, so that a
	// large p neither overflows nor underflows the leading terms.
	dmin := MinDistance(pts)
	if math.IsInf(dmin, 1) {
		return 0
	}
	if dmin == 0 {
		return math.Inf(1)
	}
	var s float64
	for i := range pts {
		for j := i + 1; j < len(pts); j++ {
			s += math.Pow(math.Sqrt(sqDist(pts[i], pts[j]))/dmin, -p)
		}
	}
	return math.Pow(s, 1/p) / dmin
}

// CenteredL2Discrepancy returns the centred L2 discrepancy CD₂ of pts in the
// unit cube [0,1]^k (Hickernell 1998, "A generalized discrepancy and
// quadrature error bound", Math. Comp. 67), using its closed form, with
// z = |x − ½|:
//
//	CD₂² = (13/12)^k
//	     − (2/n) Σ_i Π_j (1 + ½ z_ij − ½ z_ij²)
//	     + (1/n²) Σ_i Σ_l Π_j (1 + ½ z_ij + ½ z_lj − ½ |x_ij − x_lj|)
//
// It returns CD₂, the square root. A smaller value means the points fill the
// cube more evenly; unlike the star discrepancy it does not depend on which
// corner is the origin. The cost is O(n²k). It panics if pts is empty, the
// rows differ in length or a coordinate lies outside [0,1].
func CenteredL2Discrepancy(pts [][]float64) float64 {
	if len(pts) == 0 {
		panic("doe: discrepancy of an empty design")
	}
	checkRows(pts)
	n := float64(len(pts))
	k := len(pts[0])
	for _, p := range pts {
		for _, x := range p {
			if !(x >= 0 && x <= 1) {
				panic("doe: discrepancy needs points in [0,1]")
			}
		}
	}
	var s1, s2 float64
	for i, xi := range pts {
		prod := 1.0
		for _, x := range xi {
			z := math.Abs(x - 0.5)
			prod *= 1 + 0.5*z - 0.5*z*z
		}
		s1 += prod
		// The double sum is symmetric: diagonal once, off-diagonal twice.
		for l := i; l < len(pts); l++ {
			xl := pts[l]
			prod := 1.0
			for j := range k {
				prod *= 1 + 0.5*math.Abs(xi[j]-0.5) + 0.5*math.Abs(xl[j]-0.5) - 0.5*math.Abs(xi[j]-xl[j])
			}
			if l == i {
				s2 += prod
			} else {
				s2 += 2 * prod
			}
		}
	}
	cd2 := math.Pow(13.0/12.0, float64(k)) - 2/n*s1 + s2/(n*n)
	if cd2 < 0 {
		// Rounding can push an extremely uniform design a hair below zero.
		cd2 = 0
	}
	return math.Sqrt(cd2)
}

// sqDist returns the squared Euclidean distance between a and b.
func sqDist(a, b []float64) float64 {
	var s float64
	for i := range a {
		d := a[i] - b[i]
		s += d * d
	}
	return s
}

// checkRows panics if the rows of pts differ in length.
func checkRows(pts [][]float64) {
	for _, p := range pts {
		if len(p) != len(pts[0]) {
			panic("doe: design rows differ in length")
		}
	}
}
