package results

import (
	"math"
	"strings"

	"github.com/sweep-cfd/sweep/internal/harvest"
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
}

// Ranking is a study's variants ordered by one quantity.
type Ranking struct {
	Quantity string `json:"quantity"`
	Better   string `json:"better"` // "lower" or "higher": which values rank first
	Rows     []Row  `json:"rows"`
	// Left out: variants without a usable average (never ran, failed,
	// no data), with the reason.
	Excluded []Excluded `json:"excluded,omitempty"`
}

// Excluded is a variant left out of a ranking.
type Excluded struct {
	Label  string `json:"label"`
	Reason string `json:"reason"`
}

// Rank orders the variants by the quantity's mean (ascending when lower
// is better), with compact-letter significance groups from Welch's test
// at 95 %. With a baseline label, each row also carries its difference
// from the baseline.
func Rank(vs []Variant, quantity string, lowerIsBetter bool, baseline string) Ranking {
	better := "higher"
	if lowerIsBetter {
		better = "lower"
	}
	rk := Ranking{Quantity: quantity, Better: better}
	var cands []harvest.Candidate
	byLabel := map[string]*Variant{}
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
		byLabel[v.Label] = v
		cands = append(cands, harvest.Candidate{Name: v.Label, Estimate: res.Estimate()})
	}
	ranked := harvest.Rank(cands, lowerIsBetter, Confidence)
	var base *harvest.Estimate
	if b, ok := byLabel[baseline]; ok {
		e := b.Results[quantity].Estimate()
		base = &e
	}
	for _, r := range ranked {
		v := byLabel[r.Name]
		res := v.Results[quantity]
		row := Row{Rank: r.Rank, ID: v.ID, Label: v.Label, Name: v.Name, Params: v.Params, Mean: res.Mean,
			HalfWidth: res.HalfWidth, StdError: res.StdError, Verdict: string(res.Verdict),
			Group: strings.Join(r.Groups, ""), TiedWithBest: r.TiedWithBest}
		if base != nil {
			d := harvest.Compare(*base, res.Estimate(), Confidence)
			pct := 100 * harvest.RelativeChange(base.Mean, res.Mean)
			row.Delta, row.DeltaHalfWidth, row.ChangePercent, row.Significant = &d.Delta, &d.HalfWidth, &pct, &d.Significant
		}
		rk.Rows = append(rk.Rows, row)
	}
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
