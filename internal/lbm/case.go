package lbm

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"math"
	"os"
	"strings"

	"github.com/BurntSushi/toml"
)

// Case is a case of the built-in solver: a rectangular channel, an inflow, a body and the run
// controls. Lengths are in units of the reference length L (the cylinder's
// diameter, the box's height, or whatever the case chooses), velocities in
// units of the reference velocity U (the mean inflow speed) and times in
// convective units L/U. The force coefficients use the same L and U:
//
//	C_D = 2 F_x / (ρ U² L),  C_L = 2 F_y / (ρ U² L)
//
// with F the force per unit span on the body.
//
// The zero value is not a valid case; start from Defaults or LoadCase.
type Case struct {
	Title  string     `toml:"title"`
	Domain Domain     `toml:"domain"`
	Flow   Flow       `toml:"flow"`
	Body   Body       `toml:"body"`
	Run    RunOptions `toml:"run"`
}

// Domain is the channel: x runs downstream from the inlet at x = 0, y up
// from the bottom boundary at y = 0. Sizes are rounded to whole cells.
type Domain struct {
	Length         float64 `toml:"length"`           // streamwise extent, in L
	Height         float64 `toml:"height"`           // cross-stream extent, in L
	CellsPerLength int     `toml:"cells_per_length"` // lattice cells per L (the resolution)
}

// Flow sets the physics and the boundary conditions.
type Flow struct {
	// Reynolds is Re = U L / ν with U the mean inflow speed.
	Reynolds float64 `toml:"reynolds"`
	// Inflow is the inlet profile: "uniform" (speed U everywhere) or
	// "parabolic" (a channel profile with peak 3U/2 and mean U, zero at
	// y = 0 and y = height).
	Inflow string `toml:"inflow"`
	// RampTime is the time, in convective units, over which the inflow
	// (and a moving ground) rises smoothly from rest:
	// U(t) = U sin²(πt / (2 RampTime)) for t < RampTime; the whole stream
	// is accelerated with it (see the package documentation). Default 1;
	// 0 sets the stream going at full speed in the first step, an
	// impulsive start of the body.
	RampTime float64 `toml:"ramp_time"`
	// Bottom is the boundary at y = 0: "wall" (no-slip), "moving" (no-slip
	// ground moving downstream at the inflow speed, for a body near the
	// road; needs a uniform inflow) or "slip" (free slip). Default "wall".
	Bottom string `toml:"bottom"`
	// Top is the boundary at y = height: "wall" or "slip". Default "wall".
	Top string `toml:"top"`
	// LatticeVelocity is the mean inflow speed in lattice units; 0 (the
	// default) picks it automatically, see the package documentation.
	// Higher is faster but less accurate (compressibility error grows
	// with its square).
	LatticeVelocity float64 `toml:"lattice_velocity"`
}

// Body is the solid body. Shape selects which other keys apply.
type Body struct {
	// Shape is "cylinder" or "box".
	Shape string `toml:"shape"`

	// Cylinder: centre (x, y) and diameter.
	Center   []float64 `toml:"center"`
	Diameter float64   `toml:"diameter"`

	// Box: front face at x = NoseX, underside Clearance above y = 0, both
	// front corners rounded with NoseRadius (0 ≤ NoseRadius ≤ Height/2),
	// and a boat-tail: over the last TaperLength the upper and lower faces
	// converge, each at TaperAngle degrees.
	NoseX       float64 `toml:"nose_x"`
	Length      float64 `toml:"length"`
	Height      float64 `toml:"height"`
	Clearance   float64 `toml:"clearance"`
	NoseRadius  float64 `toml:"nose_radius"`
	TaperAngle  float64 `toml:"taper_angle"`
	TaperLength float64 `toml:"taper_length"`
}

// RunOptions controls the length of the run and the output.
type RunOptions struct {
	// EndTime is the simulated time in convective units L/U. Set either
	// EndTime or Steps.
	EndTime float64 `toml:"end_time"`
	// Steps is the number of lattice steps. Set either EndTime or Steps.
	Steps int `toml:"steps"`
	// OutputInterval is the time between history rows, in convective
	// units; it is rounded to whole steps (at least one).
	OutputInterval float64 `toml:"output_interval"`
	// Output is the history file name; a relative name resolves against
	// the run directory.
	Output string `toml:"output"`
	// Threads is the number of goroutines sharing the lattice rows.
	// Default 1.
	Threads int `toml:"threads"`
	// SteadyTolerance, when positive, stops the run early once neither
	// C_D nor C_L has changed by more than this over the last convective
	// time unit (for steady flows). Default 0: run to the end.
	SteadyTolerance float64 `toml:"steady_tolerance"`
}

// Defaults returns a Case with every optional key at its default and the
// required keys unset.
func Defaults() Case {
	return Case{
		Flow: Flow{RampTime: 1, Bottom: "wall", Top: "wall"},
		Run:  RunOptions{Threads: 1},
	}
}

// A CaseError reports an invalid or unknown case-file key.
type CaseError struct {
	File string // case file; empty when the Case was not loaded from a file
	Line int    // line of the key in File; 0 when unknown
	Key  string // dotted key, e.g. "flow.reynolds"
	Msg  string // what is wrong and what to change
}

func (e *CaseError) Error() string {
	var b strings.Builder
	if e.File != "" {
		b.WriteString(e.File)
		if e.Line > 0 {
			fmt.Fprintf(&b, ":%d", e.Line)
		}
		b.WriteString(": ")
	}
	if e.Key != "" {
		fmt.Fprintf(&b, "%s: ", e.Key)
	}
	b.WriteString(e.Msg)
	return b.String()
}

func caseErr(key, format string, args ...any) *CaseError {
	return &CaseError{Key: key, Msg: fmt.Sprintf(format, args...)}
}

// LoadCase reads a TOML case file. Keys the format does not know are
// rejected with their file:line, and so are invalid values (see Validate).
func LoadCase(path string) (Case, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return Case{}, fmt.Errorf("lbm: read case: %w", err)
	}
	c, err := parseCase(data)
	var ce *CaseError
	if errors.As(err, &ce) {
		ce.File = path
		if ce.Line == 0 && ce.Key != "" {
			ce.Line = keyLines(data)[ce.Key]
		}
		return c, ce
	}
	if err != nil {
		return c, fmt.Errorf("%s: %w", path, err)
	}
	return c, nil
}

// parseCase decodes and validates case-file text.
func parseCase(data []byte) (Case, error) {
	c := Defaults()
	md, err := toml.NewDecoder(bytes.NewReader(data)).Decode(&c)
	if err != nil {
		return c, err
	}
	if und := md.Undecoded(); len(und) > 0 {
		k := und[0].String()
		return c, caseErr(k, "unknown key (check its spelling and its [table])")
	}
	return c, c.Validate()
}

// keyLines maps each dotted key of a TOML file to the line it is set on, for
// error messages. It understands [table] headers and bare `key = value`
// lines, which is all the case format uses; other keys are simply missing.
func keyLines(data []byte) map[string]int {
	lines := map[string]int{}
	table := ""
	sc := bufio.NewScanner(bytes.NewReader(data))
	for no := 1; sc.Scan(); no++ {
		s := strings.TrimSpace(sc.Text())
		switch {
		case s == "" || s[0] == '#':
		case s[0] == '[':
			end := strings.IndexByte(s, ']')
			if end < 0 {
				continue
			}
			table = strings.TrimSpace(strings.Trim(s[:end], "[]"))
			if _, ok := lines[table]; !ok {
				lines[table] = no
			}
		default:
			eq := strings.IndexByte(s, '=')
			if eq < 0 {
				continue
			}
			k := strings.Trim(strings.TrimSpace(s[:eq]), `"'`)
			if table != "" {
				k = table + "." + k
			}
			if _, ok := lines[k]; !ok {
				lines[k] = no
			}
		}
	}
	return lines
}

// Validate checks every value and the lattice parameters they lead to. The
// error is a *CaseError naming the key and saying what to change.
func (c Case) Validate() error {
	_, err := c.lattice()
	return err
}

// Limits of the lattice parameters (lattice units), set by measurement on
// the box and cylinder cases. With τ⁺ − 1/2 below 0.03 at a peak inflow
// speed of 0.1, grid-scale noise grows at the moving ground and the inlet
// corners: at 0.024 the box drag drifts by 20 % between the halves of a run,
// at 0.018 the run blows up; at 0.027 and above it is steady in the mean.
// A peak inflow speed above 0.1 (Mach 0.17) fills the box case with
// acoustic noise (at 0.15 the drag's standard deviation exceeds its mean).
// The automatic lattice velocity aims at τ⁺ = 0.55 with the peak inflow
// speed kept between 0.05 and 0.1; the floor then means Re/n ≤ 10.
const (
	minTauExcess   = 0.03
	maxPeakSpeed   = 0.1
	autoTauExcess  = 0.05
	autoPeakLow    = 0.05
	autoPeakHigh   = 0.1
	maxNodes       = 50_000_000
	minCellsPerLen = 4
	minBodyGap     = 2 // cells between a body and any boundary
)

// params are the lattice quantities derived from a Case.
type params struct {
	n        int     // cells per reference length
	nx, ny   int     // domain size in cells
	u        float64 // reference (mean inflow) speed, lattice units
	peak     float64 // peak inflow speed, lattice units
	nu       float64 // kinematic viscosity, lattice units
	tauPlus  float64 // τ⁺ = 3ν + 1/2
	tauMinus float64 // τ⁻ from Λ = (τ⁺ − 1/2)(τ⁻ − 1/2) = 1/4
	dt       float64 // convective time units per step, u/n
	steps    int
	outEvery int     // steps between history rows
	ramp     float64 // ramp time in convective units
	threads  int
	shape    shape
}

// magic is the TRT "magic" parameter Λ = (τ⁺ − 1/2)(τ⁻ − 1/2). With Λ fixed,
// steady TRT solutions depend on the viscosity only through the physics, so
// a halfway bounce-back wall stays at the same place for any τ⁺; Λ = 1/4 is
// the most stable choice (Ginzburg, Verhaeghe and d'Humières 2008, Commun.
// Comput. Phys. 3, 427-478).
const magic = 0.25

// lattice derives the lattice parameters and validates the case.
func (c Case) lattice() (params, error) {
	var p params
	d, f, b, r := c.Domain, c.Flow, c.Body, c.Run

	// Domain.
	if !(d.Length > 0) || math.IsInf(d.Length, 0) {
		return p, caseErr("domain.length", "must be positive (channel length in reference lengths), got %g", d.Length)
	}
	if !(d.Height > 0) || math.IsInf(d.Height, 0) {
		return p, caseErr("domain.height", "must be positive (channel height in reference lengths), got %g", d.Height)
	}
	if d.CellsPerLength < minCellsPerLen {
		return p, caseErr("domain.cells_per_length", "must be at least %d, got %d", minCellsPerLen, d.CellsPerLength)
	}
	p.n = d.CellsPerLength
	nxf, nyf := d.Length*float64(p.n), d.Height*float64(p.n)
	if nxf*nyf > maxNodes {
		return p, caseErr("domain.cells_per_length", "the lattice would have %.3g cells, more than %d: lower cells_per_length or shrink the domain", nxf*nyf, maxNodes)
	}
	p.nx, p.ny = int(math.Round(nxf)), int(math.Round(nyf))
	if p.nx < 8 || p.ny < 8 {
		return p, caseErr("domain.cells_per_length", "the domain is only %d × %d cells: raise cells_per_length", p.nx, p.ny)
	}

	// Flow.
	if !(f.Reynolds > 0) || math.IsInf(f.Reynolds, 0) {
		return p, caseErr("flow.reynolds", "must be positive, got %g", f.Reynolds)
	}
	p.peak = 1.0
	switch f.Inflow {
	case "uniform":
	case "parabolic":
		p.peak = 1.5
	default:
		return p, caseErr("flow.inflow", "must be \"uniform\" or \"parabolic\", got %q", f.Inflow)
	}
	if !(f.RampTime >= 0) || math.IsInf(f.RampTime, 0) {
		return p, caseErr("flow.ramp_time", "must be zero or positive (convective time units), got %g", f.RampTime)
	}
	p.ramp = f.RampTime
	switch f.Bottom {
	case "", "wall", "slip":
	case "moving":
		if f.Inflow != "uniform" {
			return p, caseErr("flow.bottom", "a moving ground runs at the inflow speed, which needs inflow = \"uniform\"")
		}
	default:
		return p, caseErr("flow.bottom", "must be \"wall\", \"moving\" or \"slip\", got %q", f.Bottom)
	}
	switch f.Top {
	case "", "wall", "slip":
	default:
		return p, caseErr("flow.top", "must be \"wall\" or \"slip\", got %q", f.Top)
	}
	if lv := f.LatticeVelocity; lv != 0 {
		if !(lv > 0) || lv*p.peak > maxPeakSpeed {
			return p, caseErr("flow.lattice_velocity", "must be 0 (automatic) or positive with a peak inflow speed of at most %g (here %g × %g): lower it", maxPeakSpeed, p.peak, lv)
		}
		p.u = lv
	} else {
		want := f.Reynolds * autoTauExcess / (3 * float64(p.n)) * p.peak // peak speed for τ⁺ = 0.55
		p.u = math.Min(math.Max(want, autoPeakLow), autoPeakHigh) / p.peak
	}
	p.nu = p.u * float64(p.n) / f.Reynolds
	p.tauPlus = 3*p.nu + 0.5
	if p.tauPlus-0.5 < minTauExcess {
		return p, caseErr("flow.reynolds", "relaxation time τ = %.4f is too close to 1/2 (the minimum is %.2f): raise cells_per_length or lower the Reynolds number", p.tauPlus, 0.5+minTauExcess)
	}
	p.tauMinus = 0.5 + magic/(p.tauPlus-0.5)
	p.dt = p.u / float64(p.n)

	// Body.
	s, err := b.shape(p)
	if err != nil {
		return p, err
	}
	p.shape = s
	x0, y0, x1, y1 := s.bounds()
	gap := float64(minBodyGap) / float64(p.n)
	lx, ly := float64(p.nx)/float64(p.n), float64(p.ny)/float64(p.n)
	if x0 < gap || x1 > lx-gap || y0 < gap || y1 > ly-gap {
		return p, caseErr("body", "the body spans x %.4g..%.4g, y %.4g..%.4g but must stay %d cells inside the domain (0..%.4g, 0..%.4g): move or shrink it, or enlarge the domain", x0, x1, y0, y1, minBodyGap, lx, ly)
	}

	// Run.
	switch {
	case r.EndTime != 0 && r.Steps != 0:
		return p, caseErr("run.steps", "set either run.end_time or run.steps, not both")
	case r.Steps != 0:
		if r.Steps < 0 {
			return p, caseErr("run.steps", "must be positive, got %d", r.Steps)
		}
		p.steps = r.Steps
	case r.EndTime != 0:
		if !(r.EndTime > 0) || math.IsInf(r.EndTime, 0) {
			return p, caseErr("run.end_time", "must be positive (convective time units), got %g", r.EndTime)
		}
		st := math.Ceil(r.EndTime/p.dt - 1e-9)
		if st > 1e9 {
			return p, caseErr("run.end_time", "needs %.3g steps: shorten the run", st)
		}
		p.steps = int(st)
	default:
		return p, caseErr("run.end_time", "set run.end_time (convective time units) or run.steps")
	}
	if !(r.OutputInterval > 0) || math.IsInf(r.OutputInterval, 0) {
		return p, caseErr("run.output_interval", "must be positive (convective time units), got %g", r.OutputInterval)
	}
	p.outEvery = max(1, int(math.Round(r.OutputInterval/p.dt)))
	if r.Output == "" {
		return p, caseErr("run.output", "must name the history file, e.g. \"forces.dat\"")
	}
	switch {
	case r.Threads == 0:
		p.threads = 1
	case r.Threads < 0 || r.Threads > 256:
		return p, caseErr("run.threads", "must be between 1 and 256, got %d", r.Threads)
	default:
		p.threads = r.Threads
	}
	if !(r.SteadyTolerance >= 0) || math.IsInf(r.SteadyTolerance, 0) {
		return p, caseErr("run.steady_tolerance", "must be zero (off) or positive, got %g", r.SteadyTolerance)
	}
	return p, nil
}

// shape validates the body keys and returns the body.
func (b Body) shape(p params) (shape, error) {
	cylKeys := b.Center != nil || b.Diameter != 0
	boxKeys := b.NoseX != 0 || b.Length != 0 || b.Height != 0 || b.Clearance != 0 ||
		b.NoseRadius != 0 || b.TaperAngle != 0 || b.TaperLength != 0
	cell := 1 / float64(p.n)
	switch b.Shape {
	case "cylinder":
		if boxKeys {
			return nil, caseErr("body", "nose_x, length, height, clearance, nose_radius, taper_angle and taper_length apply to shape \"box\" only: remove them")
		}
		if len(b.Center) != 2 {
			return nil, caseErr("body.center", "must be [x, y], got %d numbers", len(b.Center))
		}
		if !(b.Diameter > 0) {
			return nil, caseErr("body.diameter", "must be positive, got %g", b.Diameter)
		}
		if b.Diameter < 4*cell {
			return nil, caseErr("body.diameter", "spans %.3g cells, fewer than 4: raise cells_per_length", b.Diameter/cell)
		}
		return cylinder{xc: b.Center[0], yc: b.Center[1], d: b.Diameter}, nil
	case "box":
		if cylKeys {
			return nil, caseErr("body", "center and diameter apply to shape \"cylinder\" only: remove them")
		}
		if !(b.Length > 0) {
			return nil, caseErr("body.length", "must be positive, got %g", b.Length)
		}
		if !(b.Height > 0) {
			return nil, caseErr("body.height", "must be positive, got %g", b.Height)
		}
		if b.Height < 4*cell {
			return nil, caseErr("body.height", "spans %.3g cells, fewer than 4: raise cells_per_length", b.Height/cell)
		}
		if !(b.Clearance > 0) {
			return nil, caseErr("body.clearance", "must be positive (gap between the ground and the underside), got %g", b.Clearance)
		}
		if !(b.NoseRadius >= 0) || b.NoseRadius > 0.5*b.Height {
			return nil, caseErr("body.nose_radius", "must be between 0 and height/2 = %g, got %g", 0.5*b.Height, b.NoseRadius)
		}
		if !(b.TaperAngle >= 0) || b.TaperAngle >= 45 {
			return nil, caseErr("body.taper_angle", "must be at least 0 and below 45 degrees, got %g", b.TaperAngle)
		}
		if !(b.TaperLength >= 0) || b.TaperLength+b.NoseRadius > b.Length {
			return nil, caseErr("body.taper_length", "must be between 0 and length − nose_radius = %g, got %g", b.Length-b.NoseRadius, b.TaperLength)
		}
		ang := b.TaperAngle * math.Pi / 180
		if base := b.Height - 2*b.TaperLength*math.Tan(ang); base < 0.1*b.Height {
			return nil, caseErr("body.taper_angle", "the tapered tail closes (base height %.3g, under a tenth of the height): lower taper_angle or taper_length", base)
		}
		return box{nose: b.NoseX, length: b.Length, height: b.Height, clearance: b.Clearance,
			r: b.NoseRadius, taperAngle: ang, taperLength: b.TaperLength}, nil
	case "":
		return nil, caseErr("body.shape", "must be set: \"cylinder\" or \"box\"")
	default:
		return nil, caseErr("body.shape", "must be \"cylinder\" or \"box\", got %q", b.Shape)
	}
}
