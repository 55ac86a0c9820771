package surface

import (
	"errors"
	"reflect"
	"strings"
	"testing"
)

// Ensure that term strings parse to the intended monomials and that bad
// terms are named in the error.
func TestParseTerms(t *testing.T) {
	names := []string{"a", "b", "mach"}
	ok := []struct {
		spec string
		want []string // canonical names
	}{
		{"1, a, b, a*b, a^2", []string{"1", "a", "b", "a*b", "a^2"}},
		{" 1 ,mach ^ 3 , b*a ", []string{"1", "mach^3", "a*b"}},
		{"a*a*b", []string{"a^2*b"}},
		{"b^2*a^2*mach", []string{"a^2*b^2*mach"}},
	}
	for _, c := range ok {
		ts, err := ParseTerms(c.spec, names)
		if err != nil {
			t.Errorf("%q: %v", c.spec, err)
			continue
		}
		var got []string
		for _, tm := range ts {
			got = append(got, tm.Name(names))
		}
		if !reflect.DeepEqual(got, c.want) {
			t.Errorf("%q: got %v, want %v", c.spec, got, c.want)
		}
	}
	bad := []struct{ spec, mention string }{
		{"1, a, c", `term 3 "c"`},
		{"1, a,", `term 3 ""`},
		{"1, a^0", `term 2 "a^0"`},
		{"a^x", `"a^x"`},
		{"a^10", "from 1 to 9"},
		{"a^5*a^5", "exceeds 9"},
		{"a**b", `term 1 "a**b"`},
		{"2*a", `unknown parameter "2"`},
		{"a*b, b*a", "repeats term 1"},
	}
	for _, c := range bad {
		_, err := ParseTerms(c.spec, names)
		if !errors.Is(err, ErrBadTerm) || !strings.Contains(err.Error(), c.mention) {
			t.Errorf("%q: got %v, want ErrBadTerm mentioning %s", c.spec, err, c.mention)
		}
	}
}

// Ensure that the model builders give the textbook term counts: k+1,
// 1+k+k(k-1)/2 and (k+1)(k+2)/2 (common practice), and that they are
// hierarchical.
func TestTermBuilders(t *testing.T) {
	for k := 1; k <= 6; k++ {
		if n := len(LinearTerms(k)); n != k+1 {
			t.Errorf("k=%d: %d linear terms", k, n)
		}
		if n := len(InteractionTerms(k)); n != 1+k+k*(k-1)/2 {
			t.Errorf("k=%d: %d interaction terms", k, n)
		}
		q := QuadraticTerms(k)
		if n := len(q); n != (k+1)*(k+2)/2 {
			t.Errorf("k=%d: %d quadratic terms", k, n)
		}
		if !hierarchical(q) {
			t.Errorf("k=%d: quadratic terms not hierarchical", k)
		}
	}
	ts, _ := ParseTerms("1, x1^2", defaultNames(1))
	if hierarchical(ts) {
		t.Error(`"1, x1^2" reported hierarchical`)
	}
}

// FuzzParseTerms checks that the parser never panics and that every term it
// accepts prints to a canonical name that parses back to the same monomial.
func FuzzParseTerms(f *testing.F) {
	for _, s := range []string{"1, a, b, a*b, a^2", "a^9*b", "a**b", ",", "a^-1", "b ^ 2 * a", "1,1"} {
		f.Add(s)
	}
	names := []string{"a", "b"}
	f.Fuzz(func(t *testing.T, spec string) {
		ts, err := ParseTerms(spec, names)
		if err != nil {
			if !errors.Is(err, ErrBadTerm) {
				t.Fatalf("%q: error %v does not wrap ErrBadTerm", spec, err)
			}
			return
		}
		for _, tm := range ts {
			back, err := ParseTerms(tm.Name(names), names)
			if err != nil || len(back) != 1 || !reflect.DeepEqual(back[0].Pow, tm.Pow) {
				t.Fatalf("%q: term %v prints as %q, which parses to %v, %v", spec, tm.Pow, tm.Name(names), back, err)
			}
		}
	})
}
