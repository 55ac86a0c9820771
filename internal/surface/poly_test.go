package surface

import (
	"encoding/csv"
	"errors"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// readCSV reads a testdata CSV file with a header row.
func readCSV(t *testing.T, name string) (header []string, rows [][]float64) {
	t.Helper()
	f, err := os.Open(filepath.Join("testdata", name))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	for _, rec := range recs[1:] {
		row := make([]float64, len(rec))
		for j, s := range rec {
			if row[j], err = strconv.ParseFloat(s, 64); err != nil {
				t.Fatalf("%s: %v", name, err)
			}
		}
		rows = append(rows, row)
	}
	return recs[0], rows
}

// readCertified reads a quantity,value file into a map.
func readCertified(t *testing.T, name string) map[string]float64 {
	t.Helper()
	f, err := os.Open(filepath.Join("testdata", name))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	m := make(map[string]float64)
	for _, rec := range recs[1:] {
		v, err := strconv.ParseFloat(rec[1], 64)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		m[rec[0]] = v
	}
	return m
}

// nistData loads a NIST StRD dataset: the response column is named "y",
// every other column is a predictor in file order.
func nistData(t *testing.T, name string) Data {
	header, rows := readCSV(t, name)
	var d Data
	yc := -1
	for j, h := range header {
		if h == "y" {
			yc = j
		} else {
			d.Names = append(d.Names, h)
		}
	}
	k := len(d.Names)
	d.Bounds = Bounds{Lo: make([]float64, k), Hi: make([]float64, k)}
	for j := range d.Bounds.Lo {
		d.Bounds.Lo[j], d.Bounds.Hi[j] = math.Inf(1), math.Inf(-1)
	}
	for _, r := range rows {
		var x []float64
		for j, v := range r {
			if j != yc {
				x = append(x, v)
			}
		}
		for j, v := range x {
			d.Bounds.Lo[j] = math.Min(d.Bounds.Lo[j], v)
			d.Bounds.Hi[j] = math.Max(d.Bounds.Hi[j], v)
		}
		d.X = append(d.X, x)
		d.Y = append(d.Y, r[yc])
	}
	return d
}

// digits returns the number of agreeing significant digits, -log10(|a-b|/|b|).
func digits(a, b float64) float64 {
	if a == b {
		return 16
	}
	return -math.Log10(math.Abs(a-b) / math.Abs(b))
}

// Ensure that the Longley fit matches every NIST certified value.
func TestPolyNISTLongley(t *testing.T) {
	d := nistData(t, "nist_strd_longley.csv")
	cert := readCertified(t, "nist_strd_longley_certified.csv")
	m, err := FitPoly(d, LinearTerms(6))
	if err != nil {
		t.Fatal(err)
	}
	// NIST StRD Longley certified values: 12 significant digits required on
	// every coefficient, standard deviation, residual SD and R² (measured
	// 12.4 to 15.4; the coded design's condition number is 110, so about
	// 110·eps·(cancellation in the back-transform) is the expected error).
	const minDigits = 12
	for i := 0; i < 7; i++ {
		b := "B" + strconv.Itoa(i)
		if g := digits(m.Coef[i], cert[b]); g < minDigits {
			t.Errorf("%s = %.15g, certified %.15g: %.1f digits", b, m.Coef[i], cert[b], g)
		} else {
			t.Logf("%s: %.1f digits", b, g)
		}
		if g := digits(m.StdErr[i], cert[b+"_sd"]); g < minDigits {
			t.Errorf("%s_sd = %.15g, certified %.15g: %.1f digits", b, m.StdErr[i], cert[b+"_sd"], g)
		} else {
			t.Logf("%s_sd: %.1f digits", b, g)
		}
	}
	for _, c := range []struct {
		name string
		got  float64
	}{
		{"residual_sd", m.ResidualSD},
		{"r_squared", m.R2},
	} {
		if g := digits(c.got, cert[c.name]); g < minDigits {
			t.Errorf("%s = %.15g, certified %.15g: %.1f digits", c.name, c.got, cert[c.name], g)
		} else {
			t.Logf("%s: %.1f digits", c.name, g)
		}
	}
	if m.DoF != int(cert["residual_df"]) {
		t.Errorf("DoF = %d, certified %g", m.DoF, cert["residual_df"])
	}
	t.Logf("condition number of the coded design: %.3g", m.Cond)
}

// Ensure that the Norris fit matches the NIST certified values.
func TestPolyNISTNorris(t *testing.T) {
	d := nistData(t, "nist_strd_norris.csv")
	cert := readCertified(t, "nist_strd_norris_certified.csv")
	m, err := FitPoly(d, LinearTerms(1))
	if err != nil {
		t.Fatal(err)
	}
	// NIST StRD Norris certified values, 12 significant digits.
	const minDigits = 12
	for _, c := range []struct {
		name string
		got  float64
	}{
		{"B0", m.Coef[0]}, {"B1", m.Coef[1]},
		{"B0_sd", m.StdErr[0]}, {"B1_sd", m.StdErr[1]},
		{"residual_sd", m.ResidualSD}, {"r_squared", m.R2},
	} {
		if g := digits(c.got, cert[c.name]); g < minDigits {
			t.Errorf("%s = %.15g, certified %.15g: %.1f digits", c.name, c.got, cert[c.name], g)
		} else {
			t.Logf("%s: %.1f digits", c.name, g)
		}
	}
}

// Ensure that the ill-conditioned fifth-degree Wampler1 polynomial is
// recovered: every certified coefficient is 1 and every SD 0.
func TestPolyNISTWampler1(t *testing.T) {
	d := nistData(t, "nist_strd_wampler1.csv")
	cert := readCertified(t, "nist_strd_wampler1_certified.csv")
	terms, err := ParseTerms("1, x, x^2, x^3, x^4, x^5", d.Names)
	if err != nil {
		t.Fatal(err)
	}
	m, err := FitPoly(d, terms)
	if err != nil {
		t.Fatal(err)
	}
	// NIST StRD Wampler1 certified values, absolute 5e-9 on coefficients and
	// SDs. The responses reach 3.4e6, so merely evaluating the polynomial in
	// float64 leaves residuals of eps·3.4e6 ≈ 7.5e-10; 5e-9 allows a few such
	// roundings (measured worst error 8e-10).
	var worst, worstSD float64
	for i := 0; i < 6; i++ {
		b := "B" + strconv.Itoa(i)
		worst = math.Max(worst, math.Abs(m.Coef[i]-cert[b]))
		worstSD = math.Max(worstSD, math.Abs(m.StdErr[i]-cert[b+"_sd"]))
	}
	if worst > 5e-9 || worstSD > 5e-9 {
		t.Errorf("coefficients %v (worst error %.3g), SDs %v (worst %.3g)", m.Coef, worst, m.StdErr, worstSD)
	}
	if m.ResidualSD > 1e-6 || math.Abs(m.R2-cert["r_squared"]) > 1e-12 {
		t.Errorf("residual SD %g (certified 0), R2 %.15g (certified 1)", m.ResidualSD, m.R2)
	}
	t.Logf("worst coefficient error %.3g, worst SD %.3g, residual SD %.3g, cond %.3g", worst, worstSD, m.ResidualSD, m.Cond)
}

// Ensure that the prediction at the origin reproduces the certified
// intercept and its standard deviation: the row of the linear model at x = 0
// is the intercept alone, so Predict(0) must return (B0, B0_sd). This checks
// the prediction variance s²·x₀ᵀ(XᵀX)⁻¹x₀ far outside the runs.
func TestPolyPredictOriginLongley(t *testing.T) {
	d := nistData(t, "nist_strd_longley.csv")
	cert := readCertified(t, "nist_strd_longley_certified.csv")
	m, err := FitPoly(d, LinearTerms(6))
	if err != nil {
		t.Fatal(err)
	}
	mean, sd := m.Predict(make([]float64, 6))
	// NIST StRD Longley certified B0 and B0_sd, 12 significant digits
	// (measured 14.1 and 14.6).
	if g := digits(mean, cert["B0"]); g < 12 {
		t.Errorf("Predict(0) mean %.15g, certified B0 %.15g (%.1f digits)", mean, cert["B0"], g)
	}
	if g := digits(sd, cert["B0_sd"]); g < 12 {
		t.Errorf("Predict(0) sd %.15g, certified B0_sd %.15g (%.1f digits)", sd, cert["B0_sd"], g)
	}
	t.Logf("Predict(0): mean %.1f digits, sd %.1f digits", digits(mean, cert["B0"]), digits(sd, cert["B0_sd"]))
}

// Ensure that the closed-form leave-one-out predictions equal brute-force
// refits without each run (an exact identity for least squares), with and
// without weights, for a hierarchical and a non-hierarchical model.
func TestPolyPRESSBruteForce(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	const n = 14
	d := Data{Names: []string{"a", "b"}, Bounds: Bounds{Lo: []float64{-2, 10}, Hi: []float64{3, 20}}}
	for i := 0; i < n; i++ {
		a := -2 + 5*rng.Float64()
		b := 10 + 10*rng.Float64()
		d.X = append(d.X, []float64{a, b})
		d.Y = append(d.Y, 1+0.5*a-0.2*b+0.3*a*b+0.1*a*a+rng.NormFloat64())
		d.SE = append(d.SE, 0.5+rng.Float64())
	}
	for _, spec := range []string{"1, a, b, a*b, a^2, b^2", "a*b, a^2, b^3"} {
		for _, weighted := range []bool{false, true} {
			dd := d
			if !weighted {
				dd.SE = nil
			}
			terms, err := ParseTerms(spec, d.Names)
			if err != nil {
				t.Fatal(err)
			}
			m, err := FitPoly(dd, terms)
			if err != nil {
				t.Fatal(err)
			}
			var press float64
			for i := 0; i < n; i++ {
				sub := Data{Names: d.Names, Bounds: d.Bounds}
				for j := 0; j < n; j++ {
					if j != i {
						sub.X = append(sub.X, d.X[j])
						sub.Y = append(sub.Y, d.Y[j])
						if weighted {
							sub.SE = append(sub.SE, d.SE[j])
						}
					}
				}
				mi, err := FitPoly(sub, terms)
				if err != nil {
					t.Fatal(err)
				}
				pred := mi.Mean(d.X[i])
				press += (d.Y[i] - pred) * (d.Y[i] - pred)
				// Exact identity; rel 1e-9 of the response scale.
				if math.Abs(pred-m.LOOPred[i]) > 1e-9*(1+math.Abs(pred)) {
					t.Errorf("%q weighted=%v run %d: LOO %.12g, refit %.12g", spec, weighted, i, m.LOOPred[i], pred)
				}
			}
			if math.Abs(press-m.PRESS) > 1e-9*press {
				t.Errorf("%q weighted=%v: PRESS %.12g, brute force %.12g", spec, weighted, m.PRESS, press)
			}
		}
	}
}

// Ensure that weighted least squares with weights 1/se² equal to integers
// gives the same coefficients as ordinary least squares on the data with
// each run repeated that many times (an exact identity).
func TestPolyWeightsAsReplicates(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	d := Data{Bounds: Bounds{Lo: []float64{0}, Hi: []float64{1}}}
	rep := Data{Bounds: d.Bounds}
	for i := 0; i < 9; i++ {
		x := rng.Float64()
		y := math.Sin(3*x) + 0.1*rng.NormFloat64()
		m := 1 + rng.IntN(4)
		d.X = append(d.X, []float64{x})
		d.Y = append(d.Y, y)
		d.SE = append(d.SE, 1/math.Sqrt(float64(m)))
		for r := 0; r < m; r++ {
			rep.X = append(rep.X, []float64{x})
			rep.Y = append(rep.Y, y)
		}
	}
	terms, _ := ParseTerms("1, x1, x1^2, x1^3", defaultNames(1))
	mw, err := FitPoly(d, terms)
	if err != nil {
		t.Fatal(err)
	}
	mr, err := FitPoly(rep, terms)
	if err != nil {
		t.Fatal(err)
	}
	for i := range mw.Coef {
		// Exact identity up to rounding: rel 1e-10.
		if math.Abs(mw.Coef[i]-mr.Coef[i]) > 1e-10*(1+math.Abs(mr.Coef[i])) {
			t.Errorf("coef %d: weighted %.14g, replicated %.14g", i, mw.Coef[i], mr.Coef[i])
		}
	}
	if math.Abs(mw.R2-mr.R2) > 1e-12 {
		t.Errorf("R2: weighted %.15g, replicated %.15g", mw.R2, mr.R2)
	}
}

// Ensure that a model without intercept and with gaps in its powers (not
// hierarchical, so no shift of origin is allowed) recovers exact data.
func TestPolyNonHierarchicalExact(t *testing.T) {
	d := Data{Names: []string{"s"}, Bounds: Bounds{Lo: []float64{100}, Hi: []float64{140}}}
	for i := 0; i <= 8; i++ {
		s := 100 + 5*float64(i)
		d.X = append(d.X, []float64{s})
		d.Y = append(d.Y, 3*s-2e-4*s*s*s) // exact polynomial, from its definition
	}
	terms, err := ParseTerms("s, s^3", d.Names)
	if err != nil {
		t.Fatal(err)
	}
	m, err := FitPoly(d, terms)
	if err != nil {
		t.Fatal(err)
	}
	// Exact data: rel 1e-12.
	if math.Abs(m.Coef[0]-3) > 3e-12 || math.Abs(m.Coef[1]+2e-4) > 2e-16 {
		t.Errorf("coef %v, want [3 -2e-4]", m.Coef)
	}
}

// Ensure that impossible fits are refused with errors that say why.
func TestPolyErrors(t *testing.T) {
	d := Data{Names: []string{"a", "b"}, Bounds: Bounds{Lo: []float64{0, 0}, Hi: []float64{1, 2}}}
	for i := 0; i < 6; i++ {
		a := float64(i) / 5
		d.X = append(d.X, []float64{a, 2 * a}) // b is always 2a
		d.Y = append(d.Y, a)
	}
	_, err := FitPoly(d, QuadraticTerms(2))
	if !errors.Is(err, ErrTooFewRuns) {
		t.Errorf("6 runs, 6 terms: got %v, want ErrTooFewRuns", err)
	}
	_, err = FitPoly(d, LinearTerms(2))
	if !errors.Is(err, ErrRankDeficient) || !strings.Contains(err.Error(), "a, b") {
		t.Errorf("b = 2a: got %v, want ErrRankDeficient naming a and b", err)
	}
	t.Log(err)
	bad := d
	bad.X = append([][]float64{{0.5, 3}}, d.X[1:]...)
	if _, err = FitPoly(bad, LinearTerms(2)); !errors.Is(err, ErrData) || !strings.Contains(err.Error(), "b = 3") {
		t.Errorf("point outside bounds: got %v", err)
	}
}
