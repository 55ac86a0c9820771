package surface

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"sort"
)

// Criterion selects what an infill point should improve.
type Criterion int

const (
	// CriterionEI maximises the expected improvement over the best run:
	// points likely to beat the current optimum (see ExpectedImprovement).
	CriterionEI Criterion = iota
	// CriterionVariance maximises the predictive variance: points where the
	// surface is least known, to improve its accuracy everywhere.
	CriterionVariance
)

// Strategy selects how a batch of several points is built.
type Strategy int

const (
	// KrigingBeliever adds each chosen point to the model as a
	// pseudo-run whose response is the model's own mean there, then picks
	// the next point. With the hyperparameters kept, this leaves the mean
	// unchanged and removes the variance around the chosen point.
	KrigingBeliever Strategy = iota
	// ConstantLiar adds each chosen point with the current best response
	// as its pseudo-response (the optimistic "CL-min" liar), which pushes
	// the next points away from it more strongly.
	ConstantLiar
)

// InfillOptions configure Propose. The zero value proposes one point by
// expected improvement for minimisation.
type InfillOptions struct {
	Criterion Criterion
	// Maximize turns the expected improvement towards larger responses.
	Maximize bool
	// K is the number of points to propose; zero means 1.
	K int
	// Strategy builds batches (K > 1); see KrigingBeliever and ConstantLiar.
	Strategy Strategy
	// Candidates is the size of the Latin hypercube screened for each
	// point; zero means max(1000, 300·k).
	Candidates int
	// MinDist is the smallest distance, in the unit cube, allowed between
	// a proposal and any run or earlier proposal. Zero means a tenth of
	// the runs' median nearest-neighbour spacing, or 0.01 if that is
	// smaller.
	MinDist float64
	// Feasible, if not nil, rejects points (natural units) that cannot be
	// run.
	Feasible func(x []float64) bool
	// Snap, if not nil, maps a point (natural units) to the nearest one
	// that can be run (discrete levels); every candidate is snapped before
	// it is scored, so a proposal never repeats a run or an earlier
	// proposal.
	Snap func(x []float64) []float64
	// Avoid lists points (natural units) that are planned but not among
	// the model's runs (pending, failed): proposals keep from them as
	// from the runs.
	Avoid [][]float64
	// Seed seeds the candidate designs.
	Seed uint64
}

// Proposal is a suggested new run.
type Proposal struct {
	// X is the point, in natural units.
	X []float64
	// Mean and SD are the fitted model's prediction at X (before any
	// pseudo-run of the batch was added); Means and SDs hold every
	// model's, for proposals from several (ProposeFor).
	Mean, SD   float64
	Means, SDs []float64
	// Score is the criterion's value at X when it was chosen (expected
	// improvement, or predictive variance, under the model updated with
	// the batch's earlier points).
	Score float64
}

// ExpectedImprovement returns the expected improvement below fmin of a
// normal prediction with mean mu and standard deviation sd (Jones, Schonlau
// & Welch 1998, "Efficient global optimization of expensive black-box
// functions", J. Global Optim. 13, eq. 15):
//
//	EI = (fmin − mu) Φ(z) + sd φ(z),   z = (fmin − mu)/sd,
//
// with Φ and φ the standard normal CDF and density; EI = max(fmin − mu, 0)
// when sd = 0. For maximisation, pass the negated values.
func ExpectedImprovement(fmin, mu, sd float64) float64 {
	d := fmin - mu
	if !(sd > 0) {
		return math.Max(d, 0)
	}
	z := d / sd
	cdf := 0.5 * math.Erfc(-z/math.Sqrt2)
	pdf := math.Exp(-0.5*z*z) / math.Sqrt(2*math.Pi)
	return d*cdf + sd*pdf
}

// Propose suggests opts.K new runs for the kriging model m.
//
// For each point it screens a fresh Latin hypercube of candidates in the
// unit cube, drops those closer than MinDist to a run or earlier proposal
// or rejected by Feasible, and refines the three best by Nelder-Mead
// (projected onto the cube, with rejected points scored worst). The
// expected improvement uses as f_min the smallest model mean at the runs
// (the plug-in value for noisy runs; it equals the smallest response when
// the model interpolates). A batch is built by the kriging believer or the
// constant liar (Ginsbourger, Le Riche & Carraro 2010, "Kriging is
// well-suited to parallelize optimization"): the model is refitted with
// the same hyperparameters after each point, the pseudo-run carrying a
// standard error of 1e-3 times the smallest given one (zero when the runs
// have none).
//
// It returns an error wrapping ErrNoFeasible when no candidate is allowed.
func Propose(m *Kriging, opts InfillOptions) ([]Proposal, error) {
	sign := 1.0
	if opts.Maximize {
		sign = -1
	}
	var g goal = &eiGoal{sign: sign}
	if opts.Criterion == CriterionVariance {
		g = varianceGoal{}
	}
	liar := func(ms []*Kriging, x []float64) []float64 { return []float64{ms[0].Mean(x)} }
	if opts.Strategy == ConstantLiar {
		liar = func(ms []*Kriging, _ []float64) []float64 { return []float64{sign * plugInMin(ms[0], sign)} }
	}
	return search([]*Kriging{m}, g, liar, opts)
}

// goal scores a candidate from the models' predictions there.
type goal interface {
	// prepare is called with the current models before each point of
	// a batch.
	prepare(ms []*Kriging)
	// score returns the candidate's value (larger is better) from each
	// model's mean and standard deviation.
	score(mu, sd []float64) float64
}

// eiGoal is the expected improvement of one model (sign −1 maximises).
type eiGoal struct {
	sign, fmin float64
}

func (g *eiGoal) prepare(ms []*Kriging) { g.fmin = plugInMin(ms[0], g.sign) }

func (g *eiGoal) score(mu, sd []float64) float64 {
	return ExpectedImprovement(g.fmin, g.sign*mu[0], sd[0])
}

// plugInMin returns the smallest signed model mean at the model's runs.
func plugInMin(m *Kriging, sign float64) float64 {
	fmin := math.Inf(1)
	for _, x := range m.Inputs() {
		fmin = math.Min(fmin, sign*m.Mean(x))
	}
	return fmin
}

type varianceGoal struct{}

func (varianceGoal) prepare([]*Kriging)            {}
func (varianceGoal) score(_, sd []float64) float64 { return sd[0] * sd[0] }

// search proposes opts.K points that maximise the goal over the models'
// common bounds (see Propose). After each point every model is refitted,
// with its hyperparameters kept, with the pseudo-responses believe gives
// there, one per model.
func search(ms []*Kriging, g goal, believe func(ms []*Kriging, x []float64) []float64, opts InfillOptions) ([]Proposal, error) {
	m := ms[0]
	k := m.gp.k
	b := m.Bounds()
	if opts.K <= 0 {
		opts.K = 1
	}
	if opts.Candidates <= 0 {
		opts.Candidates = max(1000, 300*k)
	}
	var runs [][]float64
	for _, mm := range ms {
		for _, u := range unitInputs(mm) {
			if nearest(u, runs) > 0 {
				runs = append(runs, u)
			}
		}
	}
	for _, x := range opts.Avoid {
		if u := b.toUnit(x); nearest(u, runs) > 0 {
			runs = append(runs, u)
		}
	}
	if opts.MinDist <= 0 {
		opts.MinDist = 0.1 * medianSpacing(runs)
		if !(opts.MinDist >= 0.01) || math.IsInf(opts.MinDist, 1) {
			opts.MinDist = 0.01
		}
	}
	rng := rand.New(rand.NewPCG(opts.Seed, 0x1f111))
	cur := slices.Clone(ms)
	taken := append([][]float64(nil), runs...)
	mu, sd := make([]float64, len(ms)), make([]float64, len(ms))
	var out []Proposal
	for len(out) < opts.K {
		g.prepare(cur)
		score := func(u []float64) float64 {
			x := b.fromUnit(u)
			for i, mm := range cur {
				mu[i], sd[i] = mm.Predict(x)
			}
			return g.score(mu, sd)
		}
		snap := func(u []float64) []float64 {
			if opts.Snap == nil {
				return u
			}
			return b.toUnit(opts.Snap(b.fromUnit(u)))
		}
		allowed := func(u []float64) bool {
			if nearest(u, taken) < opts.MinDist {
				return false
			}
			return opts.Feasible == nil || opts.Feasible(b.fromUnit(u))
		}
		type scored struct {
			u []float64
			s float64
		}
		var pool []scored
		for _, u := range latin(rng, opts.Candidates, k) {
			if u = snap(u); allowed(u) {
				pool = append(pool, scored{u, score(u)})
			}
		}
		if len(pool) == 0 {
			why := fmt.Sprintf("is at least %.3g (in the unit box) from every run and earlier proposal", opts.MinDist)
			if opts.Snap != nil {
				why = "differs from every run and earlier proposal once snapped to the parameters' levels"
			}
			if opts.Feasible != nil {
				why += " and satisfies the constraints"
			}
			return out, fmt.Errorf("%w: no candidate for point %d %s", ErrNoFeasible, len(out)+1, why)
		}
		sort.SliceStable(pool, func(i, j int) bool { return pool[i].s > pool[j].s })
		best := pool[0]
		scale := math.Max(best.s, 1e-300)
		f := func(v []float64) float64 {
			u := snap(clampUnit(v))
			var pen float64
			for j := range v {
				pen += (v[j] - u[j]) * (v[j] - u[j])
			}
			if !allowed(u) {
				return scale * (1 + pen)
			}
			s := score(u)
			if s > best.s {
				best = scored{u, s}
			}
			return -s + scale*pen
		}
		for i := 0; i < 3 && i < len(pool); i++ {
			localMin(f, pool[i].u, 0.02, scale)
		}
		x := b.fromUnit(best.u)
		p := Proposal{X: x, Score: best.s}
		p.Mean, p.SD = ms[0].Predict(x)
		for _, mm := range ms {
			mean, s := mm.Predict(x)
			p.Means, p.SDs = append(p.Means, mean), append(p.SDs, s)
		}
		out = append(out, p)
		taken = append(taken, best.u)
		if len(out) == opts.K {
			break
		}
		ys := believe(cur, x)
		for i, mm := range cur {
			next, err := mm.withRun(x, ys[i])
			if err != nil {
				return out, err
			}
			cur[i] = next
		}
	}
	return out, nil
}

// withRun refits the model with one more run, keeping its hyperparameters.
func (m *Kriging) withRun(x []float64, y float64) (*Kriging, error) {
	d := m.data
	d.X = append(append([][]float64(nil), d.X...), x)
	d.Y = append(append([]float64(nil), d.Y...), y)
	if d.SE != nil {
		small := math.Inf(1)
		for _, s := range d.SE {
			small = math.Min(small, s)
		}
		d.SE = append(append([]float64(nil), d.SE...), 1e-3*small)
	}
	h := m.Hyper
	return FitKriging(d, KrigingOptions{Kernel: m.Kernel, Trend: m.Trend, Nugget: m.nugget, Hyper: &h})
}
