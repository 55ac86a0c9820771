package lbm

import (
	"fmt"
	"math"
)

// A shape is a solid body in case coordinates (units of the reference
// length, origin at the lower inlet corner of the domain).
type shape interface {
	// inside reports whether the point (x, y) lies in the body (closed set).
	inside(x, y float64) bool
	// bounds returns the bounding box of the body.
	bounds() (x0, y0, x1, y1 float64)
}

// cylinder is a circular section of the given centre and diameter.
type cylinder struct {
	xc, yc, d float64
}

func (c cylinder) inside(x, y float64) bool {
	dx, dy := x-c.xc, y-c.yc
	return dx*dx+dy*dy <= 0.25*c.d*c.d
}

func (c cylinder) bounds() (x0, y0, x1, y1 float64) {
	r := 0.5 * c.d
	return c.xc - r, c.yc - r, c.xc + r, c.yc + r
}

// box is the 2D section of a box-shaped body above the ground: a rectangle
// of the given length and height whose underside sits `clearance` above the
// ground (y = 0) and whose front face is at x = nose. Both front corners are
// rounded with radius r. Over the last `taperLength` of the body the upper
// and lower faces converge, each at `taperAngle` (radians) to the flow
// direction, ending in a vertical base of height
//
//	h_base = height − 2 taperLength tan(taperAngle).
type box struct {
	nose, length, height, clearance float64
	r                               float64
	taperAngle, taperLength         float64
}

func (b box) inside(x, y float64) bool {
	x0, x1 := b.nose, b.nose+b.length
	if x < x0 || x > x1 {
		return false
	}
	yb, yt := b.clearance, b.clearance+b.height
	if d := x - (x1 - b.taperLength); d > 0 {
		s := d * math.Tan(b.taperAngle)
		yb += s
		yt -= s
	}
	if y < yb || y > yt {
		return false
	}
	if r := b.r; r > 0 && x < x0+r {
		xc := x0 + r
		if yc := b.clearance + b.height - r; y > yc {
			return (x-xc)*(x-xc)+(y-yc)*(y-yc) <= r*r
		}
		if yc := b.clearance + r; y < yc {
			return (x-xc)*(x-xc)+(y-yc)*(y-yc) <= r*r
		}
	}
	return true
}

func (b box) bounds() (x0, y0, x1, y1 float64) {
	return b.nose, b.clearance, b.nose + b.length, b.clearance + b.height
}

// wallFraction returns the fraction δ ∈ (0, 1] of the link from the fluid
// point (x, y) to (x + ex, y + ey), which lies in the body, at which the link
// crosses the body surface, found by bisection on the inside test (60
// halvings, so δ is exact to rounding). It panics if the start point is
// inside or the end point is outside, which is a caller bug.
func wallFraction(s shape, x, y, ex, ey float64) float64 {
	if s.inside(x, y) || !s.inside(x+ex, y+ey) {
		panic(fmt.Sprintf("lbm: link (%g,%g)+(%g,%g) does not cross the body surface", x, y, ex, ey))
	}
	lo, hi := 0.0, 1.0 // outside at lo, inside at hi
	for it := 0; it < 60; it++ {
		mid := 0.5 * (lo + hi)
		if s.inside(x+mid*ex, y+mid*ey) {
			hi = mid
		} else {
			lo = mid
		}
	}
	return hi
}
