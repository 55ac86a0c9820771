package results

import (
	"fmt"
	"math"
	"slices"
	"sort"

	"github.com/sweep-cfd/sweep/internal/recipe"
	"github.com/sweep-cfd/sweep/internal/tradeoff"
)

// LimitsOf returns the recipe's limits on quantities (at_most, at_least).
func LimitsOf(r *recipe.Recipe) []Limit {
	var out []Limit
	for i := range r.Quantities {
		q := &r.Quantities[i]
		if q.Limited() {
			lo, hi := q.Limits()
			out = append(out, Limit{Quantity: q.Name, Lo: lo, Hi: hi, Text: q.LimitText()})
		}
	}
	return out
}

// Objective is one quantity of a trade-off and which way is better.
type Objective struct {
	Quantity      string `json:"quantity"`
	LowerIsBetter bool   `json:"-"`
	Better        string `json:"better"`
}

// Value is a variant's average of one quantity.
type Value struct {
	Mean      float64 `json:"mean"`
	HalfWidth float64 `json:"half_width"`
	StdError  float64 `json:"std_error"`
	Verdict   string  `json:"verdict"`
}

// Status words of a trade-off row.
const (
	OnFront   = "front"     // on the front at 95 %
	Dominated = "dominated" // off it at 95 %
	Undecided = "undecided" // the averages cannot tell
	Outside   = "outside"   // outside the limits at 95 %
	MayBreak  = "may_break" // the limits may or may not hold; off the front otherwise
)

// TradeRow is one variant of a trade-off. Scripts read the JSON names.
type TradeRow struct {
	ID     string           `json:"id"`
	Label  string           `json:"label"`
	Name   string           `json:"name,omitempty"`
	Params map[string]any   `json:"params"`
	Values map[string]Value `json:"values"`
	// Layer is the variant's layer of non-dominated sorting among the
	// variants whose means keep the limits (1: the front of the means), 0
	// for one whose means break a limit.
	Layer int `json:"layer"`
	// ChanceFront is the probability that the variant is on the front
	// of the feasible variants, and ChanceFeasible that it keeps the
	// limits, given every average's uncertainty (Monte Carlo).
	ChanceFront    float64 `json:"p_front"`
	ChanceFeasible float64 `json:"p_feasible"`
	// Status is front, off_front, undecided or outside (see StatusText).
	Status string `json:"status"`
	// DominatedBy lists the variants whose means dominate this one's.
	DominatedBy []string `json:"dominated_by,omitempty"`
	// Alike lists, for a variant of the front of means, the other front
	// variants it cannot be told apart from: every objective's
	// difference within its 95 % interval.
	Alike []string `json:"alike,omitempty"`
}

// Trade is a study's variants judged on several objectives at once.
type Trade struct {
	Objectives []Objective `json:"objectives"`
	Limits     []string    `json:"limits,omitempty"`
	// Rows lists the front of means first, then by layer, each layer by
	// its first objective.
	Rows     []TradeRow `json:"rows"`
	Excluded []Excluded `json:"excluded,omitempty"`
	// Draws is the number of Monte Carlo draws behind the chances; the
	// standard error of a chance p is √(p(1 − p)/Draws).
	Draws int `json:"draws"`
}

// tradeDraws is the number of Monte Carlo draws of the chances: a chance
// near 0.5 comes with a standard error of 0.007.
const tradeDraws = 5000

// Tradeoff judges the variants on several objectives within the limits:
// the front of their means (the variants no other feasible one beats in
// every objective), each variant's chance of being on the front and of
// keeping the limits given its averages' uncertainty, and which front
// variants are indistinguishable. A variant without an honest interval in
// one of the quantities is left out.
func Tradeoff(vs []Variant, objs []Objective, limits []Limit, seed uint64) Trade {
	t := Trade{Objectives: objs, Draws: tradeDraws}
	for i := range t.Objectives {
		t.Objectives[i].Better = recipe.BetterWord(objs[i].LowerIsBetter)
	}
	for _, l := range limits {
		t.Limits = append(t.Limits, l.Text)
	}
	// Columns: the objectives (negated where higher is better), then the
	// limited quantities as they are.
	var cols []string
	for _, o := range objs {
		cols = append(cols, o.Quantity)
	}
	prob := tradeoff.Problem{}
	for j := range objs {
		prob.Objectives = append(prob.Objectives, j)
	}
	for _, l := range limits {
		prob.Limits = append(prob.Limits, tradeoff.Limit{Col: len(cols), Lo: l.Lo, Hi: l.Hi})
		cols = append(cols, l.Quantity)
	}
	var mean, sd [][]float64
	var kept []*Variant
	for i := range vs {
		v := &vs[i]
		m, s := make([]float64, len(cols)), make([]float64, len(cols))
		missing := ""
		for j, q := range cols {
			res, ok := v.Results[q]
			if !ok || !HasInterval(res) {
				missing = q + ": not harvested (" + string(v.State) + ")"
				if ok {
					missing = q + ": " + string(res.Verdict)
					if res.Message != "" {
						missing += ": " + res.Message
					}
				}
				break
			}
			e := res.Estimate()
			m[j], s[j] = e.Mean, e.StdError
			if j < len(objs) && !objs[j].LowerIsBetter {
				m[j] = -m[j]
			}
		}
		if missing != "" {
			t.Excluded = append(t.Excluded, Excluded{v.Label, missing})
			continue
		}
		mean, sd, kept = append(mean, m), append(sd, s), append(kept, v)
	}
	onFront, feasible := prob.Chances(mean, sd, tradeDraws, seed)
	// Layers of the means among the variants whose means keep the limits.
	var fidx []int
	var fobj [][]float64
	for i, m := range mean {
		if withinAll(prob, m) {
			fidx = append(fidx, i)
			fobj = append(fobj, m[:len(objs)])
		}
	}
	layer := make([]int, len(mean))
	for k, l := range tradeoff.Layers(fobj) {
		layer[fidx[k]] = l
	}
	for i, v := range kept {
		row := TradeRow{ID: v.ID, Label: v.Label, Name: v.Name, Params: v.Params, Values: map[string]Value{},
			Layer: layer[i], ChanceFront: onFront[i], ChanceFeasible: feasible[i]}
		for _, q := range cols {
			res := v.Results[q]
			row.Values[q] = Value{Mean: res.Mean, HalfWidth: res.HalfWidth, StdError: res.Estimate().StdError, Verdict: string(res.Verdict)}
		}
		for _, k := range fidx {
			if k != i && tradeoff.Dominates(mean[k][:len(objs)], mean[i][:len(objs)]) {
				row.DominatedBy = append(row.DominatedBy, kept[k].Label)
			}
		}
		if layer[i] == 1 {
			for _, k := range fidx {
				if k != i && layer[k] == 1 && alike(mean[i][:len(objs)], sd[i], mean[k][:len(objs)], sd[k]) {
					row.Alike = append(row.Alike, kept[k].Label)
				}
			}
		}
		row.Status = tradeStatus(row)
		t.Rows = append(t.Rows, row)
	}
	sort.SliceStable(t.Rows, func(a, b int) bool {
		ra, rb := t.Rows[a], t.Rows[b]
		la, lb := ra.Layer, rb.Layer
		if la == 0 {
			la = math.MaxInt
		}
		if lb == 0 {
			lb = math.MaxInt
		}
		if la != lb {
			return la < lb
		}
		q := objs[0]
		if q.LowerIsBetter {
			return ra.Values[q.Quantity].Mean < rb.Values[q.Quantity].Mean
		}
		return ra.Values[q.Quantity].Mean > rb.Values[q.Quantity].Mean
	})
	return t
}

// withinAll reports whether a point's means keep every limit.
func withinAll(p tradeoff.Problem, m []float64) bool {
	for _, l := range p.Limits {
		if !(m[l.Col] >= l.Lo && m[l.Col] <= l.Hi) {
			return false
		}
	}
	return true
}

// alike reports whether two points differ by no more than their combined
// 95 % uncertainty in every objective.
func alike(a, sa, b, sb []float64) bool {
	for j := range a {
		if math.Abs(a[j]-b[j]) > 1.959964*math.Hypot(sa[j], sb[j]) {
			return false
		}
	}
	return true
}

// tradeStatus classifies a row at 95 %: surely outside the limits,
// surely on the front, surely off it, or undecided.
func tradeStatus(r TradeRow) string {
	switch {
	case r.ChanceFeasible <= (1-Confidence)/2:
		return Outside
	case r.ChanceFront >= Confidence:
		return OnFront
	case r.ChanceFront <= 1-Confidence:
		return Dominated
	}
	return Undecided
}

// StatusText says a row's status in words.
func StatusText(r TradeRow) string {
	switch r.Status {
	case OnFront:
		return "on the front"
	case Dominated:
		return "off the front"
	case Outside:
		return "outside the limits"
	}
	return fmt.Sprintf("undecided (%.0f%% on the front)", 100*r.ChanceFront)
}

// FrontLabels returns the labels of the rows on the front of means.
func (t Trade) FrontLabels() []string {
	var out []string
	for _, r := range t.Rows {
		if r.Layer == 1 {
			out = append(out, r.Label)
		}
	}
	slices.Sort(out)
	return out
}
