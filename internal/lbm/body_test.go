package lbm

import (
	"math"
	"math/rand"
	"testing"
)

// Ensure that the bisection gives the exact wall fraction for a circle: the
// smaller root δ of |p + δe − c|² = r² (analytic geometry, common
// practice), to 1e-12, for random links that cross the surface.
func TestWallFractionCircle(t *testing.T) {
	cyl := cylinder{xc: 2.03, yc: 1.97, d: 1}
	rng := rand.New(rand.NewSource(7))
	checked := 0
	for checked < 2000 {
		x, y := 2.03+1.2*(2*rng.Float64()-1), 1.97+1.2*(2*rng.Float64()-1)
		q := 1 + rng.Intn(8)
		h := 0.05 // cell size at 20 cells per diameter
		ex, ey := h*float64(cx[q]), h*float64(cy[q])
		if cyl.inside(x, y) || !cyl.inside(x+ex, y+ey) {
			continue
		}
		// |p − c + δe|² = r²: a δ² + 2 b δ + (|p − c|² − r²) = 0.
		px, py := x-cyl.xc, y-cyl.yc
		a := ex*ex + ey*ey
		b := px*ex + py*ey
		cc := px*px + py*py - 0.25
		want := (-b - math.Sqrt(b*b-a*cc)) / a
		if got := wallFraction(cyl, x, y, ex, ey); math.Abs(got-want) > 1e-12 {
			t.Fatalf("link (%g,%g)+(%g,%g): δ = %.15f, want %.15f", x, y, ex, ey, got, want)
		}
		checked++
	}
}

// Ensure that the box section has the shape its parameters describe:
// rounded front corners, a straight-sided boat-tail whose base height is
// height − 2 taper_length tan(taper_angle), and no rounding or taper when
// both are zero (plane geometry, exact to 1e-12).
func TestBoxShape(t *testing.T) {
	const eps = 1e-9
	b := box{nose: 2, length: 3, height: 1, clearance: 0.5, r: 0.3, taperAngle: 10 * math.Pi / 180, taperLength: 0.8}
	top, bot := b.clearance+b.height, b.clearance
	for _, tc := range []struct {
		name   string
		x, y   float64
		inside bool
	}{
		{"centre", 3.5, 1, true},
		{"sharp corner cut by the nose radius", 2 + eps, top - eps, false},
		{"lower corner cut", 2 + eps, bot + eps, false},
		{"on the nose arc, 45°", 2.3 - 0.3*math.Sqrt(0.5) + eps, top - 0.3 + 0.3*math.Sqrt(0.5) - eps, true},
		{"just outside the arc", 2.3 - 0.3*math.Sqrt(0.5) - eps, top - 0.3 + 0.3*math.Sqrt(0.5) + eps, false},
		{"front face below the arc", 2 + eps, 1, true},
		{"top face before the taper", 4.1, top - eps, true},
		{"above the tapered top", 4.9, top - 0.7*math.Tan(b.taperAngle) + eps, false},
		{"below the tapered top", 4.9, top - 0.7*math.Tan(b.taperAngle) - eps, true},
		{"above the tapered underside", 4.9, bot + 0.7*math.Tan(b.taperAngle) + eps, true},
		{"below the tapered underside", 4.9, bot + 0.7*math.Tan(b.taperAngle) - eps, false},
		{"behind the base", 5 + eps, 1, false},
		{"ahead of the nose", 2 - eps, 1, false},
	} {
		if got := b.inside(tc.x, tc.y); got != tc.inside {
			t.Errorf("%s: inside(%g, %g) = %v, want %v", tc.name, tc.x, tc.y, got, tc.inside)
		}
	}
	// Base height from the vertical link across the base at x = 5.
	base := b.height - 2*b.taperLength*math.Tan(b.taperAngle)
	d0 := wallFraction(b, 5-eps, bot-0.5, 0, 1)
	d1 := wallFraction(b, 5-eps, top+0.5, 0, -1)
	if got := (top + 0.5 - d1) - (bot - 0.5 + d0); math.Abs(got-base) > 1e-7 {
		t.Errorf("base height %.9f, want %.9f", got, base)
	}
	sharp := box{nose: 2, length: 3, height: 1, clearance: 0.5}
	for _, p := range [][2]float64{{2, bot}, {2, top}, {5, bot}, {5, top}} {
		if !sharp.inside(p[0], p[1]) {
			t.Errorf("sharp box: corner %v not inside", p)
		}
	}
}

// Ensure that wallFraction panics on a link that does not cross the
// surface, a caller bug.
func TestWallFractionPanics(t *testing.T) {
	defer func() {
		if recover() == nil {
			t.Error("no panic")
		}
	}()
	wallFraction(cylinder{xc: 0, yc: 0, d: 1}, 2, 2, 0.1, 0)
}
