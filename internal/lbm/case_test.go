package lbm

import (
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// Ensure that the example cases load and give the lattice the benchmark
// geometry implies: the DFG channel of Schäfer and Turek (1996), 2.2 m ×
// 0.41 m with D = 0.1 m, is 22 × 4.1 diameters, so 440 × 82 cells at 20
// cells per diameter, exactly.
func TestLoadExampleCases(t *testing.T) {
	for _, tc := range []struct {
		file   string
		nx, ny int
		shape  string
	}{
		{"dfg_2d1_cylinder.toml", 440, 82, "cylinder"},
		{"dfg_2d2_cylinder.toml", 440, 82, "cylinder"},
		{"box_demo.toml", 384, 144, "box"},
	} {
		c := loadTestCase(t, tc.file)
		p, err := c.lattice()
		if err != nil {
			t.Fatalf("%s: %v", tc.file, err)
		}
		if p.nx != tc.nx || p.ny != tc.ny || c.Body.Shape != tc.shape {
			t.Errorf("%s: %d × %d cells, shape %q; want %d × %d, %q", tc.file, p.nx, p.ny, c.Body.Shape, tc.nx, tc.ny, tc.shape)
		}
		// τ⁺ = 3ν + 1/2 with ν = U n / Re, and Λ = (τ⁺ − 1/2)(τ⁻ − 1/2) = 1/4.
		nu := p.u * float64(p.n) / c.Flow.Reynolds
		if math.Abs(p.tauPlus-(3*nu+0.5)) > 1e-15 || math.Abs((p.tauPlus-0.5)*(p.tauMinus-0.5)-0.25) > 1e-14 {
			t.Errorf("%s: τ⁺ = %g, τ⁻ = %g inconsistent with ν = %g and Λ = 1/4", tc.file, p.tauPlus, p.tauMinus, nu)
		}
	}
}

// validCase is a small valid case; the table below breaks one line at a time.
const validCase = `title = "check"

[domain]
length = 10.0
height = 4.0
cells_per_length = 10

[flow]
reynolds = 50.0
inflow = "uniform"

[body]
shape = "cylinder"
center = [3.0, 2.0]
diameter = 1.0

[run]
end_time = 1.0
output_interval = 0.1
output = "forces.dat"
`

// Ensure that invalid case files are rejected with the key, its line and a
// message that says what to change.
func TestCaseErrors(t *testing.T) {
	for _, tc := range []struct {
		name      string
		old, new  string // replace old with new in validCase
		key       string
		line      int
		inMessage string
	}{
		{"unknown key", `inflow = "uniform"`, "inflow = \"uniform\"\nreynold = 3.0", "flow.reynold", 11, "unknown key"},
		{"unknown table", `[run]`, "[solver]\nx = 1\n[run]", "solver", 17, "unknown key"},
		{"bad inflow", `inflow = "uniform"`, `inflow = "plug"`, "flow.inflow", 10, `"uniform" or "parabolic"`},
		{"negative Re", `reynolds = 50.0`, `reynolds = -5.0`, "flow.reynolds", 9, "positive"},
		{"tau too low", `reynolds = 50.0`, `reynolds = 5000.0`, "flow.reynolds", 9, "raise cells_per_length or lower the Reynolds number"},
		{"coarse", `cells_per_length = 10`, `cells_per_length = 2`, "domain.cells_per_length", 6, "at least"},
		{"moving ground, parabolic", `inflow = "uniform"`, "inflow = \"parabolic\"\nbottom = \"moving\"", "flow.bottom", 11, "uniform"},
		{"bad top", `inflow = "uniform"`, "inflow = \"uniform\"\ntop = \"moving\"", "flow.top", 11, `"wall" or "slip"`},
		{"fast lattice", `inflow = "uniform"`, "inflow = \"uniform\"\nlattice_velocity = 0.3", "flow.lattice_velocity", 11, "lower it"},
		{"no shape", `shape = "cylinder"`, ``, "body.shape", 0, "must be set"},
		{"unknown shape", `shape = "cylinder"`, `shape = "sphere"`, "body.shape", 13, `"cylinder" or "box"`},
		{"centre length", `center = [3.0, 2.0]`, `center = [3.0]`, "body.center", 14, "[x, y]"},
		{"box key on cylinder", `diameter = 1.0`, "diameter = 1.0\nnose_radius = 0.1", "body", 12, "remove them"},
		{"body outside", `center = [3.0, 2.0]`, `center = [3.0, 0.3]`, "body", 12, "inside the domain"},
		{"both end and steps", `end_time = 1.0`, "end_time = 1.0\nsteps = 100", "run.steps", 19, "not both"},
		{"no end", `end_time = 1.0`, ``, "run.end_time", 0, "set run.end_time"},
		{"no interval", `output_interval = 0.1`, ``, "run.output_interval", 0, "positive"},
		{"no output", `output = "forces.dat"`, ``, "run.output", 0, "history file"},
		{"threads", `output = "forces.dat"`, "output = \"forces.dat\"\nthreads = -2", "run.threads", 21, "between 1 and 256"},
		{"wrong type", `reynolds = 50.0`, `reynolds = "fifty"`, "", 0, "line 9"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			text := strings.Replace(validCase, tc.old, tc.new, 1)
			path := filepath.Join(t.TempDir(), "case.toml")
			if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
				t.Fatal(err)
			}
			_, err := LoadCase(path)
			if err == nil {
				t.Fatal("no error")
			}
			if !strings.Contains(err.Error(), tc.inMessage) {
				t.Errorf("error %q does not mention %q", err, tc.inMessage)
			}
			if tc.key == "" {
				return
			}
			var ce *CaseError
			if !errors.As(err, &ce) {
				t.Fatalf("error %v is not a *CaseError", err)
			}
			if ce.Key != tc.key || ce.Line != tc.line || ce.File != path {
				t.Errorf("error at %s:%d key %q, want %s:%d key %q", ce.File, ce.Line, ce.Key, path, tc.line, tc.key)
			}
		})
	}
	if _, err := LoadCase(filepath.Join(t.TempDir(), "missing.toml")); err == nil {
		t.Error("a missing file loaded")
	}
}

// Ensure that the valid case is valid, so each table entry above fails for
// its own reason only.
func TestValidCase(t *testing.T) {
	c, err := parseCase([]byte(validCase))
	if err != nil {
		t.Fatal(err)
	}
	if c.Flow.Bottom != "wall" || c.Flow.Top != "wall" || c.Flow.RampTime != 1 || c.Run.Threads != 1 {
		t.Errorf("defaults not applied: %+v", c.Flow)
	}
}

// FuzzParseCase checks that no input makes the case parser panic, that
// every rejection of a value names its key, and that an accepted case has
// sane lattice parameters.
func FuzzParseCase(f *testing.F) {
	f.Add([]byte(validCase))
	for _, name := range []string{"dfg_2d1_cylinder.toml", "dfg_2d2_cylinder.toml", "box_demo.toml"} {
		b, err := os.ReadFile(filepath.Join("testdata", name))
		if err != nil {
			f.Fatal(err)
		}
		f.Add(b)
	}
	f.Add([]byte("[body]\nshape = \"box\"\nheight = 1e308\n"))
	f.Add([]byte("[domain]\nlength = nan\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		c, err := parseCase(data)
		var ce *CaseError
		if errors.As(err, &ce) && ce.Key == "" {
			t.Fatalf("case error without a key: %v", err)
		}
		if err != nil {
			return
		}
		p, err := c.lattice()
		if err != nil {
			t.Fatalf("parseCase accepted a case lattice() rejects: %v", err)
		}
		if p.nx < 8 || p.ny < 8 || p.nx*p.ny > maxNodes || !(p.tauPlus >= 0.5+minTauExcess) || !(p.u > 0) || p.steps < 1 || p.outEvery < 1 {
			t.Fatalf("accepted case has bad lattice parameters %+v", p)
		}
	})
}
