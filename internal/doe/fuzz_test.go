package doe

import (
	"errors"
	"strings"
	"testing"
)

// FuzzConstraintEval checks that no constraint text and no parameter
// values crash the compiler, the evaluation or the constrained design:
// an expression that compiles evaluates to true or false or to an error
// that names the constraint, and Constrain either returns a design of the
// right size whose points all satisfy the constraint, or says it cannot.
func FuzzConstraintEval(f *testing.F) {
	for _, s := range []struct {
		src  string
		a, b float64
	}{
		{"a + b < 0.8", 0.5, 0.25},
		{"hypot(a, b) > 0.1 and sqrt(a) < 0.9", 0.3, 0.4},
		{"a / b > 1", 1, 0},
		{"log(a) < b ? a > 0 : b < 1", -1, 2},
		{"a ** b < 1e308", 10, 400},
		{"int(a) % int(b) == 0", 3, 0},
		{"a in [0.5, 1] || b in 0..3", 0.5, 2},
		{"max(a, b, 2) - min(a) >= abs(b)", 1e300, -1e300},
	} {
		f.Add(s.src, s.a, s.b)
	}
	f.Fuzz(func(t *testing.T, src string, a, b float64) {
		c, err := CompileConstraint(src, twoNames)
		if err != nil {
			var ce *ConstraintError
			if !errors.As(err, &ce) {
				t.Fatalf("%q: error %T %v", src, err, err)
			}
			return
		}
		if _, err := c.Eval(map[string]float64{"a": a, "b": b}); err != nil && !strings.Contains(err.Error(), "constraint") {
			t.Fatalf("%q at a = %v, b = %v: error %v does not name the constraint", src, a, b, err)
		}
		design := [][]float64{{0, 0}, {0.5, 0.5}, {1, 1}, {0.25, 0.75}}
		for _, cands := range []Candidates{nil, NewUniformCandidates(2, 1)} {
			res, err := Constrain(design, []*Constraint{c}, ConstrainOptions{Mapping: unitMapping, Candidates: cands, Spread: 2, MaxTries: 200})
			if err != nil {
				continue
			}
			if (cands != nil && len(res.Points) != len(design)) || (cands == nil && len(res.Points)+len(res.Dropped) != len(design)) {
				t.Fatalf("%q: %d points, %d dropped, of %d", src, len(res.Points), len(res.Dropped), len(design))
			}
			for _, p := range res.Points {
				if ok, err := c.Eval(unitMapping(p)); !ok || err != nil {
					t.Fatalf("%q: point %v kept but fails (%v)", src, p, err)
				}
			}
		}
	})
}
