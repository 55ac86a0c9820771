package history

import (
	"encoding/csv"
	"math"
	"os"
	"strconv"
	"testing"
)

// readCertified reads a quantity,value[,…] CSV from testdata.
func readCertified(t *testing.T, name string) map[string]float64 {
	t.Helper()
	f, err := os.Open("testdata/" + name)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	r := csv.NewReader(f)
	r.Comment = '#'
	r.FieldsPerRecord = -1
	rows, err := r.ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	m := map[string]float64{}
	for _, row := range rows[1:] {
		v, err := strconv.ParseFloat(row[1], 64)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		m[row[0]] = v
	}
	return m
}

// Ensure that the coefficient helper matches a hand calculation with ISA
// sea-level air (ISO 2533 / ICAO Doc 7488/3: ρ = 1.225 kg/m^3, copied in
// testdata/isa_sea_level.csv). F = 300 N at 100 km/h on A = 2.2 m^2:
// U = 100/3.6 = 27.777… m/s, q = ½ ρ U² = 472.608025 Pa,
// C = 300/(472.608025 · 2.2) = 0.28853432. With the rounded
// "100 km/h ≈ 27.8 m/s" (common practice) q = 473.36450 Pa and
// C = 0.28807322. Plain arithmetic, rel 1e-8.
func TestCoefficientISA(t *testing.T) {
	rho := readCertified(t, "isa_sea_level.csv")["density"]
	if rho != 1.225 {
		t.Fatalf("ISA density %v", rho)
	}
	cases := []struct{ u, q, c float64 }{
		{100 / 3.6, 472.608024691358, 0.2885343228200371},
		{27.8, 473.3645, 0.28807322129909685},
	}
	for _, c := range cases {
		if q := DynamicPressure(rho, c.u); math.Abs(q/c.q-1) > 1e-8 {
			t.Errorf("U = %v: q = %v, want %v", c.u, q, c.q)
		}
		if got := Coefficient(300, rho, c.u, 2.2); math.Abs(got/c.c-1) > 1e-8 {
			t.Errorf("U = %v: C = %v, want %v", c.u, got, c.c)
		}
		s := Scale{Density: rho, Speed: c.u, Reference: 2.2}
		if got := 300 * s.Multiplier(); math.Abs(got/c.c-1) > 1e-8 {
			t.Errorf("Scale: C = %v, want %v", got, c.c)
		}
	}
}
