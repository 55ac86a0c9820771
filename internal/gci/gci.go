// Package gci estimates the discretisation uncertainty of a CFD result
// from three or more grid levels, by the procedure of Celik, Ghia, Roache,
// Freitas, Coleman and Raad (2008), "Procedure for estimation and
// reporting of uncertainty due to discretization in CFD applications",
// J. Fluids Eng. 130, 078001: Richardson extrapolation with the apparent
// order of convergence, and Roache's grid convergence index (GCI) with a
// safety factor of 1.25.
package gci

import (
	"errors"
	"fmt"
	"math"
	"sort"
)

// Grid is one grid level: its representative cell size h and the value
// of the quantity computed on it.
type Grid struct {
	H     float64 `json:"h"`
	Value float64 `json:"value"`
}

// SafetyFactor is the GCI safety factor for studies of three or more
// grids (Celik et al. 2008, eq. 7; Roache's recommendation).
const SafetyFactor = 1.25

// Result is the outcome of a three-grid study. Grid 1 is the finest.
type Result struct {
	Grids       [3]Grid  `json:"grids"`
	R21         float64  `json:"r21"`
	R32         float64  `json:"r32"`
	Order       float64  `json:"order"`        // the apparent order p
	Extrap      float64  `json:"extrapolated"` // φ_ext21
	RelErr      float64  `json:"e_a21"`        // |(φ1 − φ2)/φ1|
	ExtrapErr   float64  `json:"e_ext21"`      // |(φ_ext21 − φ1)/φ_ext21|
	GCIFine     float64  `json:"gci_fine21"`   // 1.25 e_a21/(r21^p − 1), relative
	Ratio       float64  `json:"convergence_ratio"`
	Convergence string   `json:"convergence"` // monotonic, oscillatory, divergent, oscillatory_divergent
	Iterations  int      `json:"iterations"`
	Warnings    []string `json:"warnings,omitempty"`
}

// ErrGrids is returned for grid sets the procedure cannot use.
var ErrGrids = errors.New("gci")

// CellSize returns the representative cell size of a grid of n cells
// filling a domain of fixed size in dim dimensions: h = (1/n)^(1/dim)
// (Celik et al. 2008, eq. 1, with the domain size as the unit).
func CellSize(n float64, dim int) float64 { return math.Pow(1/n, 1/float64(dim)) }

// Analyze applies the procedure to the three finest of the given grids:
//
//	r21 = h2/h1, r32 = h3/h2, ε21 = φ2 − φ1, ε32 = φ3 − φ2, s = sign(ε32/ε21)
//	p = |ln|ε32/ε21| + q(p)| / ln r21,  q(p) = ln((r21^p − s)/(r32^p − s))
//	φ_ext21 = (r21^p φ1 − φ2)/(r21^p − 1)
//	e_a21 = |(φ1 − φ2)/φ1|,  e_ext21 = |(φ_ext21 − φ1)/φ_ext21|
//	GCI_fine21 = 1.25 e_a21/(r21^p − 1)
//
// p is found by fixed-point iteration from q = 0 (q = 0 exactly when
// r21 = r32). The convergence ratio R = ε21/ε32 classifies the set:
// 0 < R < 1 monotonic convergence, −1 < R < 0 oscillatory convergence,
// R ≥ 1 divergence, R ≤ −1 oscillatory divergence; the last two get a
// warning, as does an apparent order far from the scheme's formal one and
// a refinement ratio below 1.3 (the paper's recommended minimum).
func Analyze(grids []Grid) (Result, error) {
	var res Result
	if len(grids) < 3 {
		return res, fmt.Errorf("%w: need three grid levels, have %d", ErrGrids, len(grids))
	}
	g := append([]Grid(nil), grids...)
	sort.Slice(g, func(i, j int) bool { return g[i].H < g[j].H })
	if len(g) > 3 {
		res.Warnings = append(res.Warnings, fmt.Sprintf("%d grid levels: the three finest are used", len(g)))
	}
	copy(res.Grids[:], g[:3])
	h1, h2, h3 := g[0].H, g[1].H, g[2].H
	p1, p2, p3 := g[0].Value, g[1].Value, g[2].Value
	if !(h1 > 0) || h2 <= h1 || h3 <= h2 {
		return res, fmt.Errorf("%w: the cell sizes must be positive and distinct (got %g, %g, %g)", ErrGrids, h1, h2, h3)
	}
	res.R21, res.R32 = h2/h1, h3/h2
	e21, e32 := p2-p1, p3-p2
	if e21 == 0 || e32 == 0 {
		return res, fmt.Errorf("%w: two grids give the same value (%g, %g, %g): the order of convergence is undefined; the result is grid-independent to the printed digits", ErrGrids, p1, p2, p3)
	}
	res.Ratio = e21 / e32
	switch {
	case res.Ratio > 0 && res.Ratio < 1:
		res.Convergence = "monotonic"
	case res.Ratio < 0 && res.Ratio > -1:
		res.Convergence = "oscillatory"
		res.Warnings = append(res.Warnings, "oscillatory convergence: the values alternate between grids; the estimate is less reliable")
	case res.Ratio >= 1:
		res.Convergence = "divergent"
		res.Warnings = append(res.Warnings, "divergent: the change grows as the grid is refined; the grids are not in the asymptotic range, the GCI does not apply")
	default:
		res.Convergence = "oscillatory_divergent"
		res.Warnings = append(res.Warnings, "oscillatory divergence: the GCI does not apply")
	}
	s := math.Copysign(1, e32/e21)
	lr := math.Log(res.R21)
	ratio := math.Abs(e32 / e21)
	p, q := 0.0, 0.0
	for res.Iterations = 1; res.Iterations <= 1000; res.Iterations++ {
		pn := math.Abs(math.Log(ratio)+q) / lr
		if res.R21 != res.R32 {
			q = math.Log((math.Pow(res.R21, pn) - s) / (math.Pow(res.R32, pn) - s))
		}
		if math.Abs(pn-p) < 1e-12*math.Max(1, pn) {
			p = pn
			break
		}
		p = pn
	}
	if math.IsNaN(p) || res.Iterations > 1000 {
		return res, fmt.Errorf("%w: the apparent order did not converge (values %g, %g, %g)", ErrGrids, p1, p2, p3)
	}
	res.Order = p
	rp := math.Pow(res.R21, p)
	res.Extrap = (rp*p1 - p2) / (rp - 1)
	res.RelErr = math.Abs((p1 - p2) / p1)
	res.ExtrapErr = math.Abs((res.Extrap - p1) / res.Extrap)
	res.GCIFine = SafetyFactor * res.RelErr / (rp - 1)
	if res.R21 < 1.3 || res.R32 < 1.3 {
		res.Warnings = append(res.Warnings, fmt.Sprintf("refinement ratios %.3g and %.3g: Celik et al. recommend more than 1.3", res.R21, res.R32))
	}
	if p < 0.5 || p > 4 {
		res.Warnings = append(res.Warnings, fmt.Sprintf("apparent order %.3g is far from the usual formal orders (1 to 2): treat the estimate with care", p))
	}
	return res, nil
}
