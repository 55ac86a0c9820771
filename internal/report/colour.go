package report

import (
	"fmt"
	"image/color"
	"math"

	"gonum.org/v1/plot/palette"
)

// The report's colour scales are the program's own, built from a few
// chosen end and middle points by straight-line interpolation in CIELAB
// (CIE 15:2004), a space in which equal distances look roughly equally
// different. The points are spaced by their distance in CIELAB, so every
// step of the scale is about as visible as every other.
//
//   - magnitudeStops (a sequential scale) for magnitudes such as a drag
//     coefficient over two parameters: lightness L* rises steadily from a
//     deep blue through a grey teal to a pale straw colour. Because L*
//     alone orders the colours, the scale reads in greyscale print, and
//     because its hue runs along the blue-yellow axis it stays readable
//     for the common red-green colour-vision deficiencies.
//   - signedStops (a diverging scale) for a signed quantity whose zero
//     means something (lift, side force, a moment): two arms of equal
//     lightness, blue for negative and rust for positive values, meet at a
//     near-white zero.
var (
	magnitudeStops = []lab{{L: 22, A: 14, B: -40}, {L: 58, A: -22, B: -4}, {L: 93, A: -8, B: 40}}
	signedStops    = []lab{{L: 36, A: 8, B: -44}, {L: 96, A: 0, B: 2}, {L: 36, A: 34, B: 36}}
)

// lab is a colour in CIELAB with the D65 white point.
type lab struct{ L, A, B float64 }

// D65 reference white in CIE XYZ (Y = 1), as sRGB uses it
// (IEC 61966-2-1:1999; common practice).
const xn, yn, zn = 0.95047, 1.0, 1.08883

// labToRGB converts a CIELAB colour to 8-bit sRGB, clipping channels that
// fall outside the gamut (the scales' points are chosen inside it; the
// tests check that no clipping occurs along them).
//
// CIELAB to XYZ (CIE 15:2004): fy = (L*+16)/116, fx = fy + a*/500,
// fz = fy − b*/200, X = Xn f⁻¹(fx) …, with f⁻¹(t) = t³ above 6/29 and
// 3 (6/29)² (t − 4/29) below. XYZ to linear sRGB by the matrix of
// IEC 61966-2-1, then the sRGB transfer curve.
func labToRGB(c lab) color.NRGBA {
	finv := func(t float64) float64 {
		const d = 6.0 / 29
		if t > d {
			return t * t * t
		}
		return 3 * d * d * (t - 4.0/29)
	}
	fy := (c.L + 16) / 116
	x := xn * finv(fy+c.A/500)
	y := yn * finv(fy)
	z := zn * finv(fy-c.B/200)
	r := 3.2406*x - 1.5372*y - 0.4986*z
	g := -0.9689*x + 1.8758*y + 0.0415*z
	b := 0.0557*x - 0.2040*y + 1.0570*z
	return color.NRGBA{R: srgbByte(r), G: srgbByte(g), B: srgbByte(b), A: 0xff}
}

// srgbByte applies the sRGB transfer curve to a linear channel value and
// quantises it to 8 bits.
func srgbByte(v float64) uint8 {
	v = math.Max(0, math.Min(1, v))
	if v <= 0.0031308 {
		v *= 12.92
	} else {
		v = 1.055*math.Pow(v, 1/2.4) - 0.055
	}
	return uint8(math.Round(v * 255))
}

// rgbToLab converts 8-bit sRGB back to CIELAB, the inverse of labToRGB
// (up to the 8-bit rounding); the tests use it to measure the scales.
func rgbToLab(c color.NRGBA) lab {
	lin := func(u uint8) float64 {
		v := float64(u) / 255
		if v <= 0.04045 {
			return v / 12.92
		}
		return math.Pow((v+0.055)/1.055, 2.4)
	}
	r, g, b := lin(c.R), lin(c.G), lin(c.B)
	x := 0.4124*r + 0.3576*g + 0.1805*b
	y := 0.2126*r + 0.7152*g + 0.0722*b
	z := 0.0193*r + 0.1192*g + 0.9505*b
	f := func(t float64) float64 {
		const d = 6.0 / 29
		if t > d*d*d {
			return math.Cbrt(t)
		}
		return t/(3*d*d) + 4.0/29
	}
	fx, fy, fz := f(x/xn), f(y/yn), f(z/zn)
	return lab{L: 116*fy - 16, A: 500 * (fx - fy), B: 200 * (fy - fz)}
}

func (c lab) dist(d lab) float64 { return math.Hypot(math.Hypot(c.L-d.L, c.A-d.A), c.B-d.B) }

// scale is a colour map through CIELAB stops, parametrised by distance
// along the path so that equal steps of the value are equal steps of
// colour. It implements palette.ColorMap.
type scale struct {
	stops    []lab
	at       []float64 // cumulative path length of each stop, 0 .. 1
	min, max float64
	alpha    float64
}

// newScale returns a scale through stops over [0, 1].
func newScale(stops []lab) *scale {
	if len(stops) < 2 {
		panic("report: a colour scale needs at least two stops")
	}
	at := make([]float64, len(stops))
	for i := 1; i < len(stops); i++ {
		at[i] = at[i-1] + stops[i].dist(stops[i-1])
	}
	for i := range at {
		at[i] /= at[len(at)-1]
	}
	return &scale{stops: stops, at: at, max: 1, alpha: 1}
}

// magnitudeScale returns the sequential scale over [lo, hi].
func magnitudeScale(lo, hi float64) *scale {
	s := newScale(magnitudeStops)
	s.min, s.max = lo, hi
	return s
}

// signedScale returns the diverging scale, symmetric about zero, that
// covers [lo, hi] (lo < 0 < hi): zero is its near-white middle.
func signedScale(lo, hi float64) *scale {
	m := math.Max(-lo, hi)
	s := newScale(signedStops)
	s.min, s.max = -m, m
	return s
}

// scaleFor picks the scale for a field with values in [lo, hi]: the
// diverging one when the field changes sign (so its zero is meaningful
// and sits at the neutral colour), the sequential one otherwise.
func scaleFor(lo, hi float64) *scale {
	if lo < 0 && hi > 0 {
		return signedScale(lo, hi)
	}
	return magnitudeScale(lo, hi)
}

// labAt returns the CIELAB colour at fraction u in [0, 1] of the path.
func (s *scale) labAt(u float64) lab {
	for i := 1; i < len(s.at); i++ {
		if u <= s.at[i] || i == len(s.at)-1 {
			w := (u - s.at[i-1]) / (s.at[i] - s.at[i-1])
			a, b := s.stops[i-1], s.stops[i]
			return lab{L: a.L + w*(b.L-a.L), A: a.A + w*(b.A-a.A), B: a.B + w*(b.B-a.B)}
		}
	}
	return s.stops[len(s.stops)-1]
}

// At returns the colour of value v; values outside [Min, Max] or NaN are
// an error, as palette.ColorMap requires.
func (s *scale) At(v float64) (color.Color, error) {
	if !(v >= s.min && v <= s.max) {
		return nil, fmt.Errorf("report: value %g outside the colour scale [%g, %g]", v, s.min, s.max)
	}
	u := 0.5
	if s.max > s.min {
		u = (v - s.min) / (s.max - s.min)
	}
	c := labToRGB(s.labAt(u))
	c.A = uint8(math.Round(255 * s.alpha))
	return c, nil
}

func (s *scale) Max() float64       { return s.max }
func (s *scale) SetMax(v float64)   { s.max = v }
func (s *scale) Min() float64       { return s.min }
func (s *scale) SetMin(v float64)   { s.min = v }
func (s *scale) Alpha() float64     { return s.alpha }
func (s *scale) SetAlpha(a float64) { s.alpha = a }
func (s *scale) Palette(n int) palette.Palette {
	cs := make([]color.Color, n)
	for i := range cs {
		u := 0.5
		if n > 1 {
			u = float64(i) / float64(n-1)
		}
		c := labToRGB(s.labAt(u))
		c.A = uint8(math.Round(255 * s.alpha))
		cs[i] = c
	}
	return colours(cs)
}

type colours []color.Color

func (c colours) Colors() []color.Color { return c }
