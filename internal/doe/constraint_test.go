package doe

import (
	"errors"
	"math"
	"strings"
	"testing"
)

var twoNames = []string{"a", "b"}

func unitMapping(u []float64) map[string]float64 {
	return map[string]float64{"a": u[0], "b": u[1]}
}

// Ensure that a compile error names the fault and its position (line and
// column from 1, as the expression library reports them), so a caller can
// prefix the recipe's file:line.
func TestCompileConstraintErrors(t *testing.T) {
	tests := []struct {
		src        string
		line, col  int
		msgContain string
	}{
		{"a + * b < 1", 1, 5, "unexpected token"},
		{"a + c < 1", 1, 5, "unknown name c"},
		{"a < 1 &&\n b >", 2, 4, "unexpected token EOF"},
		{"sqrt(a, b) < 1", 1, 1, "too many arguments"},
		{"a + b", 0, 0, "must give true or false, not a float64"},
		{"a < 1 ? 2 : 3", 0, 0, "must give true or false"},
		{"", 0, 0, ""},
	}
	for _, tt := range tests {
		_, err := CompileConstraint(tt.src, twoNames)
		var ce *ConstraintError
		if !errors.As(err, &ce) {
			t.Errorf("%q: error %v is not a *ConstraintError", tt.src, err)
			continue
		}
		if tt.src == "" {
			continue // only that it fails with a ConstraintError
		}
		if ce.Line != tt.line || ce.Column != tt.col || !strings.Contains(ce.Msg, tt.msgContain) {
			t.Errorf("%q: line %d col %d %q, want line %d col %d containing %q", tt.src, ce.Line, ce.Column, ce.Msg, tt.line, tt.col, tt.msgContain)
		}
		if !strings.Contains(err.Error(), tt.msgContain) {
			t.Errorf("%q: Error() = %q", tt.src, err)
		}
	}
	for _, names := range [][]string{{"a", "a"}, {"a", "pi"}, {"sqrt", "b"}} {
		if _, err := CompileConstraint("a < 1", names); err == nil {
			t.Errorf("names %v accepted", names)
		}
	}
	_, err := CompileConstraints([]string{"a < 1", "a <"}, twoNames)
	var ce *ConstraintError
	if !errors.As(err, &ce) || !strings.HasPrefix(err.Error(), "constraint 2: ") {
		t.Errorf("CompileConstraints error %v", err)
	}
}

// Ensure that constraints evaluate as written: arithmetic, logic, powers
// and the mathematical functions (values worked by hand at a = 0.3,
// b = 0.4: a + b = 0.7, hypot = 0.5, π a ≈ 0.942).
func TestConstraintEval(t *testing.T) {
	vals := map[string]float64{"a": 0.3, "b": 0.4, "unused": 7}
	tests := []struct {
		src  string
		want bool
	}{
		{"a + b < 0.8", true},
		{"a + b < 0.7 - 1e-9", false},
		{"hypot(a, b) <= 0.5 + 1e-12", true},
		{"sqrt(a*a + b**2) >= 0.5 - 1e-12", true},
		{"a > 0.25 and b^2 < 0.1", false},
		{"a > 0.25 && not (b > 0.5)", true},
		{"pi * a > 1", false},
		{"max(a, b) == b || min(a, b) > 1", true},
		{"atan2(b, a) > 0.9 && log(exp(a)) < 0.3 + 1e-12", true},
		{"abs(a - b) >= 0.1 - 1e-12 ? a < b : false", true},
	}
	for _, tt := range tests {
		c, err := CompileConstraint(tt.src, twoNames)
		if err != nil {
			t.Errorf("%q: %v", tt.src, err)
			continue
		}
		got, err := c.Eval(vals)
		if err != nil || got != tt.want {
			t.Errorf("%q = %v (%v), want %v", tt.src, got, err, tt.want)
		}
		if c.String() != tt.src {
			t.Errorf("String() = %q", c.String())
		}
	}
	c, _ := CompileConstraint("a < b", twoNames)
	if _, err := c.Eval(map[string]float64{"a": 1}); err == nil || !strings.Contains(err.Error(), `"b" has no value`) {
		t.Errorf("missing value: %v", err)
	}
}

// Ensure that a structured design loses exactly its failing runs, in order,
// and nothing moves: the face-centred CCD for 2 factors in the unit square
// under a + b ≤ 1.5 loses the corner (1,1) and nothing else (by hand).
func TestConstrainStructured(t *testing.T) {
	design := CentralComposite(2, FaceCentred, 1)
	cs, err := CompileConstraints([]string{"a + b <= 1.5"}, twoNames)
	if err != nil {
		t.Fatal(err)
	}
	res, err := Constrain(design, cs, ConstrainOptions{Mapping: unitMapping})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Dropped) != 1 || res.Dropped[0] != 3 || len(res.Replaced) != 0 || res.Tried != 0 {
		t.Errorf("dropped %v replaced %v tried %d, want run 3 (the (1,1) corner) only", res.Dropped, res.Replaced, res.Tried)
	}
	want := append(append([][]float64{}, design[:3]...), design[4:]...)
	if !sameRuns(res.Points, want, 0) || len(res.Points) != len(design)-1 {
		t.Errorf("points %v", res.Points)
	}
	none, _ := CompileConstraints([]string{"a > 2"}, twoNames)
	if _, err := Constrain(design, none, ConstrainOptions{Mapping: unitMapping}); !errors.Is(err, ErrInfeasible) {
		t.Errorf("all dropped: error %v, want ErrInfeasible", err)
	}
}

// Ensure that with a Sobol' source, each failing point is replaced, in
// place, by the next feasible point of the sequence, and every result
// satisfies the constraint (a + b < 1 keeps half the square).
func TestConstrainSobolReplacement(t *testing.T) {
	cs, _ := CompileConstraints([]string{"a + b < 1"}, twoNames)
	s := NewSobol(2, SobolOptions{Scramble: true, Seed: 4})
	design := s.Points(16)
	res, err := Constrain(design, cs, ConstrainOptions{Mapping: unitMapping, Candidates: s})
	if err != nil {
		t.Fatal(err)
	}
	// The same sequence, read on, gives the expected replacements.
	ref := NewSobol(2, SobolOptions{Scramble: true, Seed: 4})
	ref.Points(16)
	var failing []int
	for i, p := range design {
		if p[0]+p[1] >= 1 {
			failing = append(failing, i)
		}
	}
	if len(failing) == 0 || len(res.Replaced) != len(failing) {
		t.Fatalf("replaced %v, failing %v", res.Replaced, failing)
	}
	for n, i := range failing {
		if res.Replaced[n] != i {
			t.Fatalf("replaced %v, want %v", res.Replaced, failing)
		}
		var next []float64
		for next == nil || next[0]+next[1] >= 1 {
			next = ref.Next()
		}
		if res.Points[i][0] != next[0] || res.Points[i][1] != next[1] {
			t.Errorf("point %d replaced by %v, want next feasible %v", i, res.Points[i], next)
		}
	}
	for i, p := range res.Points {
		if p[0]+p[1] >= 1 {
			t.Errorf("point %d = %v fails", i, p)
		}
		if !containsIndex(failing, i) && (p[0] != design[i][0] || p[1] != design[i][1]) {
			t.Errorf("feasible point %d moved", i)
		}
	}
	if res.Tried < len(failing) {
		t.Errorf("tried %d candidates for %d replacements", res.Tried, len(failing))
	}
}

func containsIndex(s []int, i int) bool {
	for _, v := range s {
		if v == i {
			return true
		}
	}
	return false
}

// Ensure that replacing with Spread > 1 (greedy maximin among feasible
// candidates) spreads an optimised Latin hypercube restricted to a disc
// further than taking the first feasible candidate: mean minimum distance
// over five seeds, and every point feasible.
func TestConstrainSpread(t *testing.T) {
	cs, _ := CompileConstraints([]string{"hypot(a - 0.5, b - 0.5) < 0.45"}, twoNames)
	var first, spread float64
	for seed := uint64(1); seed <= 5; seed++ {
		design, _ := LatinHypercube(30, 2, LatinHypercubeOptions{Seed: seed})
		for _, sp := range []int{1, 30} {
			res, err := Constrain(design, cs, ConstrainOptions{
				Mapping: unitMapping, Candidates: NewUniformCandidates(2, seed), Spread: sp,
			})
			if err != nil {
				t.Fatal(err)
			}
			if len(res.Replaced) == 0 {
				t.Fatalf("seed %d: no point replaced; the test needs some", seed)
			}
			for _, p := range res.Points {
				if math.Hypot(p[0]-0.5, p[1]-0.5) >= 0.45 {
					t.Errorf("point %v fails", p)
				}
			}
			if sp == 1 {
				first += MinDistance(res.Points) / 5
			} else {
				spread += MinDistance(res.Points) / 5
			}
		}
	}
	if spread <= first {
		t.Errorf("mean d_min with Spread 30 = %.4f, first feasible %.4f", spread, first)
	}
	t.Logf("constrained LHS n=30: mean d_min first feasible %.4f, Spread 30 %.4f", first, spread)
}

// Ensure that a constraint admitting (almost) nothing stops after the
// bounded number of tries with ErrInfeasible, and says how far it got.
func TestConstrainGivesUp(t *testing.T) {
	cs, _ := CompileConstraints([]string{"a > 0.99999 && b > 0.99999"}, twoNames)
	design := RandomLatinHypercube(10, 2, 1, true)
	res, err := Constrain(design, cs, ConstrainOptions{Mapping: unitMapping, Candidates: NewUniformCandidates(2, 1), MaxTries: 5000})
	if !errors.Is(err, ErrInfeasible) {
		t.Fatalf("error %v, want ErrInfeasible", err)
	}
	if res.Tried != 5000 || !strings.Contains(err.Error(), "almost none of the space") {
		t.Errorf("tried %d, error %q", res.Tried, err)
	}
	res, err = Constrain(design, cs, ConstrainOptions{Mapping: unitMapping, Candidates: NewUniformCandidates(2, 1)})
	if !errors.Is(err, ErrInfeasible) || res.Tried != 10000+1000*10 {
		t.Errorf("default bound: tried %d, error %v", res.Tried, err)
	}
}

// Ensure that an empty constraint list accepts everything.
func TestConstrainNoConstraints(t *testing.T) {
	design := BoxBehnken(3, 1)
	res, err := Constrain(design, nil, ConstrainOptions{Mapping: unitMapping})
	if err != nil || len(res.Points) != len(design) || len(res.Dropped) != 0 {
		t.Errorf("res %+v, err %v", res, err)
	}
}

// FuzzCompileConstraint checks that no expression text crashes the
// compiler and that every failure is a *ConstraintError with a position
// inside the text (or 0 for the whole expression).
func FuzzCompileConstraint(f *testing.F) {
	for _, s := range []string{"a + b < 0.8", "a + * b", "sqrt(a) > b ? a : b", "a <\n\n b >", "((a", "a in [1,2]", `"x" < a`, "a ** b ** 2 < 1e308"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, src string) {
		c, err := CompileConstraint(src, twoNames)
		if err == nil {
			if _, err := c.Eval(map[string]float64{"a": 0.5, "b": 0.25}); err != nil && !strings.Contains(err.Error(), "constraint") {
				t.Errorf("%q: evaluation error %v not labelled", src, err)
			}
			return
		}
		var ce *ConstraintError
		if !errors.As(err, &ce) {
			t.Fatalf("%q: error %T %v", src, err, err)
		}
		lines := strings.Count(src, "\n") + 1
		if ce.Line < 0 || ce.Line > lines || (ce.Line > 0 && ce.Column < 1) {
			t.Errorf("%q: position %d:%d outside %d lines", src, ce.Line, ce.Column, lines)
		}
	})
}

func BenchmarkConstrainSobol(b *testing.B) {
	cs, _ := CompileConstraints([]string{"a + b < 1", "hypot(a, b) > 0.1"}, twoNames)
	for b.Loop() {
		s := NewSobol(2, SobolOptions{Scramble: true, Seed: 1})
		if _, err := Constrain(s.Points(64), cs, ConstrainOptions{Mapping: unitMapping, Candidates: s}); err != nil {
			b.Fatal(err)
		}
	}
}
