package lbm

import (
	"bufio"
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"time"
)

// Result summarises a run.
type Result struct {
	Output  string        // path of the history file
	Steps   int           // lattice steps done
	Time    float64       // simulated time, convective units
	Cd, Cl  float64       // coefficients at the last step
	Stopped bool          // the context was cancelled before the end
	Steady  bool          // the steady tolerance was met before the end
	Elapsed time.Duration // wall-clock time of the stepping loop
	MLUPS   float64       // million node updates per second, all nx × ny cells counted
}

// ErrDiverged is returned when the solution blows up.
var ErrDiverged = errors.New("lbm: the solution diverged")

// Run simulates the case and writes the force-coefficient history to
// c.Run.Output (resolved against dir when relative): a header line
// "# time Cd Cl" and one row per output interval, flushed as it is written
// so a reader sees the file grow. A short log goes to log.
//
// When ctx is cancelled, Run writes a final row for the current step,
// flushes and closes the file and returns the partial Result with Stopped
// set and a nil error: a clean early stop. It returns ErrDiverged (wrapped,
// with the time and the place) if the coefficients stop being finite or a
// lattice speed passes 0.5, which no flow the scheme can carry reaches.
func Run(ctx context.Context, c Case, dir string, log io.Writer) (Result, error) {
	p, err := c.lattice()
	if err != nil {
		return Result{}, err
	}
	l := newLattice(p.nx, p.ny, 1/p.tauPlus, 1/p.tauMinus)
	bc := buildBoundary(l, c, p)
	st := newStepper(l, p.threads)

	path := c.Run.Output
	if !filepath.IsAbs(path) {
		path = filepath.Join(dir, path)
	}
	f, err := os.Create(path)
	if err != nil {
		return Result{}, fmt.Errorf("lbm: history file: %w", err)
	}
	res := Result{Output: path}
	hist := &history{f: f, w: bufio.NewWriter(f)}
	defer hist.close()

	writeSummary(log, c, p, l, bc)
	if err := hist.header(); err != nil {
		return res, err
	}

	coef := 2 / (p.u * p.u * float64(p.n)) // C = 2F/(ρ U² L), ρ = 1, L = n cells
	stepsPerUnit := max(1, int(math.Round(1/p.dt)))
	progressEvery := max(1, p.steps/10)
	var prevCd, prevCl float64 // coefficients one convective unit ago
	lastRow := -1
	start := time.Now()
	step := 0
	sPrev := 0.0
	for step < p.steps {
		t := float64(step+1) * p.dt
		s := 1.0
		if p.ramp > 0 {
			s = rampFactor(t, p.ramp)
		}
		st.collideStream()
		fx, fy := bc.apply(l, s)
		if s != sPrev {
			l.accelerate(bc.profile, s-sPrev)
		}
		sPrev = s
		l.swap()
		step++
		res.Cd, res.Cl = coef*fx, coef*fy

		bad := math.IsNaN(res.Cd) || math.IsInf(res.Cd, 0) || math.IsNaN(res.Cl) || math.IsInf(res.Cl, 0)
		if bad || step%checkEvery == 0 {
			// A lattice speed beyond maxSpeed (Mach 0.87) is no flow the
			// scheme can carry: the run is blowing up.
			if i, j, u := l.fastest(); bad || !(u < maxSpeed) {
				hist.close()
				res.Steps, res.Time = step, t
				return res, fmt.Errorf("%w at t = %.4g (step %d), near x = %.3g, y = %.3g: raise cells_per_length or lower the Reynolds number",
					ErrDiverged, t, step, (float64(i)+0.5)/float64(p.n), (float64(j)+0.5)/float64(p.n))
			}
		}
		if step%p.outEvery == 0 {
			if err := hist.row(t, res.Cd, res.Cl); err != nil {
				return res, err
			}
			lastRow = step
		}
		if step%progressEvery == 0 {
			el := time.Since(start).Seconds()
			fmt.Fprintf(log, "  t = %-9.4g step %d/%d  Cd = %.5f  Cl = %+.5f  (%.1f s)\n", t, step, p.steps, res.Cd, res.Cl, el)
		}
		if tol := c.Run.SteadyTolerance; tol > 0 && step%stepsPerUnit == 0 {
			if step > stepsPerUnit && t > p.ramp && math.Abs(res.Cd-prevCd) < tol && math.Abs(res.Cl-prevCl) < tol {
				res.Steady = true
				break
			}
			prevCd, prevCl = res.Cd, res.Cl
		}
		if ctx.Err() != nil {
			res.Stopped = true
			break
		}
	}
	res.Elapsed = time.Since(start)
	res.Steps = step
	res.Time = float64(step) * p.dt
	if el := res.Elapsed.Seconds(); el > 0 {
		res.MLUPS = float64(step) * float64(p.nx*p.ny) / el / 1e6
	}
	if lastRow != step && step > 0 {
		if err := hist.row(res.Time, res.Cd, res.Cl); err != nil {
			return res, err
		}
	}
	if err := hist.close(); err != nil {
		return res, err
	}
	switch {
	case res.Stopped:
		fmt.Fprintf(log, "stopped early at t = %.4g (step %d): cancelled\n", res.Time, step)
	case res.Steady:
		fmt.Fprintf(log, "steady at t = %.4g (step %d): Cd and Cl changed by less than %g over the last time unit\n", res.Time, step, c.Run.SteadyTolerance)
	}
	fmt.Fprintf(log, "done: %d steps in %.2f s, %.1f MLUPS (%d × %d nodes, %d thread(s)); history in %s\n",
		step, res.Elapsed.Seconds(), res.MLUPS, p.nx, p.ny, p.threads, path)
	return res, nil
}

// Blow-up detection: every checkEvery steps the fastest node is found; a
// lattice speed above maxSpeed stops the run.
const (
	checkEvery = 100
	maxSpeed   = 0.5
)

// history writes the coefficient history file.
type history struct {
	f      *os.File
	w      *bufio.Writer
	buf    []byte
	closed bool
	err    error
}

func (h *history) header() error {
	_, err := h.w.WriteString("# time Cd Cl\n")
	if err == nil {
		err = h.w.Flush()
	}
	return h.fail(err)
}

// row writes and flushes one line: time, C_D and C_L.
func (h *history) row(t, cd, cl float64) error {
	b := h.buf[:0]
	b = strconv.AppendFloat(b, t, 'f', 5, 64)
	b = append(b, ' ')
	b = strconv.AppendFloat(b, cd, 'g', 9, 64)
	b = append(b, ' ')
	b = strconv.AppendFloat(b, cl, 'g', 9, 64)
	b = append(b, '\n')
	h.buf = b
	_, err := h.w.Write(b)
	if err == nil {
		err = h.w.Flush()
	}
	return h.fail(err)
}

func (h *history) fail(err error) error {
	if err != nil && h.err == nil {
		h.err = fmt.Errorf("lbm: write history: %w", err)
	}
	return h.err
}

// close flushes and closes the file once; later calls return the first error.
func (h *history) close() error {
	if h.closed {
		return h.err
	}
	h.closed = true
	if err := h.w.Flush(); err != nil {
		h.fail(err)
	}
	if err := h.f.Close(); err != nil {
		h.fail(err)
	}
	return h.err
}

// writeSummary logs the case, the lattice parameters and the caution.
func writeSummary(w io.Writer, c Case, p params, l *lattice, bc *boundary) {
	if c.Title != "" {
		fmt.Fprintf(w, "case: %s\n", c.Title)
	}
	fmt.Fprintf(w, "caution: a 2D laminar demonstrator for the sweep workflow, not a design tool for real vehicles\n")
	fluid := 0
	for _, r := range l.runs {
		fluid += r.n
	}
	fmt.Fprintf(w, "domain: %.4g × %.4g (reference lengths), %d × %d cells, %d cells per length, %d fluid nodes\n",
		float64(p.nx)/float64(p.n), float64(p.ny)/float64(p.n), p.nx, p.ny, p.n, fluid)
	fmt.Fprintf(w, "body: %s, %d boundary links\n", c.Body.Shape, len(bc.body))
	fmt.Fprintf(w, "flow: Re = %g, %s inflow (ramp %g), bottom %s, top %s\n",
		c.Flow.Reynolds, c.Flow.Inflow, p.ramp, orDefault(c.Flow.Bottom, "wall"), orDefault(c.Flow.Top, "wall"))
	fmt.Fprintf(w, "lattice: U = %.4g, peak inflow %.4g (Mach %.3f), nu = %.4g, tau+ = %.4f, tau- = %.4f (TRT, magic 1/4)\n",
		p.u, p.u*p.peak, p.u*p.peak*math.Sqrt(3), p.nu, p.tauPlus, p.tauMinus)
	fmt.Fprintf(w, "time: %d steps of %.4g (end t = %.4g), a row every %d steps\n",
		p.steps, p.dt, float64(p.steps)*p.dt, p.outEvery)
	if cr := c.Flow.Reynolds / float64(p.n); cr > 12 {
		fmt.Fprintf(w, "warning: %.3g cells per length at Re %g is coarse (Re per cell %.1f); results may be under-resolved\n", float64(p.n), c.Flow.Reynolds, cr)
	}
}

func orDefault(s, d string) string {
	if s == "" {
		return d
	}
	return s
}
