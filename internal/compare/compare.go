// File: Welch's unequal-variance t test with the Welch–Satterthwaite degrees of
// freedom (Welch 1947; Satterthwaite 1946), and a ranking's compact letter
// display of the groups it cannot tell apart (Piepho 2004, "An
// algorithm for a letter-based representation of all-pairwise
// comparisons", J. Comput. Graph. Stat. 13(2)).

package compare

import (
	"math"
	"sort"
	"strings"

	"github.com/sweep-cfd/sweep/internal/estimate"
	"gonum.org/v1/gonum/stat/distuv"
)

// RelativeChange returns (x − base)/|base|: −0.043 means a 4.3 %
// reduction. It returns NaN if base is zero.
func RelativeChange(base, x float64) float64 {
	if base == 0 {
		return math.NaN()
	}
	return (x - base) / math.Abs(base)
}

// Estimate is a mean with its standard error and the degrees of freedom of
// that error (+Inf for a normal error).
type Estimate struct {
	Mean     float64 `json:"mean"`
	StdError float64 `json:"std_error"`
	Dof      float64 `json:"dof"`
}

// Difference compares two estimates a and b.
type Difference struct {
	Delta     float64 `json:"delta"`      // b − a
	Relative  float64 `json:"relative"`   // (b − a)/|a|, 0 if a is zero
	StdError  float64 `json:"std_error"`  // √(se_a² + se_b²)
	Dof       float64 `json:"dof"`        // Welch–Satterthwaite; 0 means normal (infinite)
	HalfWidth float64 `json:"half_width"` // of the interval of Delta
	T         float64 `json:"t"`          // Delta/StdError
	P         float64 `json:"p"`          // two-sided p-value
	// Significant: the interval of Delta excludes zero, i.e. Welch's test
	// tells a and b apart at the confidence level.
	Significant bool `json:"significant"`
}

// Compare returns b − a with its confidence interval, by Welch's unequal
// variance t test with the Welch–Satterthwaite degrees of freedom
//
//	ν = (s_a² + s_b²)² / (s_a⁴/ν_a + s_b⁴/ν_b),
//
// where s is a standard error and ν_a, ν_b are the degrees of freedom of
// the two standard errors. For a harvested average these are the degrees
// of freedom of its own interval (Result.Estimate: batches − 1 for batch
// means), not N_eff − 1: a standard error estimated from 20 batches is
// only as certain as 19 degrees of freedom allow, however many effective
// samples the mean holds. conf is the two-sided confidence level, e.g.
// 0.95. If both errors are zero, any nonzero difference is significant.
//
// References: B. L. Welch, "The generalization of 'Student's' problem when
// several different population variances are involved", Biometrika 34
// (1947) 28–35; F. E. Satterthwaite, Biometrics Bulletin 2 (1946) 110–114.
//
// It panics if conf is not in (0, 1) or an error or dof is negative or NaN.
func Compare(a, b Estimate, conf float64) Difference {
	if !(conf > 0 && conf < 1) {
		panic("harvest: confidence must lie in (0, 1)")
	}
	for _, e := range []Estimate{a, b} {
		if !(e.StdError >= 0) || !(e.Dof > 0) {
			panic("harvest: estimate needs a non-negative standard error and positive dof")
		}
	}
	va, vb := a.StdError*a.StdError, b.StdError*b.StdError
	d := Difference{Delta: b.Mean - a.Mean, StdError: math.Sqrt(va + vb)}
	if a.Mean != 0 {
		d.Relative = d.Delta / math.Abs(a.Mean)
	}
	den := 0.0
	if !math.IsInf(a.Dof, 1) {
		den += va * va / a.Dof
	}
	if !math.IsInf(b.Dof, 1) {
		den += vb * vb / b.Dof
	}
	nu := math.Inf(1)
	if den > 0 {
		nu = (va + vb) * (va + vb) / den
	}
	if d.StdError == 0 {
		d.Significant = d.Delta != 0
		if d.Significant {
			d.T = math.Copysign(math.MaxFloat64, d.Delta)
			d.P = 0
		} else {
			d.P = 1
		}
	} else {
		q := estimate.TQuantile(conf, nu)
		d.T = d.Delta / d.StdError
		d.HalfWidth = q * d.StdError
		d.Significant = math.Abs(d.T) > q
		if math.IsInf(nu, 1) || nu > 1e7 {
			d.P = 2 * distuv.UnitNormal.Survival(math.Abs(d.T))
		} else {
			d.P = 2 * distuv.StudentsT{Mu: 0, Sigma: 1, Nu: nu}.Survival(math.Abs(d.T))
		}
	}
	if !math.IsInf(nu, 1) {
		d.Dof = nu
	}
	return d
}

// Distinguishable reports whether Welch's test tells a and b apart at
// confidence conf (see Compare). It decides from the t distribution's tail
// rather than its quantile, which is cheaper when ranking many variants.
func Distinguishable(a, b Estimate, conf float64) bool {
	if !(conf > 0 && conf < 1) {
		panic("harvest: confidence must lie in (0, 1)")
	}
	va, vb := a.StdError*a.StdError, b.StdError*b.StdError
	if !(va >= 0 && vb >= 0) || !(a.Dof > 0 && b.Dof > 0) {
		panic("harvest: estimate needs a non-negative standard error and positive dof")
	}
	d := math.Abs(b.Mean - a.Mean)
	if va+vb == 0 {
		return d != 0
	}
	t := d / math.Sqrt(va+vb)
	if t <= distuv.UnitNormal.Quantile(0.5+conf/2) {
		return false // every t quantile is at least the normal one
	}
	den := 0.0
	if !math.IsInf(a.Dof, 1) {
		den += va * va / a.Dof
	}
	if !math.IsInf(b.Dof, 1) {
		den += vb * vb / b.Dof
	}
	if den == 0 {
		return true
	}
	nu := (va + vb) * (va + vb) / den
	return 2*distuv.StudentsT{Mu: 0, Sigma: 1, Nu: nu}.Survival(t) < 1-conf
}

// Candidate is a named estimate to rank.
type Candidate struct {
	Name string
	Estimate
}

// Ranked is one line of a ranking.
type Ranked struct {
	Name     string  `json:"name"`
	Rank     int     `json:"rank"` // 1 is the best
	Mean     float64 `json:"mean"`
	StdError float64 `json:"std_error"`
	// Groups holds the letters of the groups the variant belongs to, e.g.
	// "ab". Variants that share a letter are not distinguishable.
	Groups []string `json:"groups"`
	// TiedWithBest: not distinguishable from the rank-1 variant.
	TiedWithBest bool `json:"tied_with_best"`
}

// Label returns the group letters as one string, e.g. "ab" (letters
// beyond z are two characters long and are joined with commas).
func (r Ranked) Label() string {
	for _, g := range r.Groups {
		if len(g) > 1 {
			return strings.Join(r.Groups, ",")
		}
	}
	return strings.Join(r.Groups, "")
}

// Rank sorts candidates best first (smallest mean if lowerIsBetter, else
// largest; ties by name) and labels them with a compact letter display:
// two variants share a letter if and only if Welch's test (see Compare) at
// confidence conf does not tell them apart. Each letter is a maximal set of
// mutually indistinguishable variants; letters are ordered by their best
// member, so "a" always holds the best variant.
//
// The letters come from Piepho's insert-absorb algorithm: start with one
// group holding everyone; for each significantly different pair (i, j),
// split every group containing both into a copy without i and a copy
// without j; drop any group contained in another. The tests are made pair
// by pair at the given confidence with no multiplicity adjustment, as is
// usual for letter displays: among many variants a few spurious
// separations are expected.
//
// Reference: H.-P. Piepho, "An algorithm for a letter-based representation
// of all-pairwise comparisons", J. Comput. Graph. Stat. 13(2) (2004)
// 456–466.
func Rank(cands []Candidate, lowerIsBetter bool, conf float64) []Ranked {
	n := len(cands)
	idx := make([]int, n)
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(i, j int) bool {
		a, b := cands[idx[i]], cands[idx[j]]
		if a.Mean != b.Mean {
			return (a.Mean < b.Mean) == lowerIsBetter
		}
		return a.Name < b.Name
	})
	words := (n + 63) / 64
	all := make(bitset, words)
	for i := 0; i < n; i++ {
		all.set(i)
	}
	groups := []bitset{all}
	for i := 0; i < n; i++ {
		for j := i + 1; j < n; j++ {
			if !Distinguishable(cands[idx[i]].Estimate, cands[idx[j]].Estimate, conf) {
				continue
			}
			var next, fresh []bitset
			for _, g := range groups {
				if g.has(i) && g.has(j) {
					gi, gj := g.clone(), g.clone()
					gi.clear(j)
					gj.clear(i)
					fresh = append(fresh, gi, gj)
				} else {
					next = append(next, g)
				}
			}
			if fresh == nil {
				continue
			}
			groups = absorb(next, fresh)
		}
	}
	sort.Slice(groups, func(a, b int) bool { return groups[a].less(groups[b]) })
	out := make([]Ranked, n)
	for r, k := range idx {
		out[r] = Ranked{Name: cands[k].Name, Rank: r + 1, Mean: cands[k].Mean, StdError: cands[k].StdError}
		for gi, g := range groups {
			if g.has(r) {
				out[r].Groups = append(out[r].Groups, letter(gi))
				if g.has(0) {
					out[r].TiedWithBest = true
				}
			}
		}
	}
	return out
}

// absorb returns old ∪ fresh without any set contained in another. The
// sets in old are already maximal among themselves.
func absorb(old, fresh []bitset) []bitset {
	var keep []bitset
	for i, f := range fresh {
		dominated := false
		for _, g := range old {
			if f.subsetOf(g) {
				dominated = true
				break
			}
		}
		for j, g := range fresh {
			if dominated {
				break
			}
			if j != i && f.subsetOf(g) && (!g.subsetOf(f) || j < i) {
				dominated = true
			}
		}
		if !dominated {
			keep = append(keep, f)
		}
	}
	return append(old, keep...)
}

// letter returns a, b, ..., z, aa, ab, ...
func letter(i int) string {
	s := ""
	for {
		s = string(rune('a'+i%26)) + s
		i = i/26 - 1
		if i < 0 {
			return s
		}
	}
}

type bitset []uint64

func (b bitset) has(i int) bool { return b[i/64]&(1<<(i%64)) != 0 }
func (b bitset) set(i int)      { b[i/64] |= 1 << (i % 64) }
func (b bitset) clear(i int)    { b[i/64] &^= 1 << (i % 64) }
func (b bitset) clone() bitset  { return append(bitset(nil), b...) }

func (b bitset) subsetOf(c bitset) bool {
	for i := range b {
		if b[i]&^c[i] != 0 {
			return false
		}
	}
	return true
}

// less orders sets by their members in rank order: the set whose best
// member ranks higher comes first.
func (b bitset) less(c bitset) bool {
	for i := range b {
		if b[i] != c[i] {
			x := b[i] ^ c[i]
			low := x & -x
			return b[i]&low != 0
		}
	}
	return false
}
