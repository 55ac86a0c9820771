package surface

import (
	"fmt"
	"math"
	"math/rand/v2"
	"sort"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize"
	"gonum.org/v1/gonum/stat/distuv"
)

// Kernel selects the correlation function of a kriging model.
type Kernel int

const (
	// Matern52 is the Matérn correlation with smoothness 5/2,
	//
	//	r(ρ) = (1 + √5ρ + 5ρ²/3) exp(−√5ρ),   ρ² = Σ_j (u_j − u′_j)²/ℓ_j²,
	//
	// twice differentiable; the default (Rasmussen & Williams, "Gaussian
	// Processes for Machine Learning", 2006, eq. 4.17).
	Matern52 Kernel = iota
	// SquaredExponential is r = exp(−ρ²/2), infinitely smooth. Its
	// correlation matrices become ill-conditioned quickly; prefer Matern52
	// unless the response is known to be very smooth.
	SquaredExponential
)

func (k Kernel) String() string {
	switch k {
	case Matern52:
		return "Matérn 5/2"
	case SquaredExponential:
		return "squared exponential"
	}
	return fmt.Sprintf("Kernel(%d)", int(k))
}

// Trend selects the regression part of a kriging model.
type Trend int

const (
	// TrendConstant is an unknown constant mean (ordinary kriging).
	TrendConstant Trend = iota
	// TrendLinear is a mean linear in the parameters (universal kriging).
	TrendLinear
)

func (t Trend) String() string {
	switch t {
	case TrendConstant:
		return "constant trend"
	case TrendLinear:
		return "linear trend"
	}
	return fmt.Sprintf("Trend(%d)", int(t))
}

// NuggetMode says whether a homoscedastic noise variance is estimated.
type NuggetMode int

const (
	// NuggetEstimate estimates a homoscedastic nugget τ² by maximum
	// likelihood, added to the runs' own se_i² when those are given.
	NuggetEstimate NuggetMode = iota
	// NuggetNone fixes τ² = 0: without standard errors the surface then
	// interpolates the runs.
	NuggetNone
)

// Hyper holds the covariance hyperparameters of a kriging model.
type Hyper struct {
	// Sigma2 is the process variance σ², in response units squared.
	Sigma2 float64
	// Length holds the correlation length ℓ_j of each parameter, as a
	// fraction of its range (the inputs are mapped to the unit cube).
	Length []float64
	// Nugget is the estimated homoscedastic noise variance τ², in response
	// units squared; it adds to the runs' se_i².
	Nugget float64
}

// KrigingOptions configure FitKriging. The zero value is a Matérn 5/2
// kernel, a constant trend, an estimated nugget, 3 restarts and seed 0.
type KrigingOptions struct {
	Kernel Kernel
	Trend  Trend
	Nugget NuggetMode
	// Restarts is the number of local likelihood optimisations, started
	// from the best of 4·Restarts+1 screened points (a Latin hypercube in
	// log-hyperparameter space plus a default guess). Zero means 3.
	Restarts int
	// Seed seeds the screening design.
	Seed uint64
	// Hyper, when not nil, fixes the hyperparameters and skips the
	// likelihood optimisation (its Nugget is ignored under NuggetNone).
	Hyper *Hyper
}

// Kriging is a Gaussian-process (universal kriging) response surface:
//
//	y_i = f(u_i)ᵀβ + Z(u_i) + ε_i,
//	Cov(Z(u), Z(u′)) = σ² r(u, u′),   ε_i ~ N(0, se_i² + τ²),
//
// with u the run's point mapped to the unit cube, f the trend basis (1, or
// 1 and u_j − ½) and r the kernel with one length scale per parameter. Let
// K = σ²R + diag(se_i² + τ²). β is the generalised least-squares estimate
// β̂ = (FᵀK⁻¹F)⁻¹FᵀK⁻¹y, and the hyperparameters θ = (σ², ℓ, τ²) maximise the
// log-likelihood with β profiled out,
//
//	L(θ) = −½ (y − Fβ̂)ᵀK⁻¹(y − Fβ̂) − ½ log|K| − (n/2) log 2π,
//
// whose gradient is ∂L/∂θ = ½ tr((ααᵀ − K⁻¹) ∂K/∂θ), α = K⁻¹(y − Fβ̂)
// (Rasmussen & Williams 2006, eq. 5.9; β̂ drops out of the derivative because
// it is optimal). The search runs L-BFGS in log θ, mapped through a logistic
// function onto the box ℓ ∈ [0.005, 10], σ² ∈ [1e-6, 1e3]·var(y),
// τ² ∈ [1e-10, 1]·var(y), from the best of several screened starts; it stops
// when −L improves by less than 1e-4 over three iterations. If K is not
// safely positive definite (Cholesky fails, or the squared ratio of the
// largest to the smallest diagonal entry of its factor, a lower bound on its
// condition number, exceeds 1e13),
// a jitter of 1e-10·σ² growing tenfold up to 1e-5·σ² is added to its
// diagonal and recorded in Jitter.
//
// Predictions are of the noise-free mean response, with the universal
// kriging variance, which includes the uncertainty of the estimated trend:
//
//	m(x) = f(x)ᵀβ̂ + k(x)ᵀα,
//	s²(x) = σ² − kᵀK⁻¹k + (f − FᵀK⁻¹k)ᵀ(FᵀK⁻¹F)⁻¹(f − FᵀK⁻¹k),
//
// with k(x)_i = σ² r(x, u_i) (Cressie, "Statistics for Spatial Data", 1993,
// §3.4.5). The hyperparameters are treated as known: their uncertainty is
// not in s².
//
// Leave-one-out residuals use the closed form of Dubrule (1983), "Cross
// validation of kriging in a unique neighborhood", Math. Geol. 15, extended
// to the trend: with P = K⁻¹ − K⁻¹F(FᵀK⁻¹F)⁻¹FᵀK⁻¹, the residual of run i is
// e_i = (Py)_i / P_ii = α_i / P_ii and its predictive variance 1/P_ii. This
// equals refitting without run i with the trend re-estimated and the
// hyperparameters kept (they are not re-optimised).
type Kriging struct {
	// Hyper holds the fitted (or given) hyperparameters.
	Hyper Hyper
	// Kernel and Trend are the model's choices.
	Kernel Kernel
	Trend  Trend
	// Beta holds the trend coefficients: the constant, then (linear trend)
	// the coefficient of u_j − ½ for each parameter, u in the unit cube.
	Beta []float64
	// LogLik is the maximised log-likelihood L(θ).
	LogLik float64
	// Jitter is the variance added to K's diagonal for a stable
	// factorisation (zero when none was needed).
	Jitter float64
	// LOORMSE is the root-mean-square leave-one-out residual, in the
	// response's units; LOOPred and LOOSD hold the leave-one-out prediction
	// of each run and its predictive SD (noise included).
	LOORMSE        float64
	LOOPred, LOOSD []float64

	data   Data
	nugget NuggetMode
	gp     *gpData
	sig2   float64
	ell    []float64
	chol   mat.Cholesky
	alpha  []float64
	lf     *mat.Dense // L⁻¹F
	cholA  mat.Cholesky
}

// gpData is the fixed part of the likelihood: the runs in the unit cube,
// their responses, known noise variances, trend basis and pairwise squared
// coordinate differences.
type gpData struct {
	n, k, p int
	u       [][]float64
	y       []float64
	noise   []float64 // se_i², or zeros
	f       *mat.Dense
	d2      []float64 // pair (a<b) in row order, k differences each
	kern    Kernel
	estTau  bool
	vary    float64 // scale of the response variance (for bounds)
}

func trendBasis(t Trend, u []float64) []float64 {
	if t == TrendConstant {
		return []float64{1}
	}
	f := make([]float64, 1+len(u))
	f[0] = 1
	for j, v := range u {
		f[1+j] = v - 0.5
	}
	return f
}

// corr returns r(ρ) and c with ∂r/∂log ℓ_j = c·d_j²/ℓ_j², for the scaled
// squared distance q = ρ² = Σ d_j²/ℓ_j².
func corr(kern Kernel, q float64) (r, c float64) {
	if kern == SquaredExponential {
		r = math.Exp(-0.5 * q)
		return r, r
	}
	s := math.Sqrt(5 * q)
	e := math.Exp(-s)
	return (1 + s + s*s/3) * e, (5.0 / 3) * (1 + s) * e
}

// factor holds K's Cholesky factor and the quantities derived from it.
type factor struct {
	chol   mat.Cholesky
	jitter float64
	g      *mat.Dense // K⁻¹F
	cholA  mat.Cholesky
	beta   []float64
	alpha  []float64
	nll    float64
	r, c   []float64 // per pair: correlation and its derivative factor
}

// factorize builds K for the hyperparameters and factorises it.
func (g *gpData) factorize(sig2 float64, ell []float64, tau2 float64) (*factor, error) {
	n, k := g.n, g.k
	npair := n * (n - 1) / 2
	fa := &factor{r: make([]float64, npair), c: make([]float64, npair)}
	inv := make([]float64, k)
	for j, l := range ell {
		inv[j] = 1 / (l * l)
	}
	kmat := mat.NewSymDense(n, nil)
	pair := 0
	for a := 0; a < n; a++ {
		for b := a + 1; b < n; b++ {
			var q float64
			d := g.d2[pair*k : pair*k+k]
			for j := range d {
				q += d[j] * inv[j]
			}
			r, c := corr(g.kern, q)
			fa.r[pair], fa.c[pair] = r, c
			kmat.SetSym(a, b, sig2*r)
			pair++
		}
	}
	var ok bool
	for jit := 0.0; ; {
		for a := 0; a < n; a++ {
			kmat.SetSym(a, a, sig2+g.noise[a]+tau2+jit)
		}
		if fa.chol.Factorize(kmat) && diagRatio(&fa.chol) < 1e13 {
			fa.jitter = jit
			ok = true
			break
		}
		if jit == 0 {
			jit = 1e-10 * sig2
		} else {
			jit *= 10
		}
		if jit > 1.001e-5*sig2 {
			break
		}
	}
	if !ok {
		return nil, fmt.Errorf("%w: covariance matrix not positive definite (σ² = %g, ℓ = %v, τ² = %g)", ErrFit, sig2, ell, tau2)
	}
	fa.g = mat.NewDense(n, g.p, nil)
	if err := fa.chol.SolveTo(fa.g, g.f); err != nil {
		return nil, fmt.Errorf("%w: %v", ErrFit, err)
	}
	a := mat.NewSymDense(g.p, nil)
	for i := 0; i < g.p; i++ {
		for j := i; j < g.p; j++ {
			var s float64
			for t := 0; t < n; t++ {
				s += g.f.At(t, i) * fa.g.At(t, j)
			}
			a.SetSym(i, j, s)
		}
	}
	if !fa.cholA.Factorize(a) {
		return nil, fmt.Errorf("%w: trend not estimable from these runs", ErrFit)
	}
	gty := mat.NewVecDense(g.p, nil)
	gty.MulVec(fa.g.T(), mat.NewVecDense(n, g.y))
	var beta mat.VecDense
	if err := fa.cholA.SolveVecTo(&beta, gty); err != nil {
		return nil, fmt.Errorf("%w: %v", ErrFit, err)
	}
	fa.beta = beta.RawVector().Data
	res := make([]float64, n)
	for i := 0; i < n; i++ {
		res[i] = g.y[i]
		for j := 0; j < g.p; j++ {
			res[i] -= g.f.At(i, j) * fa.beta[j]
		}
	}
	var al mat.VecDense
	if err := fa.chol.SolveVecTo(&al, mat.NewVecDense(n, res)); err != nil {
		return nil, fmt.Errorf("%w: %v", ErrFit, err)
	}
	fa.alpha = al.RawVector().Data
	var quad float64
	for i := range res {
		quad += res[i] * fa.alpha[i]
	}
	fa.nll = 0.5*quad + 0.5*fa.chol.LogDet() + 0.5*float64(n)*math.Log(2*math.Pi)
	return fa, nil
}

// diagRatio returns (max U_ii / min U_ii)² for K = UᵀU, a cheap lower
// bound on the condition number of K.
func diagRatio(c *mat.Cholesky) float64 {
	u := c.RawU().(*mat.TriDense).RawTriangular()
	lo, hi := math.Inf(1), 0.0
	for i := 0; i < u.N; i++ {
		d := u.Data[i*u.Stride+i]
		lo = math.Min(lo, d)
		hi = math.Max(hi, d)
	}
	return (hi / lo) * (hi / lo)
}

// unpack splits θ = (log σ², log ℓ_1..k[, log τ²]).
func (g *gpData) unpack(theta []float64) (sig2 float64, ell []float64, tau2 float64) {
	sig2 = math.Exp(theta[0])
	ell = make([]float64, g.k)
	for j := range ell {
		ell[j] = math.Exp(theta[1+j])
	}
	if g.estTau {
		tau2 = math.Exp(theta[1+g.k])
	}
	return sig2, ell, tau2
}

// nll returns the negative log-likelihood −L(θ) and, if grad is not nil,
// stores its gradient with respect to θ in grad.
func (g *gpData) nll(theta, grad []float64) (float64, error) {
	fa, err := g.factorize(g.unpack(theta))
	if err != nil {
		return 0, err
	}
	if grad != nil {
		if err := g.gradient(theta, fa, grad); err != nil {
			return 0, err
		}
	}
	return fa.nll, nil
}

// gradient stores ∂(−L)/∂θ at θ in grad, given the factorisation at θ:
//
//	−∂L/∂θ = −½ Σ_ab W_ab ∂K_ab/∂θ,   W = ααᵀ − K⁻¹,
//
// with ∂K/∂log σ² = σ²R, ∂K_ab/∂log ℓ_j = σ² ∂r_ab/∂log ℓ_j (zero on the
// diagonal) and ∂K/∂log τ² = τ²I.
func (g *gpData) gradient(theta []float64, fa *factor, grad []float64) error {
	sig2, ell, tau2 := g.unpack(theta)
	n, k := g.n, g.k
	var kinv mat.SymDense
	if err := fa.chol.InverseTo(&kinv); err != nil {
		return fmt.Errorf("%w: %v", ErrFit, err)
	}
	raw := kinv.RawSymmetric()
	al := fa.alpha
	gs := make([]float64, k)
	var g0, trW float64
	pair := 0
	for a := 0; a < n; a++ {
		row := raw.Data[a*raw.Stride:]
		trW += al[a]*al[a] - row[a]
		for b := a + 1; b < n; b++ {
			w := al[a]*al[b] - row[b]
			g0 += 2 * w * fa.r[pair]
			wc := 2 * w * fa.c[pair]
			d := g.d2[pair*k : pair*k+k]
			for j := range d {
				gs[j] += wc * d[j]
			}
			pair++
		}
	}
	grad[0] = -0.5 * sig2 * (g0 + trW)
	for j := 0; j < k; j++ {
		grad[1+j] = -0.5 * sig2 * gs[j] / (ell[j] * ell[j])
	}
	if g.estTau {
		grad[1+k] = -0.5 * tau2 * trW
	}
	return nil
}

// box returns the search bounds of θ.
func (g *gpData) box() (lo, hi []float64) {
	dim := 1 + g.k
	if g.estTau {
		dim++
	}
	lo, hi = make([]float64, dim), make([]float64, dim)
	lo[0], hi[0] = math.Log(1e-6*g.vary), math.Log(1e3*g.vary)
	for j := 0; j < g.k; j++ {
		lo[1+j], hi[1+j] = math.Log(0.005), math.Log(10)
	}
	if g.estTau {
		lo[1+g.k], hi[1+g.k] = math.Log(1e-10*g.vary), math.Log(g.vary)
	}
	return lo, hi
}

func newGPData(d Data, opts KrigingOptions) (*gpData, error) {
	n, k, err := d.check()
	if err != nil {
		return nil, err
	}
	g := &gpData{n: n, k: k, kern: opts.Kernel, estTau: opts.Nugget == NuggetEstimate}
	g.p = len(trendBasis(opts.Trend, make([]float64, k)))
	if n < g.p+2 {
		return nil, fmt.Errorf("%w: %d runs for a %s in %d parameters; need at least %d", ErrTooFewRuns, n, opts.Trend, k, g.p+2)
	}
	g.u = make([][]float64, n)
	g.y = append([]float64(nil), d.Y...)
	g.noise = make([]float64, n)
	g.f = mat.NewDense(n, g.p, nil)
	for i, x := range d.X {
		g.u[i] = d.Bounds.toUnit(x)
		g.f.SetRow(i, trendBasis(opts.Trend, g.u[i]))
		if d.SE != nil {
			g.noise[i] = d.SE[i] * d.SE[i]
		}
	}
	g.d2 = make([]float64, 0, n*(n-1)/2*k)
	for a := 0; a < n; a++ {
		for b := a + 1; b < n; b++ {
			for j := 0; j < k; j++ {
				dd := g.u[a][j] - g.u[b][j]
				g.d2 = append(g.d2, dd*dd)
			}
		}
	}
	var mean float64
	for _, y := range g.y {
		mean += y
	}
	mean /= float64(n)
	for _, y := range g.y {
		g.vary += (y - mean) * (y - mean)
	}
	g.vary /= float64(n - 1)
	if !(g.vary > 0) {
		g.vary = 1
		if d.SE != nil {
			var s float64
			for _, v := range g.noise {
				s += v
			}
			g.vary = s / float64(n)
		}
	}
	return g, nil
}

// FitKriging fits a kriging model through the runs of d; see Kriging for the
// model and the estimation. It returns an error wrapping ErrTooFewRuns when
// there are fewer than (trend coefficients + 2) runs, ErrData for invalid
// data and ErrFit if no hyperparameters give a usable covariance matrix.
func FitKriging(d Data, opts KrigingOptions) (*Kriging, error) {
	g, err := newGPData(d, opts)
	if err != nil {
		return nil, err
	}
	d = d.clone()
	var theta []float64
	if opts.Hyper != nil {
		h := opts.Hyper
		if len(h.Length) != g.k {
			panic(fmt.Sprintf("surface: %d length scales for %d parameters", len(h.Length), g.k))
		}
		if !(h.Sigma2 > 0) || !(h.Nugget >= 0) {
			panic(fmt.Sprintf("surface: hyperparameters need σ² > 0 and τ² ≥ 0 (got %g, %g)", h.Sigma2, h.Nugget))
		}
		for _, l := range h.Length {
			if !(l > 0) {
				panic(fmt.Sprintf("surface: length scale %g is not positive", l))
			}
		}
		theta = []float64{math.Log(h.Sigma2)}
		for _, l := range h.Length {
			theta = append(theta, math.Log(l))
		}
		if g.estTau {
			theta = append(theta, math.Log(math.Max(h.Nugget, 1e-300)))
		}
	} else {
		theta, err = g.optimize(opts)
		if err != nil {
			return nil, err
		}
	}
	sig2, ell, tau2 := g.unpack(theta)
	fa, err := g.factorize(sig2, ell, tau2)
	if err != nil {
		return nil, err
	}
	m := &Kriging{
		Hyper:  Hyper{Sigma2: sig2, Length: append([]float64(nil), ell...), Nugget: tau2},
		Kernel: opts.Kernel,
		Trend:  opts.Trend,
		Beta:   fa.beta,
		LogLik: -fa.nll,
		Jitter: fa.jitter,
		data:   d,
		nugget: opts.Nugget,
		gp:     g,
		sig2:   sig2,
		ell:    ell,
		alpha:  fa.alpha,
	}
	m.chol.Clone(&fa.chol)
	m.cholA.Clone(&fa.cholA)
	// L⁻¹F, with K = UᵀU and L = Uᵀ.
	m.lf = mat.NewDense(g.n, g.p, nil)
	for j := 0; j < g.p; j++ {
		col := make([]float64, g.n)
		mat.Col(col, j, g.f)
		m.lowerSolve(col)
		m.lf.SetCol(j, col)
	}
	if err := m.loo(fa); err != nil {
		return nil, err
	}
	return m, nil
}

// lowerSolve overwrites v with L⁻¹v, where K = LLᵀ.
func (m *Kriging) lowerSolve(v []float64) {
	u := m.chol.RawU().(*mat.TriDense).RawTriangular()
	blas64.Trsv(blas.Trans, u, blas64.Vector{N: len(v), Inc: 1, Data: v})
}

// loo computes the closed-form leave-one-out residuals.
func (m *Kriging) loo(fa *factor) error {
	n := m.gp.n
	var kinv mat.SymDense
	if err := fa.chol.InverseTo(&kinv); err != nil {
		return fmt.Errorf("%w: %v", ErrFit, err)
	}
	m.LOOPred = make([]float64, n)
	m.LOOSD = make([]float64, n)
	var ss float64
	gi := mat.NewVecDense(m.gp.p, nil)
	var ag mat.VecDense
	for i := 0; i < n; i++ {
		for j := 0; j < m.gp.p; j++ {
			gi.SetVec(j, fa.g.At(i, j))
		}
		if err := fa.cholA.SolveVecTo(&ag, gi); err != nil {
			return fmt.Errorf("%w: %v", ErrFit, err)
		}
		pii := kinv.At(i, i) - mat.Dot(gi, &ag)
		e := m.alpha[i] / pii
		m.LOOPred[i] = m.gp.y[i] - e
		m.LOOSD[i] = math.Sqrt(1 / pii)
		ss += e * e
	}
	m.LOORMSE = math.Sqrt(ss / float64(n))
	return nil
}

// optimize maximises the likelihood from screened multi-starts.
func (g *gpData) optimize(opts KrigingOptions) ([]float64, error) {
	restarts := opts.Restarts
	if restarts <= 0 {
		restarts = 3
	}
	lo, hi := g.box()
	dim := len(lo)
	// Screening: a default guess plus a Latin hypercube over a central part
	// of the box (short lengths and huge variances are poor starts).
	slo, shi := make([]float64, dim), make([]float64, dim)
	slo[0], shi[0] = math.Log(0.1*g.vary), math.Log(2*g.vary)
	for j := 0; j < g.k; j++ {
		slo[1+j], shi[1+j] = math.Log(0.05), math.Log(2)
	}
	def := []float64{math.Log(g.vary)}
	for j := 0; j < g.k; j++ {
		def = append(def, math.Log(0.3))
	}
	if g.estTau {
		slo[1+g.k], shi[1+g.k] = math.Log(1e-6*g.vary), math.Log(0.1*g.vary)
		def = append(def, math.Log(1e-4*g.vary))
	}
	rng := rand.New(rand.NewPCG(opts.Seed, 0x5eed4b1e))
	starts := [][]float64{def}
	for _, u := range latin(rng, 4*restarts, dim) {
		s := make([]float64, dim)
		for i := range s {
			s[i] = slo[i] + u[i]*(shi[i]-slo[i])
		}
		starts = append(starts, s)
	}
	type scored struct {
		x []float64
		f float64
	}
	var cands []scored
	for _, s := range starts {
		f, err := g.nll(s, nil)
		if err != nil {
			continue
		}
		cands = append(cands, scored{s, f})
	}
	if len(cands) == 0 {
		return nil, fmt.Errorf("%w: no starting hyperparameters give a positive definite covariance", ErrFit)
	}
	sort.SliceStable(cands, func(i, j int) bool { return cands[i].f < cands[j].f })
	if len(cands) > restarts {
		cands = cands[:restarts]
	}

	// The search runs in z with θ_i = lo_i + (hi_i − lo_i)·s(z_i), s the
	// logistic function, so every trial point lies inside the box. The
	// optimiser asks for the value and the gradient in separate calls; the
	// factorisation of the last point is kept for the gradient.
	tr := logitBox{lo, hi}
	const failed = 1e100
	var lastZ []float64
	var lastF *factor
	at := func(z []float64) (*factor, []float64) {
		theta := tr.theta(z)
		if lastZ != nil && floats.Equal(z, lastZ) {
			return lastF, theta
		}
		lastZ = append(lastZ[:0], z...)
		fa, err := g.factorize(g.unpack(theta))
		if err != nil {
			fa = nil
		}
		lastF = fa
		return fa, theta
	}
	prob := optimize.Problem{
		Func: func(z []float64) float64 {
			fa, _ := at(z)
			if fa == nil {
				return failed
			}
			return fa.nll
		},
		Grad: func(grad, z []float64) {
			fa, theta := at(z)
			if fa == nil || g.gradient(theta, fa, grad) != nil {
				for i := range grad {
					grad[i] = 0
				}
				return
			}
			tr.chain(z, grad)
		},
	}
	best := cands[0]
	for _, c := range cands {
		settings := &optimize.Settings{
			GradientThreshold: 1e-3,
			MajorIterations:   100,
			FuncEvaluations:   200,
			Converger:         &optimize.FunctionConverge{Absolute: 1e-4, Relative: 1e-9, Iterations: 3},
		}
		// A line-search failure still returns the best point reached.
		res, _ := optimize.Minimize(prob, tr.z(c.x), settings, &optimize.LBFGS{})
		if res == nil {
			continue
		}
		x := tr.theta(res.X)
		f, ferr := g.nll(x, nil)
		if ferr == nil && f < best.f {
			best = scored{x, f}
		}
	}
	return best.x, nil
}

// logitBox maps unbounded z to θ in the box [lo, hi] by
// θ = lo + (hi − lo)/(1 + e^(−z)).
type logitBox struct{ lo, hi []float64 }

func (b logitBox) theta(z []float64) []float64 {
	t := make([]float64, len(z))
	for i, v := range z {
		t[i] = b.lo[i] + (b.hi[i]-b.lo[i])/(1+math.Exp(-v))
	}
	return t
}

// z inverts theta; points on or beyond a bound map to ±12 (a fraction
// 6e-6 of the range from the bound).
func (b logitBox) z(theta []float64) []float64 {
	z := make([]float64, len(theta))
	for i, t := range theta {
		p := (t - b.lo[i]) / (b.hi[i] - b.lo[i])
		z[i] = math.Max(-12, math.Min(12, math.Log(p/(1-p))))
		if math.IsNaN(z[i]) {
			z[i] = 0
		}
	}
	return z
}

// chain turns a gradient with respect to θ into one with respect to z.
func (b logitBox) chain(z, grad []float64) {
	for i, v := range z {
		s := 1 / (1 + math.Exp(-v))
		grad[i] *= (b.hi[i] - b.lo[i]) * s * (1 - s)
	}
}

// Name implements Model.
func (m *Kriging) Name() string {
	return fmt.Sprintf("kriging (%s kernel, %s)", m.Kernel, m.Trend)
}

// Bounds implements Model.
func (m *Kriging) Bounds() Bounds { return m.data.Bounds }

// Inputs implements Model.
func (m *Kriging) Inputs() [][]float64 { return m.data.X }

func (m *Kriging) paramNames() []string { return m.data.names() }

// Data returns the runs the model was fitted through. The caller must not
// modify them.
func (m *Kriging) Data() Data { return m.data }

// kvec returns k(x)_i = σ² r(u, u_i) and the trend basis at unit point u.
func (m *Kriging) kvec(u []float64) []float64 {
	kv := make([]float64, m.gp.n)
	for i, ui := range m.gp.u {
		var q float64
		for j := range u {
			d := u[j] - ui[j]
			q += d * d / (m.ell[j] * m.ell[j])
		}
		r, _ := corr(m.Kernel, q)
		kv[i] = m.sig2 * r
	}
	return kv
}

// Mean returns the kriging mean f(x)ᵀβ̂ + k(x)ᵀα at x (natural units). It
// panics if len(x) is not the number of parameters.
func (m *Kriging) Mean(x []float64) float64 {
	checkDim(x, m.gp.k)
	u := m.data.Bounds.toUnit(x)
	kv := m.kvec(u)
	f := trendBasis(m.Trend, u)
	var y float64
	for j, b := range m.Beta {
		y += f[j] * b
	}
	for i, a := range m.alpha {
		y += kv[i] * a
	}
	return y
}

// Predict returns the kriging mean at x and the square root of the
// universal kriging variance (see Kriging): the uncertainty of the
// noise-free mean response, not of a new noisy run. It panics if len(x) is
// not the number of parameters.
func (m *Kriging) Predict(x []float64) (mean, sd float64) {
	checkDim(x, m.gp.k)
	u := m.data.Bounds.toUnit(x)
	kv := m.kvec(u)
	f := trendBasis(m.Trend, u)
	for j, b := range m.Beta {
		mean += f[j] * b
	}
	for i, a := range m.alpha {
		mean += kv[i] * a
	}
	m.lowerSolve(kv) // v = L⁻¹k
	var vv float64
	for _, v := range kv {
		vv += v * v
	}
	// w = f − (L⁻¹F)ᵀv; add wᵀA⁻¹w.
	w := mat.NewVecDense(m.gp.p, nil)
	for j := 0; j < m.gp.p; j++ {
		var s float64
		for i, v := range kv {
			s += m.lf.At(i, j) * v
		}
		w.SetVec(j, f[j]-s)
	}
	var aw mat.VecDense
	var extra float64
	if err := m.cholA.SolveVecTo(&aw, w); err == nil {
		extra = mat.Dot(w, &aw)
	}
	v := m.sig2 - vv + extra
	if v < 0 {
		v = 0
	}
	return mean, math.Sqrt(v)
}

// Critical returns the normal quantile z((1+level)/2).
func (m *Kriging) Critical(level float64) float64 {
	checkLevel(level)
	return distuv.UnitNormal.Quantile(0.5 + level/2)
}

// LOO returns LOORMSE and the leave-one-out predictions (LOOPred).
func (m *Kriging) LOO() (rmse float64, preds []float64) { return m.LOORMSE, m.LOOPred }

// latin returns n points of a Latin hypercube in [0,1]^k: each coordinate
// falls once in each of the n equal strata, at a uniform position inside it.
func latin(rng *rand.Rand, n, k int) [][]float64 {
	pts := make([][]float64, n)
	for i := range pts {
		pts[i] = make([]float64, k)
	}
	for j := 0; j < k; j++ {
		perm := rng.Perm(n)
		for i := range pts {
			pts[i][j] = (float64(perm[i]) + rng.Float64()) / float64(n)
		}
	}
	return pts
}
