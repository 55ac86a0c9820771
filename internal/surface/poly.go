package surface

import (
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"
)

// condLimit is the largest condition number of the coded, column-equilibrated
// design that FitPoly accepts. Beyond it the coefficients carry fewer than
// about four significant digits and the terms are reported as dependent.
const condLimit = 1e12

// Poly is a polynomial response surface fitted by least squares:
//
//	y_i = Σ_t b_t m_t(x_i) + e_i,   e_i ~ N(0, σ²/w_i)
//
// where m_t are the monomials of Terms in natural units and w_i = 1 without
// standard errors, or w_i ∝ 1/se_i² with them (weights scaled to mean one,
// so that ResidualSD keeps the response's units and is a typical residual).
//
// The fit never forms the normal equations. Each parameter is coded as
// u = (x − c)/h, with h the power of two nearest to the half range of the
// runs (an exact division) and c the mid range when the term set is
// hierarchical (contains the intercept and every lower power of every term,
// so a shift of origin maps the model to itself) or zero otherwise. The coded
// design, weighted by √w_i, has its columns scaled to unit length and is
// factorised by Householder QR, A = QR. The coded coefficients solve
// R g = Qᵀ√w y; Coef and StdErr are mapped back to natural units exactly by
// the binomial expansion of (c + h u)^p.
//
// The variance of any linear combination aᵀb is s²‖R⁻ᵀ D a′‖², with D the
// column scaling and a′ the combination in coded units; it is computed by a
// triangular solve, a sum of squares that cannot cancel. Leverages are the
// squared row norms of the thin Q, h_ii = ‖Q_i,1:p‖², and the leave-one-out
// residual of run i is e_i/(1 − h_ii) (exact for least squares; for example
// Montgomery, Peck & Vining, "Introduction to Linear Regression Analysis",
// §4.3). Checked against the NIST StRD linear least-squares datasets.
type Poly struct {
	// Terms are the model's monomials, in the order given to FitPoly.
	Terms []Term
	// TermNames are the canonical names of Terms (see Term.Name).
	TermNames []string
	// Coef holds the coefficients in natural units, one per term.
	Coef []float64
	// StdErr holds the standard error of each coefficient.
	StdErr []float64
	// N is the number of runs and DoF = N − len(Terms) the residual degrees
	// of freedom.
	N, DoF int
	// ResidualSD is s = √(Σ w_i e_i²/DoF), in the response's units.
	ResidualSD float64
	// R2 is 1 − RSS/TSS (weighted), with TSS about the weighted mean when the
	// model has an intercept and about zero otherwise; AdjR2 adjusts it for
	// the degrees of freedom.
	R2, AdjR2 float64
	// PRESS is the sum of squared leave-one-out residuals, Σ (e_i/(1−h_ii))²,
	// in the response's units squared (not weighted), and LOORMSE = √(PRESS/N).
	// A run with leverage 1 (its removal leaves the model undetermined) makes
	// both +Inf.
	PRESS, LOORMSE float64
	// Cond is the 2-norm condition number of the matrix that was factorised
	// (coded, weighted, columns of unit length).
	Cond float64
	// ReducedChi2 is Σ (e_i/se_i)²/DoF when standard errors were given: near
	// one when the scatter about the surface matches the runs' stated
	// uncertainty, well above one when the model misses real structure. It
	// is NaN without standard errors.
	ReducedChi2 float64
	// Residuals holds e_i = y_i − ŷ_i, Leverage the hat-matrix diagonal h_ii
	// and LOOPred the leave-one-out predictions y_i − e_i/(1−h_ii).
	Residuals, Leverage, LOOPred []float64

	bounds  Bounds
	x       [][]float64
	names   []string
	centre  []float64 // coding origin c_j
	scale   []float64 // coding scale h_j
	colNorm []float64 // D: coded column t is multiplied by colNorm[t] before QR
	a       []float64 // coefficients of the coded monomials
	r       *mat.TriDense
	s       float64
}

// FitPoly fits a polynomial with the given terms through the runs of d by
// (weighted) least squares; see Poly for the method. It returns an error
// wrapping ErrTooFewRuns when N ≤ len(terms), ErrRankDeficient (naming the
// dependent terms) when the runs cannot separate the terms, and ErrData for
// invalid data. It panics if terms is empty or a term's length differs from
// the number of parameters.
func FitPoly(d Data, terms []Term) (*Poly, error) {
	n, k, err := d.check()
	if err != nil {
		return nil, err
	}
	d = d.clone()
	if len(terms) == 0 {
		panic("surface: polynomial needs at least one term")
	}
	for _, t := range terms {
		if len(t.Pow) != k {
			panic(fmt.Sprintf("surface: term has %d powers, data have %d parameters", len(t.Pow), k))
		}
	}
	p := len(terms)
	own := make([]Term, p)
	for t, tm := range terms {
		own[t] = Term{Pow: append([]int(nil), tm.Pow...)}
	}
	terms = own
	names := d.names()
	tnames := make([]string, p)
	for t, tm := range terms {
		tnames[t] = tm.Name(names)
	}
	if n <= p {
		return nil, fmt.Errorf("%w: %d runs for %d terms; need more runs than terms", ErrTooFewRuns, n, p)
	}

	// Coding of each parameter.
	hier := hierarchical(terms)
	centre := make([]float64, k)
	scale := make([]float64, k)
	for j := 0; j < k; j++ {
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, row := range d.X {
			lo = math.Min(lo, row[j])
			hi = math.Max(hi, row[j])
		}
		half := math.Max(math.Abs(lo), math.Abs(hi))
		if hier {
			centre[j] = 0.5 * (lo + hi)
			half = 0.5 * (hi - lo)
		}
		scale[j] = 1
		if half > 0 {
			scale[j] = math.Exp2(math.Round(math.Log2(half)))
		}
	}

	// Weights, normalised to mean one.
	w := make([]float64, n)
	for i := range w {
		w[i] = 1
	}
	if d.SE != nil {
		var sum float64
		for i, se := range d.SE {
			w[i] = 1 / (se * se)
			sum += w[i]
		}
		for i := range w {
			w[i] *= float64(n) / sum
		}
	}

	// Coded design, weighted and column-equilibrated.
	z := mat.NewDense(n, p, nil)
	for i, row := range d.X {
		u := code(row, centre, scale)
		for t, tm := range terms {
			z.Set(i, t, monoValue(u, tm.Pow))
		}
	}
	colNorm := make([]float64, p)
	a := mat.NewDense(n, p, nil)
	for t := 0; t < p; t++ {
		var ss float64
		for i := 0; i < n; i++ {
			v := math.Sqrt(w[i]) * z.At(i, t)
			ss += v * v
		}
		if ss == 0 {
			return nil, fmt.Errorf("%w: term %s is zero at every run", ErrRankDeficient, tnames[t])
		}
		colNorm[t] = 1 / math.Sqrt(ss)
		for i := 0; i < n; i++ {
			a.Set(i, t, math.Sqrt(w[i])*z.At(i, t)*colNorm[t])
		}
	}

	var qr mat.QR
	qr.Factorize(a)
	var rfull, q mat.Dense
	qr.RTo(&rfull)
	qr.QTo(&q)
	r := mat.NewTriDense(p, mat.Upper, nil)
	for i := 0; i < p; i++ {
		for j := i; j < p; j++ {
			r.SetTri(i, j, rfull.At(i, j))
		}
	}
	cond := mat.Cond(r, 2)
	if !(cond <= condLimit) {
		return nil, fmt.Errorf("%w: condition number %.3g; nearly dependent terms: %s (drop one, or add runs that separate them)",
			ErrRankDeficient, cond, strings.Join(dependentTerms(r, tnames), ", "))
	}

	// Coded coefficients: R g = Q1ᵀ √w y, then undo the column scaling.
	qty := make([]float64, p)
	for t := 0; t < p; t++ {
		var s float64
		for i := 0; i < n; i++ {
			s += q.At(i, t) * math.Sqrt(w[i]) * d.Y[i]
		}
		qty[t] = s
	}
	g := solveUpper(r, qty)
	coded := make([]float64, p)
	for t := range g {
		coded[t] = g[t] * colNorm[t]
	}

	m := &Poly{
		Terms:     terms,
		TermNames: tnames,
		N:         n,
		DoF:       n - p,
		Residuals: make([]float64, n),
		Leverage:  make([]float64, n),
		LOOPred:   make([]float64, n),
		bounds:    d.Bounds,
		x:         d.X,
		names:     names,
		centre:    centre,
		scale:     scale,
		colNorm:   colNorm,
		a:         coded,
		r:         r,
		Cond:      cond,
	}

	// Residuals, leverages and leave-one-out residuals.
	var rssw, chi2 float64
	for i := 0; i < n; i++ {
		var fit float64
		for t := 0; t < p; t++ {
			fit += z.At(i, t) * coded[t]
		}
		e := d.Y[i] - fit
		m.Residuals[i] = e
		rssw += w[i] * e * e
		if d.SE != nil {
			chi2 += (e / d.SE[i]) * (e / d.SE[i])
		}
		var h float64
		for t := 0; t < p; t++ {
			h += q.At(i, t) * q.At(i, t)
		}
		m.Leverage[i] = h
		if 1-h > 1e-10 {
			eloo := e / (1 - h)
			m.PRESS += eloo * eloo
			m.LOOPred[i] = d.Y[i] - eloo
		} else {
			m.PRESS = math.Inf(1)
			m.LOOPred[i] = math.NaN()
		}
	}
	m.LOORMSE = math.Sqrt(m.PRESS / float64(n))
	m.s = math.Sqrt(rssw / float64(m.DoF))
	m.ResidualSD = m.s
	m.ReducedChi2 = math.NaN()
	if d.SE != nil {
		m.ReducedChi2 = chi2 / float64(m.DoF)
	}

	// R² with the weighted total sum of squares.
	intercept := false
	for _, tm := range terms {
		if tm.Degree() == 0 {
			intercept = true
		}
	}
	var ybar, sw float64
	if intercept {
		for i := range d.Y {
			ybar += w[i] * d.Y[i]
			sw += w[i]
		}
		ybar /= sw
	}
	var tss float64
	for i, y := range d.Y {
		tss += w[i] * (y - ybar) * (y - ybar)
	}
	m.R2 = 1 - rssw/tss
	if intercept {
		m.AdjR2 = 1 - (1-m.R2)*float64(n-1)/float64(m.DoF)
	} else {
		m.AdjR2 = 1 - (1-m.R2)*float64(n)/float64(m.DoF)
	}

	// Back to natural units: b = T a, Var(b_t) = s² ‖R⁻ᵀ D T_tᵀ‖².
	tm := codingMap(terms, centre, scale)
	m.Coef = make([]float64, p)
	m.StdErr = make([]float64, p)
	v := make([]float64, p)
	for t := 0; t < p; t++ {
		var b float64
		for s := 0; s < p; s++ {
			b += tm[t][s] * coded[s]
			v[s] = colNorm[s] * tm[t][s]
		}
		m.Coef[t] = b
		m.StdErr[t] = m.s * norm2(solveUpperT(r, v))
	}
	return m, nil
}

// code maps x to coded units (x − c)/h.
func code(x, centre, scale []float64) []float64 {
	u := make([]float64, len(x))
	for j := range x {
		u[j] = (x[j] - centre[j]) / scale[j]
	}
	return u
}

// monoValue returns Π u_j^pow_j.
func monoValue(u []float64, pow []int) float64 {
	v := 1.0
	for j, p := range pow {
		for ; p > 0; p-- {
			v *= u[j]
		}
	}
	return v
}

// codingMap returns T with b = T a: the coefficients b of the monomials in
// natural units from the coefficients a of the coded monomials, by
//
//	Π_j ((x_j − c_j)/h_j)^q_j = Σ_{p ≤ q} Π_j C(q_j, p_j) (−c_j)^(q_j−p_j) h_j^(−q_j) x_j^p_j,
//
// so T[t][s] = Π_j C(q_sj, p_tj) (−c_j)^(q_sj−p_tj) h_j^(−q_sj) when
// q_s ≥ p_t componentwise, and 0 otherwise. With c = 0, T is diagonal.
func codingMap(terms []Term, centre, scale []float64) [][]float64 {
	p := len(terms)
	tm := make([][]float64, p)
	for t := range tm {
		tm[t] = make([]float64, p)
		for s := range tm[t] {
			v := 1.0
			for j := range centre {
				ps, pt := terms[s].Pow[j], terms[t].Pow[j]
				if ps < pt || (centre[j] == 0 && ps != pt) {
					v = 0
					break
				}
				v *= binom(ps, pt) * ipow(-centre[j], ps-pt) / ipow(scale[j], ps)
			}
			tm[t][s] = v
		}
	}
	return tm
}

func binom(n, k int) float64 {
	b := 1.0
	for i := 1; i <= k; i++ {
		b = b * float64(n-k+i) / float64(i)
	}
	return b
}

func ipow(x float64, p int) float64 {
	v := 1.0
	for ; p > 0; p-- {
		v *= x
	}
	return v
}

func norm2(v []float64) float64 {
	var s float64
	for _, x := range v {
		s += x * x
	}
	return math.Sqrt(s)
}

// solveUpper solves R x = b by back substitution.
func solveUpper(r *mat.TriDense, b []float64) []float64 {
	p := len(b)
	x := make([]float64, p)
	for i := p - 1; i >= 0; i-- {
		s := b[i]
		for j := i + 1; j < p; j++ {
			s -= r.At(i, j) * x[j]
		}
		x[i] = s / r.At(i, i)
	}
	return x
}

// solveUpperT solves Rᵀ x = b by forward substitution.
func solveUpperT(r *mat.TriDense, b []float64) []float64 {
	p := len(b)
	x := make([]float64, p)
	for i := 0; i < p; i++ {
		s := b[i]
		for j := 0; j < i; j++ {
			s -= r.At(j, i) * x[j]
		}
		x[i] = s / r.At(i, i)
	}
	return x
}

// dependentTerms names the terms with the largest weights in the right
// singular vector of the smallest singular value of r: the combination of
// columns that is nearly zero.
func dependentTerms(r *mat.TriDense, names []string) []string {
	var svd mat.SVD
	if !svd.Factorize(r, mat.SVDThin) {
		return names
	}
	var v mat.Dense
	svd.VTo(&v)
	p := len(names)
	col := p - 1 // singular values are in decreasing order
	var big float64
	for t := 0; t < p; t++ {
		big = math.Max(big, math.Abs(v.At(t, col)))
	}
	var out []string
	for t := 0; t < p; t++ {
		if math.Abs(v.At(t, col)) >= 0.1*big {
			out = append(out, names[t])
		}
	}
	return out
}

// Name implements Model.
func (m *Poly) Name() string {
	return fmt.Sprintf("polynomial (%d terms: %s)", len(m.Terms), strings.Join(m.TermNames, ", "))
}

// Bounds implements Model.
func (m *Poly) Bounds() Bounds { return m.bounds }

// Inputs implements Model.
func (m *Poly) Inputs() [][]float64 { return m.x }

func (m *Poly) paramNames() []string { return m.names }

func (m *Poly) row(x []float64) []float64 {
	checkDim(x, len(m.centre))
	u := code(x, m.centre, m.scale)
	z := make([]float64, len(m.Terms))
	for t, tm := range m.Terms {
		z[t] = monoValue(u, tm.Pow)
	}
	return z
}

// Mean returns the fitted surface at x (natural units). It panics if len(x)
// is not the number of parameters.
func (m *Poly) Mean(x []float64) float64 {
	z := m.row(x)
	var y float64
	for t := range z {
		y += z[t] * m.a[t]
	}
	return y
}

// Predict returns the fitted surface at x and the standard error of that
// fitted mean, s·√(x₀ᵀ(XᵀWX)⁻¹x₀), computed as s‖R⁻ᵀ D z₀‖ with z₀ the coded
// term values at x. This is the confidence of the mean response, not a
// prediction interval for a new run. It panics if len(x) is not the number
// of parameters.
func (m *Poly) Predict(x []float64) (mean, sd float64) {
	z := m.row(x)
	v := make([]float64, len(z))
	for t := range z {
		mean += z[t] * m.a[t]
		v[t] = z[t] * m.colNorm[t]
	}
	return mean, m.s * norm2(solveUpperT(m.r, v))
}

// Critical returns the Student t quantile t_{DoF}((1+level)/2).
func (m *Poly) Critical(level float64) float64 {
	checkLevel(level)
	return distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(m.DoF)}.Quantile(0.5 + level/2)
}

// LOO returns LOORMSE and the leave-one-out predictions (LOOPred).
func (m *Poly) LOO() (rmse float64, preds []float64) { return m.LOORMSE, m.LOOPred }
