package report

import (
	"encoding/csv"
	"image/color"
	"math"
	"os"
	"strconv"
	"testing"
)

// Ensure that the CIELAB conversion reproduces the tabulated coordinates
// of sRGB white, black and the primaries (testdata/srgb_cielab.csv: IEC
// 61966-2-1 with CIE 15:2004, values recalled from memory), both ways.
func TestCIELABConversion(t *testing.T) {
	f, err := os.Open("testdata/srgb_cielab.csv")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	num := func(s string) float64 {
		x, err := strconv.ParseFloat(s, 64)
		if err != nil {
			t.Fatal(err)
		}
		return x
	}
	for _, row := range rows[1:] {
		c := color.NRGBA{R: uint8(num(row[0])), G: uint8(num(row[1])), B: uint8(num(row[2])), A: 0xff}
		want := lab{L: num(row[3]), A: num(row[4]), B: num(row[5])}
		got := rgbToLab(c)
		// Tolerance 0.1: the table's two decimals plus the four-digit
		// matrices of the standard.
		if got.dist(want) > 0.1 {
			t.Errorf("sRGB %v -> Lab %+v, want %+v", row[:3], got, want)
		}
		if back := labToRGB(want); back != c {
			t.Errorf("Lab %+v -> sRGB %v, want %v", want, back, c)
		}
	}
}

// sample returns n colours along a scale over [0, 1], measured back in
// CIELAB from the 8-bit sRGB the report writes.
func sample(s *scale, n int) (got, target []lab) {
	for i := range n {
		u := float64(i) / float64(n-1)
		c, err := s.At(s.min + u*(s.max-s.min))
		if err != nil {
			panic(err)
		}
		got = append(got, rgbToLab(c.(color.NRGBA)))
		target = append(target, s.labAt(u))
	}
	return got, target
}

// Ensure that the sequential scale's lightness L* rises monotonically (so
// it reads in greyscale and for colour-blind readers), that its steps are
// perceptually even, and that no colour along it leaves the sRGB gamut.
// L* is measured from the written 8-bit colour by the CIE 15:2004
// formula L* = 116 f(Y/Yn) − 16 (rgbToLab).
func TestMagnitudeScale(t *testing.T) {
	got, target := sample(magnitudeScale(3, 7), 32)
	for i := range got {
		// Clipping at the gamut edge would move the colour by far more
		// than the 8-bit rounding (about 0.5 in ΔE).
		if d := got[i].dist(target[i]); d > 1.5 {
			t.Errorf("sample %d: written colour is ΔE %.2f from its target %+v: outside the sRGB gamut", i, d, target[i])
		}
		if i > 0 && !(got[i].L > got[i-1].L) {
			t.Errorf("lightness falls or stalls at sample %d: L* %.2f after %.2f", i, got[i].L, got[i-1].L)
		}
	}
	if span := got[len(got)-1].L - got[0].L; span < 60 {
		t.Errorf("lightness spans only %.1f units of L*; a greyscale print needs a wide range", span)
	}
	// Even steps: every step's ΔE within 25 % of the mean step (the
	// 8-bit rounding alone moves a step of about 4 by up to ±0.6).
	var steps []float64
	mean := 0.0
	for i := 1; i < len(got); i++ {
		steps = append(steps, got[i].dist(got[i-1]))
		mean += steps[len(steps)-1]
	}
	mean /= float64(len(steps))
	for i, d := range steps {
		if math.Abs(d-mean) > 0.25*mean {
			t.Errorf("step %d is ΔE %.2f against a mean step of %.2f", i, d, mean)
		}
	}
}

// Ensure that the diverging scale has arms of equal lightness meeting at
// its lightest colour at zero, and that a field changing sign gets it
// while a field of one sign gets the sequential scale.
func TestSignedScale(t *testing.T) {
	s := scaleFor(-0.2, 0.5)
	if s.min != -0.5 || s.max != 0.5 {
		t.Fatalf("signed scale over [%g, %g], want symmetric [-0.5, 0.5]", s.min, s.max)
	}
	got, target := sample(s, 65)
	mid := len(got) / 2
	for i := range got {
		if d := got[i].dist(target[i]); d > 1.5 {
			t.Errorf("sample %d outside the sRGB gamut (ΔE %.2f)", i, d)
		}
		if j := len(got) - 1 - i; math.Abs(got[i].L-got[j].L) > 1 {
			t.Errorf("arms differ in lightness: L* %.2f at %d, %.2f at %d", got[i].L, i, got[j].L, j)
		}
		if i > 0 && i <= mid && !(got[i].L > got[i-1].L) {
			t.Errorf("lightness does not rise towards zero at sample %d", i)
		}
	}
	zero, _ := s.At(0)
	if l := rgbToLab(zero.(color.NRGBA)); l.L < 94 {
		t.Errorf("zero is drawn at L* %.1f; the neutral middle should be near white", l.L)
	}
	if m := scaleFor(2, 9); m.min != 2 || m.max != 9 || &m.stops[0] != &magnitudeStops[0] {
		t.Errorf("a field of one sign must get the sequential scale over its own range")
	}
	if _, err := s.At(math.NaN()); err == nil {
		t.Error("NaN got a colour")
	}
}
