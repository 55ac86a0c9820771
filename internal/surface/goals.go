package surface

import (
	"errors"
	"fmt"
	"math"

	"github.com/sweep-cfd/sweep/internal/tradeoff"
)

// Target says what proposals from several kriging models should improve:
// the first Objectives models are objectives, the rest quantities kept
// within limits.
//
// With one objective the score is the expected improvement times the
// probability that every limited quantity keeps its limits (Schonlau,
// Welch and Jones 1998, "Global versus local search in constrained
// optimization of computer models"), the improvement counted over the
// best run whose model means keep the limits; while no run does, the
// probability of feasibility alone. With two or more objectives it is
// the expected hypervolume improvement over the front of the runs' model
// means (Emmerich, Giannakoglou and Naujoks 2006; see tradeoff.EHVI) times
// the same probability.
type Target struct {
	Objectives int
	// Maximize says, per objective, that larger values are better.
	Maximize []bool
	// Limits holds [lo, hi] for each model after the objectives.
	Limits [][2]float64
	// Ref is the hypervolume's reference point, in the objectives'
	// natural values, needed with two or more objectives: a front point
	// counts only where it is better than Ref in every objective.
	Ref []float64
	// Draws is the number of Monte Carlo draws of the hypervolume
	// improvement; zero means 256.
	Draws int
}

// ProposeFor suggests opts.K new runs for the target over the models'
// bounds, searched and batched as Propose does (the kriging believer:
// every model takes its own mean at each chosen point). The models must
// share their bounds; opts.Criterion, Maximize and Strategy are ignored.
func ProposeFor(ms []*Kriging, t Target, opts InfillOptions) ([]Proposal, error) {
	if t.Objectives < 1 || t.Objectives+len(t.Limits) != len(ms) || len(t.Maximize) != t.Objectives {
		return nil, fmt.Errorf("surface: a target of %d objectives and %d limits needs as many models (got %d) and a direction per objective", t.Objectives, len(t.Limits), len(ms))
	}
	if t.Objectives > 1 && len(t.Ref) != t.Objectives {
		return nil, errors.New("surface: a target of several objectives needs a reference point")
	}
	for _, m := range ms[1:] {
		if !sameBounds(m.Bounds(), ms[0].Bounds()) {
			return nil, errors.New("surface: the models of a target must share their bounds")
		}
	}
	sign := make([]float64, t.Objectives)
	for j := range sign {
		sign[j] = 1
		if t.Maximize[j] {
			sign[j] = -1
		}
	}
	var g goal
	if t.Objectives == 1 {
		g = &eiFeasible{t: t, sign: sign[0]}
	} else {
		draws := t.Draws
		if draws <= 0 {
			draws = 256
		}
		ref := make([]float64, len(t.Ref))
		for j := range ref {
			ref[j] = sign[j] * t.Ref[j]
		}
		g = &ehviFeasible{t: t, sign: sign, ref: ref, draws: draws, seed: opts.Seed + 11}
	}
	own := func(cur []*Kriging, x []float64) []float64 {
		ys := make([]float64, len(cur))
		for i, m := range cur {
			ys[i] = m.Mean(x)
		}
		return ys
	}
	return search(ms, g, own, opts)
}

func sameBounds(a, b Bounds) bool {
	if len(a.Lo) != len(b.Lo) {
		return false
	}
	for j := range a.Lo {
		if a.Lo[j] != b.Lo[j] || a.Hi[j] != b.Hi[j] {
			return false
		}
	}
	return true
}

// feasibility returns the probability that the limited models keep their
// limits at a prediction (mu, sd over all models), taken as independent.
func (t Target) feasibility(mu, sd []float64) float64 {
	p := 1.0
	for i, l := range t.Limits {
		k := t.Objectives + i
		p *= tradeoff.Feasibility(mu[k], sd[k], l[0], l[1])
	}
	return p
}

// keeps reports whether the limited models' means at x keep the limits.
func (t Target) keeps(ms []*Kriging, x []float64) bool {
	for i, l := range t.Limits {
		v := ms[t.Objectives+i].Mean(x)
		if !(v >= l[0] && v <= l[1]) {
			return false
		}
	}
	return true
}

// eiFeasible is the expected improvement times the probability of
// feasibility.
type eiFeasible struct {
	t    Target
	sign float64
	fmin float64 // NaN while no run keeps the limits
}

func (g *eiFeasible) prepare(ms []*Kriging) {
	g.fmin = math.NaN()
	for _, x := range ms[0].Inputs() {
		if g.t.keeps(ms, x) {
			if v := g.sign * ms[0].Mean(x); !(v >= g.fmin) {
				g.fmin = v
			}
		}
	}
}

func (g *eiFeasible) score(mu, sd []float64) float64 {
	pf := g.t.feasibility(mu, sd)
	if math.IsNaN(g.fmin) {
		return pf
	}
	return ExpectedImprovement(g.fmin, g.sign*mu[0], sd[0]) * pf
}

// ehviFeasible is the expected hypervolume improvement times the
// probability of feasibility.
type ehviFeasible struct {
	t     Target
	sign  []float64
	ref   []float64
	draws int
	seed  uint64
	e     *tradeoff.EHVI
	y     []float64
}

func (g *ehviFeasible) prepare(ms []*Kriging) {
	var pts [][]float64
	for _, x := range ms[0].Inputs() {
		if !g.t.keeps(ms, x) {
			continue
		}
		y := make([]float64, g.t.Objectives)
		for j := range y {
			y[j] = g.sign[j] * ms[j].Mean(x)
		}
		pts = append(pts, y)
	}
	var front [][]float64
	for _, i := range tradeoff.Front(pts) {
		front = append(front, pts[i])
	}
	// The same draws for every point of the batch: scores stay
	// comparable and repeatable.
	g.e = tradeoff.NewEHVI(front, g.ref, g.draws, g.seed)
	g.y = make([]float64, g.t.Objectives)
}

func (g *ehviFeasible) score(mu, sd []float64) float64 {
	for j := range g.y {
		g.y[j] = g.sign[j] * mu[j]
	}
	return g.e.At(g.y, sd[:g.t.Objectives]) * g.t.feasibility(mu, sd)
}
