package results

import (
	"math"
	"slices"
	"strings"
	"testing"

	"github.com/sweep-cfd/sweep/internal/harvest"
)

// variant returns a variant whose quantities have the given means and
// standard errors (a converged average with many degrees of freedom).
func variant(label string, vals map[string][2]float64) Variant {
	v := Variant{Label: label, Params: map[string]any{}, Results: map[string]harvest.Result{}}
	for q, ms := range vals {
		v.Results[q] = harvest.Result{Mean: ms[0], StdError: ms[1], HalfWidth: 1.96 * ms[1], Dof: 1000, Verdict: harvest.Converged}
	}
	return v
}

// Ensure that limits split a ranking into the variants within them,
// ranked and grouped among themselves first, and those outside, each row
// with its chance of keeping the limit: a mean one standard error inside
// an upper limit keeps it with the normal probability Φ(1) = 0.8413
// (standard normal table).
func TestRankWithLimits(t *testing.T) {
	vs := []Variant{
		variant("v001", map[string][2]float64{"drag": {1.00, 0.001}, "lift": {0.40, 0.01}}),
		variant("v002", map[string][2]float64{"drag": {1.10, 0.001}, "lift": {0.29, 0.01}}),
		variant("v003", map[string][2]float64{"drag": {1.20, 0.001}, "lift": {0.10, 0.01}}),
		variant("v004", map[string][2]float64{"drag": {0.90, 0.001}}),
	}
	lim := Limit{Quantity: "lift", Lo: math.Inf(-1), Hi: 0.3, Text: "lift ≤ 0.3"}
	rk := Rank(vs, "drag", true, "", lim)
	var order []string
	for _, r := range rk.Rows {
		order = append(order, r.Label)
	}
	if !slices.Equal(order, []string{"v002", "v003", "v001"}) {
		t.Fatalf("order %v, want the two within the limit first", order)
	}
	if r := rk.Rows[0]; !*r.WithinLimits || math.Abs(*r.Feasible-0.8413) > 1e-3 || !strings.Contains(r.LimitNote, "only narrowly") || r.Group != "a" {
		t.Errorf("v002: %+v (chance %.4f)", r, *r.Feasible)
	}
	if r := rk.Rows[2]; *r.WithinLimits || *r.Feasible > 1e-6 || !strings.Contains(r.LimitNote, "breaks lift ≤ 0.3") || r.Group != "" || r.Rank != 3 {
		t.Errorf("v001: %+v", r)
	}
	if len(rk.Excluded) != 1 || rk.Excluded[0].Label != "v004" || !strings.Contains(rk.Excluded[0].Reason, "cannot be checked") {
		t.Errorf("excluded %+v", rk.Excluded)
	}
}

// Ensure that a trade-off of drag (lower is better) against downforce
// (higher is better) finds the front of means as worked by hand, says
// which front variants the averages cannot tell apart, and gives the
// chances: v001, v002 and v003 trade one against the other, v004 is
// beaten by v002 in both, v005 is better than v002 in both but breaks the
// lift limit, and v006 trades with v003 by less than their uncertainty.
// Only v003 and v006 can dominate each other, so with independent normal
// averages P(v006 dominates v003) = Φ(−0.0005/σ) Φ(0.0003/σ) = 0.3618 ×
// 0.5840 = 0.2113, σ = 0.001·√2 (standard normal table), and v003 is on
// the front with chance 0.7887; likewise v006 with 1 − 0.6382 × 0.4160 =
// 0.7345.
func TestTradeoff(t *testing.T) {
	vs := []Variant{
		variant("v001", map[string][2]float64{"drag": {1.0, 0.001}, "down": {1.0, 0.001}, "lift": {0, 0.01}}),
		variant("v002", map[string][2]float64{"drag": {1.2, 0.001}, "down": {2.0, 0.001}, "lift": {0, 0.01}}),
		variant("v003", map[string][2]float64{"drag": {1.5, 0.001}, "down": {2.5, 0.001}, "lift": {0, 0.01}}),
		variant("v004", map[string][2]float64{"drag": {1.3, 0.001}, "down": {1.9, 0.001}, "lift": {0, 0.01}}),
		variant("v005", map[string][2]float64{"drag": {1.1, 0.001}, "down": {2.1, 0.001}, "lift": {0.5, 0.01}}),
		variant("v006", map[string][2]float64{"drag": {1.5005, 0.001}, "down": {2.5003, 0.001}, "lift": {0, 0.01}}),
	}
	objs := []Objective{{Quantity: "drag", LowerIsBetter: true}, {Quantity: "down"}}
	lim := []Limit{{Quantity: "lift", Lo: -0.2, Hi: 0.2, Text: "-0.2 ≤ lift ≤ 0.2"}}
	tr := Tradeoff(vs, objs, lim, 1)
	if got := tr.FrontLabels(); !slices.Equal(got, []string{"v001", "v002", "v003", "v006"}) {
		t.Fatalf("front %v", got)
	}
	rows := map[string]TradeRow{}
	for _, r := range tr.Rows {
		rows[r.Label] = r
	}
	for _, l := range []string{"v001", "v002"} {
		if r := rows[l]; r.Status != OnFront || r.ChanceFront < 0.99 {
			t.Errorf("%s: %+v", l, r)
		}
	}
	se := math.Sqrt(0.79 * 0.21 / float64(tr.Draws))
	if r := rows["v003"]; r.Status != Undecided || !slices.Equal(r.Alike, []string{"v006"}) || math.Abs(r.ChanceFront-0.7887) > 4*se {
		t.Errorf("v003: %+v", r)
	}
	if r := rows["v006"]; r.Layer != 1 || r.Status != Undecided || !slices.Equal(r.Alike, []string{"v003"}) || math.Abs(r.ChanceFront-0.7345) > 4*se {
		t.Errorf("v006: %+v", r)
	}
	if r := rows["v004"]; r.Status != Dominated || !slices.Equal(r.DominatedBy, []string{"v002"}) || r.Layer != 2 {
		t.Errorf("v004: %+v", r)
	}
	if r := rows["v005"]; r.Status != Outside || r.Layer != 0 || r.ChanceFront != 0 {
		t.Errorf("v005: %+v", r)
	}
	if tr.Objectives[1].Better != "higher" || tr.Rows[0].Label != "v001" {
		t.Errorf("objectives %+v, first row %s", tr.Objectives, tr.Rows[0].Label)
	}
}
