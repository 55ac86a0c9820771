package surface

import (
	"fmt"
	"strconv"
	"strings"
)

// MaxPower is the largest power of one parameter that a term may carry.
const MaxPower = 9

// Term is one column of a polynomial model: the monomial
//
//	x_1^Pow[0] · x_2^Pow[1] · … · x_k^Pow[k-1]
//
// in natural units. The intercept has every power zero.
type Term struct {
	Pow []int
}

// Degree returns the total degree Σ Pow[j].
func (t Term) Degree() int {
	d := 0
	for _, p := range t.Pow {
		d += p
	}
	return d
}

// Name returns the canonical spelling of the term over the given parameter
// names: "1" for the intercept, otherwise the factors in parameter order
// joined by "*", with "^p" for powers above one (for example "a^2*b").
func (t Term) Name(names []string) string {
	var parts []string
	for j, p := range t.Pow {
		switch {
		case p == 1:
			parts = append(parts, names[j])
		case p > 1:
			parts = append(parts, names[j]+"^"+strconv.Itoa(p))
		}
	}
	if len(parts) == 0 {
		return "1"
	}
	return strings.Join(parts, "*")
}

func (t Term) key() string {
	var b strings.Builder
	for _, p := range t.Pow {
		b.WriteByte(byte('0' + p))
	}
	return b.String()
}

func monomial(k int, pow map[int]int) Term {
	t := Term{Pow: make([]int, k)}
	for j, p := range pow {
		t.Pow[j] = p
	}
	return t
}

// LinearTerms returns the intercept and the k first-order terms.
func LinearTerms(k int) []Term {
	if k < 1 {
		panic("surface: need at least one parameter")
	}
	ts := []Term{monomial(k, nil)}
	for j := 0; j < k; j++ {
		ts = append(ts, monomial(k, map[int]int{j: 1}))
	}
	return ts
}

// InteractionTerms returns the linear terms followed by the k(k-1)/2
// two-factor interactions x_i·x_j (i < j).
func InteractionTerms(k int) []Term {
	ts := LinearTerms(k)
	for i := 0; i < k; i++ {
		for j := i + 1; j < k; j++ {
			ts = append(ts, monomial(k, map[int]int{i: 1, j: 1}))
		}
	}
	return ts
}

// QuadraticTerms returns the full second-order model: the interaction terms
// followed by the k pure squares, (k+1)(k+2)/2 terms in all.
func QuadraticTerms(k int) []Term {
	ts := InteractionTerms(k)
	for j := 0; j < k; j++ {
		ts = append(ts, monomial(k, map[int]int{j: 2}))
	}
	return ts
}

// ParseTerms reads a comma-separated list of terms over the parameter names,
// for example "1, x, x^2, x^3" or "1, a, b, a*b, a^2". A term is "1" (the
// intercept) or a product of factors joined by "*"; a factor is a parameter
// name, optionally followed by "^" and an integer power from 1 to MaxPower.
// A name repeated in a product adds its powers ("a*a" is "a^2"). Spaces
// around names and operators are ignored. Names are matched exactly and so
// cannot contain ',', '*', '^' or spaces.
//
// The error wraps ErrBadTerm and names the offending term.
func ParseTerms(spec string, names []string) ([]Term, error) {
	if len(names) == 0 {
		panic("surface: need at least one parameter name")
	}
	index := make(map[string]int, len(names))
	for j, nm := range names {
		index[nm] = j
	}
	seen := make(map[string]int)
	var ts []Term
	for i, raw := range strings.Split(spec, ",") {
		src := strings.TrimSpace(raw)
		t, err := parseTerm(src, names, index)
		if err != nil {
			return nil, fmt.Errorf("%w: term %d %q: %v", ErrBadTerm, i+1, src, err)
		}
		if prev, dup := seen[t.key()]; dup {
			return nil, fmt.Errorf("%w: term %d %q repeats term %d (%s)", ErrBadTerm, i+1, src, prev+1, t.Name(names))
		}
		seen[t.key()] = i
		ts = append(ts, t)
	}
	return ts, nil
}

func parseTerm(src string, names []string, index map[string]int) (Term, error) {
	t := Term{Pow: make([]int, len(names))}
	if src == "" {
		return t, fmt.Errorf("empty term")
	}
	if src == "1" {
		return t, nil
	}
	for _, f := range strings.Split(src, "*") {
		f = strings.TrimSpace(f)
		name, pow := f, 1
		if i := strings.IndexByte(f, '^'); i >= 0 {
			name = strings.TrimSpace(f[:i])
			ps := strings.TrimSpace(f[i+1:])
			p, err := strconv.Atoi(ps)
			if err != nil || p < 1 || p > MaxPower {
				return t, fmt.Errorf("power %q of %q: want an integer from 1 to %d", ps, name, MaxPower)
			}
			pow = p
		}
		if name == "" {
			return t, fmt.Errorf("missing parameter name (write \"1\" for the intercept, \"a*b\" for a product)")
		}
		j, ok := index[name]
		if !ok {
			return t, fmt.Errorf("unknown parameter %q (known: %s)", name, strings.Join(names, ", "))
		}
		t.Pow[j] += pow
		if t.Pow[j] > MaxPower {
			return t, fmt.Errorf("power of %q exceeds %d", name, MaxPower)
		}
	}
	return t, nil
}

// hierarchical reports whether the term set contains the intercept and,
// with every term, each term obtained by lowering one of its powers by one.
// Such a set spans the same space after any shift of origin.
func hierarchical(ts []Term) bool {
	have := make(map[string]bool, len(ts))
	for _, t := range ts {
		have[t.key()] = true
	}
	for _, t := range ts {
		for j, p := range t.Pow {
			if p == 0 {
				continue
			}
			low := Term{Pow: append([]int(nil), t.Pow...)}
			low.Pow[j]--
			if !have[low.key()] {
				return false
			}
		}
	}
	return len(ts) > 0 && have[Term{Pow: make([]int, len(ts[0].Pow))}.key()]
}
