package results

import (
	"fmt"
	"math"
	"strings"

	"github.com/sweep-cfd/sweep/internal/compare"
	"github.com/sweep-cfd/sweep/internal/harvest"
	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/tradeoff"
)

// Confidence is the level of every interval and test in rankings.
const Confidence = 0.95

// Row is one line of a ranking. Scripts read the JSON names.
type Row struct {
	Rank      int            `json:"rank"`
	ID        string         `json:"id"`
	Label     string         `json:"label"`
	Name      string         `json:"name,omitempty"`
	Params    map[string]any `json:"params"`
	Mean      float64        `json:"mean"`
	HalfWidth float64        `json:"half_width"`
	StdError  float64        `json:"std_error"`
	Verdict   string         `json:"verdict"`
	// Group holds the letters of the groups the variant belongs to:
	// variants sharing a letter are not distinguishable at 95 %.
	Group        string `json:"group"`
	TiedWithBest bool   `json:"tied_with_best"`
	// Baseline comparison, when a baseline is given: the difference from
	// the baseline's mean, its 95 % half-width, the change in percent of
	// the baseline's |mean|, and whether Welch's test tells them apart.
	Delta          *float64 `json:"delta,omitempty"`
	DeltaHalfWidth *float64 `json:"delta_half_width,omitempty"`
	ChangePercent  *float64 `json:"change_percent,omitempty"`
	Significant    *bool    `json:"significant,omitempty"`
	// Mesh uncertainty, when a grid-convergence study is given: the
	// discretisation half-width (GCI times |mean|) and whether the
	// difference from the best variant exceeds the two variants'
	// discretisation bands together.
	MeshHalfWidth *float64 `json:"mesh_half_width,omitempty"`
	BeyondMesh    *bool    `json:"beyond_mesh,omitempty"`
	// Limits, when the recipe limits quantities: whether the variant's
	// means keep every limit, the chance that their true values do (each
	// average normal with its standard error, independent), and the
	// limits it breaks or may break, in words.
	WithinLimits *bool    `json:"within_limits,omitempty"`
	Feasible     *float64 `json:"p_feasible,omitempty"`
	LimitNote    string   `json:"limit_note,omitempty"`
}

// Ranking is a study's variants ordered by one quantity.
type Ranking struct {
	Quantity string `json:"quantity"`
	Better   string `json:"better"` // "lower" or "higher": which values rank first
	// Baseline is the label of the variant every row is compared with
	// ("" for none).
	Baseline string `json:"baseline,omitempty"`
	Rows     []Row  `json:"rows"`
	// Limits are the recipe's limits on quantities, in words; the
	// variants within them rank first, those outside after them.
	Limits []string `json:"limits,omitempty"`
	// Left out: variants without a usable average (never ran, failed,
	// no data), with the reason.
	Excluded []Excluded `json:"excluded,omitempty"`
}

// Excluded is a variant left out of a ranking.
type Excluded struct {
	Label  string `json:"label"`
	Reason string `json:"reason"`
}

// Limit keeps a quantity within [Lo, Hi] (either may be infinite).
type Limit struct {
	Quantity string
	Lo, Hi   float64
	// Text says it in words ("lift ≤ 0.3").
	Text string
}

// LimitCheck is what a variant's averages say of the limits.
type LimitCheck struct {
	// Within is true when every mean keeps its limit.
	Within bool
	// Chance is the probability that every true value does (each mean
	// normal with its standard error; independent).
	Chance float64
	// Note names the limits broken, or kept too narrowly to be sure.
	Note string
	// Missing names a limited quantity without an honest interval, whose
	// limit cannot be checked ("" when all can).
	Missing string
}

// CheckLimits checks a variant's averages against the limits.
func CheckLimits(v *Variant, limits []Limit) LimitCheck {
	c := LimitCheck{Within: true, Chance: 1}
	var notes []string
	for _, l := range limits {
		res, ok := v.Results[l.Quantity]
		if !ok || !HasInterval(res) {
			why := "not harvested"
			if ok {
				why = string(res.Verdict)
			}
			c.Missing = fmt.Sprintf("%s (limit %s): %s, so the limit cannot be checked", l.Quantity, l.Text, why)
			return c
		}
		e := res.Estimate()
		p := tradeoff.Feasibility(e.Mean, e.StdError, l.Lo, l.Hi)
		c.Chance *= p
		switch {
		case e.Mean < l.Lo || e.Mean > l.Hi:
			c.Within = false
			notes = append(notes, fmt.Sprintf("breaks %s (%s = %.4g, chance within %.0f%%)", l.Text, l.Quantity, e.Mean, 100*p))
		case p < Confidence:
			notes = append(notes, fmt.Sprintf("keeps %s only narrowly (%s = %.4g, chance within %.0f%%)", l.Text, l.Quantity, e.Mean, 100*p))
		}
	}
	c.Note = strings.Join(notes, "; ")
	return c
}

// Rank orders the variants by the quantity's mean (ascending when lower
// is better), with compact-letter significance groups from Welch's test
// at 95 %. With a baseline label, each row also carries its difference
// from the baseline. With limits, the variants whose means keep them rank
// first (their groups compare only them), those that break one after,
// each row saying so with its chance of keeping them; a variant whose
// limited quantity has no interval is left out.
func Rank(vs []Variant, quantity string, lowerIsBetter bool, baseline string, limits ...Limit) Ranking {
	rk := Ranking{Quantity: quantity, Better: recipe.BetterWord(lowerIsBetter), Baseline: baseline}
	for _, l := range limits {
		rk.Limits = append(rk.Limits, l.Text)
	}
	var within, outside []compare.Candidate
	byLabel := map[string]*Variant{}
	checks := map[string]LimitCheck{}
	for i := range vs {
		v := &vs[i]
		res, ok := v.Results[quantity]
		switch {
		case !ok:
			rk.Excluded = append(rk.Excluded, Excluded{v.Label, "not harvested (" + string(v.State) + ")"})
			continue
		case !HasInterval(res):
			rk.Excluded = append(rk.Excluded, Excluded{v.Label, string(res.Verdict) + ": " + res.Message})
			continue
		}
		c := compare.Candidate{Name: v.Label, Estimate: res.Estimate()}
		byLabel[v.Label] = v
		if len(limits) == 0 {
			within = append(within, c)
			continue
		}
		lc := CheckLimits(v, limits)
		if lc.Missing != "" {
			rk.Excluded = append(rk.Excluded, Excluded{v.Label, lc.Missing})
			continue
		}
		checks[v.Label] = lc
		if lc.Within {
			within = append(within, c)
		} else {
			outside = append(outside, c)
		}
	}
	var base *compare.Estimate
	if b, ok := byLabel[baseline]; ok {
		e := b.Results[quantity].Estimate()
		base = &e
	}
	add := func(ranked []compare.Ranked, offset int, groups bool) {
		for _, r := range ranked {
			v := byLabel[r.Name]
			res := v.Results[quantity]
			row := Row{Rank: offset + r.Rank, ID: v.ID, Label: v.Label, Name: v.Name, Params: v.Params, Mean: res.Mean,
				HalfWidth: res.HalfWidth, StdError: res.StdError, Verdict: string(res.Verdict)}
			if groups {
				row.Group, row.TiedWithBest = strings.Join(r.Groups, ""), r.TiedWithBest
			}
			if base != nil {
				d := compare.Compare(*base, res.Estimate(), Confidence)
				pct := 100 * compare.RelativeChange(base.Mean, res.Mean)
				row.Delta, row.DeltaHalfWidth, row.ChangePercent, row.Significant = &d.Delta, &d.HalfWidth, &pct, &d.Significant
			}
			if lc, ok := checks[v.Label]; ok {
				w, p := lc.Within, lc.Chance
				row.WithinLimits, row.Feasible, row.LimitNote = &w, &p, lc.Note
			}
			rk.Rows = append(rk.Rows, row)
		}
	}
	add(compare.Rank(within, lowerIsBetter, Confidence), 0, true)
	add(compare.Rank(outside, lowerIsBetter, Confidence), len(within), false)
	return rk
}

// ApplyMesh adds the discretisation uncertainty of a grid-convergence
// study (gciRel, the fine-grid GCI as a fraction) to a ranking: each row
// gets GCI·|mean| as its mesh half-width, and rows after the first say
// whether their difference from the best exceeds both bands together.
func (rk *Ranking) ApplyMesh(gciRel float64) {
	if len(rk.Rows) == 0 {
		return
	}
	best := rk.Rows[0].Mean
	bestHW := gciRel * math.Abs(best)
	for i := range rk.Rows {
		hw := gciRel * math.Abs(rk.Rows[i].Mean)
		rk.Rows[i].MeshHalfWidth = &hw
		if i > 0 {
			beyond := math.Abs(rk.Rows[i].Mean-best) > hw+bestHW
			rk.Rows[i].BeyondMesh = &beyond
		}
	}
}

// HasInterval reports whether a result has a mean with an honest interval,
// so that it can be ranked and compared: converged, steady, or
// not_converged (a wide interval is still an honest one).
func HasInterval(r harvest.Result) bool {
	switch r.Verdict {
	case harvest.Converged, harvest.Steady, harvest.NotConverged:
		return !math.IsNaN(r.Mean) && !math.IsNaN(r.StdError)
	}
	return false
}
