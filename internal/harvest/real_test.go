package harvest

import (
	"math"
	"testing"

	"github.com/sweep-cfd/sweep/internal/history"
)

// Ensure that the automatic average of a real solver's shedding history
// (testdata/freefem_cylinder_re100.dat, see testdata/README.md) agrees,
// within its interval, with the average over the developed part chosen
// by hand (from t = 6 on, where the cycle means of drag and lift change by
// less than 1e-5 from cycle to cycle), that it is taken over whole cycles
// after the build-up of the shedding, and that the drag's alternating
// half-cycles are averaged as whole lift cycles.
func TestRealShedding(t *testing.T) {
	s, err := history.ReadSeries("testdata", history.Quantity{Files: "freefem_cylinder_re100.dat", Value: []history.Term{{Column: history.Column{Name: "Cd"}}}})
	if err != nil {
		t.Fatal(err)
	}
	l, err := history.ReadSeries("testdata", history.Quantity{Files: "freefem_cylinder_re100.dat", Value: []history.Term{{Column: history.Column{Name: "Cl"}}}})
	if err != nil {
		t.Fatal(err)
	}
	hand := 6.0
	for _, c := range []struct {
		name string
		y    []float64
	}{{"drag", s.Value}, {"lift", l.Value}} {
		auto := Analyze(s.Time, c.y, Options{})
		byHand := Analyze(s.Time, c.y, Options{Start: &hand})
		t.Logf("%s: automatic %.7f ± %.2g from t = %.3f (%s, %d cycles); by hand %.7f ± %.2g", c.name,
			auto.Mean, auto.HalfWidth, auto.TransientEnd, auto.Verdict, auto.Periods, byHand.Mean, byHand.HalfWidth)
		if auto.Verdict != Converged || auto.Method != "cycles" {
			t.Errorf("%s: verdict %s by %s (%s), want converged over cycles", c.name, auto.Verdict, auto.Method, auto.Message)
		}
		if d := math.Abs(auto.Mean - byHand.Mean); d > auto.HalfWidth {
			t.Errorf("%s: the automatic average %.7f differs from the hand-chosen %.7f by %.2g, beyond its half-width %.2g",
				c.name, auto.Mean, byHand.Mean, d, auto.HalfWidth)
		}
		// The build-up lasts until about t = 4.5 (amplitude within 1 % of
		// its developed value, read off the cycles by hand).
		if auto.TransientEnd < 4.2 {
			t.Errorf("%s: averaging starts at t = %.3f, inside the build-up of the shedding", c.name, auto.TransientEnd)
		}
		// One lift cycle: 0.358 time units (2.79 per time unit); the drag
		// repeats once per lift cycle too.
		if math.Abs(auto.Period-0.3581) > 0.001 {
			t.Errorf("%s: period %.4f, want the lift cycle's 0.3581", c.name, auto.Period)
		}
	}
}
