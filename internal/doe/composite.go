package doe

import "math"

// CompositeKind selects where a central composite design puts its axial
// (star) points relative to its factorial cube.
type CompositeKind int

const (
	// Circumscribed (CCC): factorial points at ±1, axial points at ±α
	// outside the cube, α = (2^k)^(1/4) for rotatability.
	Circumscribed CompositeKind = iota
	// Inscribed (CCI): the circumscribed design divided by α, so the axial
	// points sit at ±1 and the factorial points at ±1/α.
	Inscribed
	// FaceCentred (CCF): α = 1, axial points at the centres of the cube's
	// faces; three levels per factor, not rotatable.
	FaceCentred
)

// String returns the handbook abbreviation of the kind.
func (c CompositeKind) String() string {
	switch c {
	case Circumscribed:
		return "CCC"
	case Inscribed:
		return "CCI"
	case FaceCentred:
		return "CCF"
	}
	return "CompositeKind(?)"
}

// RotatableAlpha returns the axial distance that makes a central composite
// design with a full 2^k factorial portion rotatable (Box & Hunter 1957,
// "Multi-factor experimental designs for exploring response surfaces",
// Ann. Math. Statist. 28; NIST/SEMATECH e-Handbook of Statistical Methods
// §5.3.3.6.1):
//
//	α = (2^k)^(1/4)
//
// i.e. 1.414 for k = 2, 1.682 for k = 3, 2 for k = 4. It panics if k < 1.
func RotatableAlpha(k int) float64 {
	if k < 1 {
		panic("doe: need at least one factor")
	}
	return math.Pow(2, float64(k)/4)
}

// CentralCompositeCoded returns a central composite design for k factors in
// coded units (Box & Wilson 1951, "On the experimental attainment of
// optimum conditions", J. R. Statist. Soc. B 13; NIST/SEMATECH e-Handbook
// §5.3.3.6.1), with α = RotatableAlpha(k):
//
//	kind           factorial points   axial points
//	Circumscribed  ±1                 ±α
//	Inscribed      ±1/α               ±1
//	FaceCentred    ±1                 ±1
//
// The runs come in the handbook's order: the 2^k factorial runs in standard
// (Yates) order, the first factor changing fastest; then for each factor in
// turn its axial pair, −α then +α, the other factors at 0; then centre
// replicates of the origin. There are 2^k + 2k + centre runs.
//
// It panics if k < 2 or centre < 0.
func CentralCompositeCoded(k int, kind CompositeKind, centre int) [][]float64 {
	if k < 2 {
		panic("doe: central composite design needs at least 2 factors")
	}
	if centre < 0 {
		panic("doe: negative number of centre runs")
	}
	var cube, axial float64
	switch kind {
	case Circumscribed:
		cube, axial = 1, RotatableAlpha(k)
	case Inscribed:
		cube, axial = 1/RotatableAlpha(k), 1
	case FaceCentred:
		cube, axial = 1, 1
	default:
		panic("doe: unknown central composite kind")
	}
	nf := 1 << k
	runs := make([][]float64, 0, nf+2*k+centre)
	for r := range nf {
		p := make([]float64, k)
		for j := range p {
			if r>>j&1 == 1 {
				p[j] = cube
			} else {
				p[j] = -cube
			}
		}
		runs = append(runs, p)
	}
	for j := range k {
		for _, s := range []float64{-axial, axial} {
			p := make([]float64, k)
			p[j] = s
			runs = append(runs, p)
		}
	}
	for range centre {
		runs = append(runs, make([]float64, k))
	}
	return runs
}

// CentralComposite returns the central composite design of
// CentralCompositeCoded in the unit cube, in the same run order. The
// outermost coded level (α for Circumscribed, 1 otherwise) maps to the
// cube's faces and 0 to the centre:
//
//	u = ½ (1 + c/c_max)
//
// So in the unit cube the circumscribed and inscribed designs are the same
// points: the axial points sit on the faces and the factorial points inside,
// at ½ ± 1/(2α). They differ in what a parameter's range means: if the
// range is where the factorial cube should sit and the axial points may go
// beyond it, map the coded points of CentralCompositeCoded instead, c = ±1
// onto the range's ends.
//
// It panics if k < 2 or centre < 0.
func CentralComposite(k int, kind CompositeKind, centre int) [][]float64 {
	runs := CentralCompositeCoded(k, kind, centre)
	cmax := 1.0
	if kind == Circumscribed {
		cmax = RotatableAlpha(k)
	}
	return codedToUnit(runs, cmax)
}

// codedToUnit maps coded levels in [−cmax, cmax] onto [0,1] in place.
func codedToUnit(runs [][]float64, cmax float64) [][]float64 {
	for _, p := range runs {
		for j, c := range p {
			p[j] = 0.5 * (1 + c/cmax)
		}
	}
	return runs
}
