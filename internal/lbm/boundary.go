package lbm

import "math"

// The boundary pass runs after the kernel, on dst. For every fluid node k
// and direction q whose source node k − c_q is not fluid, the population
// f_q(k) entering the fluid is unknown and a rule computes it from values
// the kernel has just written. Because the kernel pushes, the post-collision
// population f*_o(k) that left k towards a non-fluid node s = k + c_o
// (o = q̄) sits in the slot of s. Wall and body rules read only such slots
// and slots no rule writes, so they run in any order; the inlet and the
// outlet read wall results at the corners and run after them.

// link is one linear rule
//
//	dst[to] = a·dst[s1] + b·dst[s2] + c·s(t)
//
// with s(t) the inflow ramp factor.
type link struct {
	to, s1, s2 int
	a, b, c    float64
}

// bodyLink is a rule for a population entering the fluid from the body. s1
// always holds f*_o(k), the population that hit the wall, for the momentum
// exchange; (ex, ey) = c_o is the direction into the wall.
type bodyLink struct {
	link
	ex, ey float64
}

// outletNode is a node of the last column with its unknown populations
// (those with cx = −1) and the node upstream of it.
type outletNode struct {
	k, up int
	q     [3]int
	nq    int
}

// boundary holds the rules for one lattice.
type boundary struct {
	walls   []link       // bottom and top walls
	body    []bodyLink   // body surface
	inlet   []int        // flat indices of the first column's nodes
	profile []float64    // inflow speed of each row, lattice units
	outlet  []outletNode // last column
	beta    float64      // weight of the pressure rule at the outlet
}

// cs is the lattice speed of sound, 1/√3.
var cs = 1 / math.Sqrt(3)

// buildBoundary flags the body's solid nodes and builds every rule. Node
// (i, j) sits at ((i + 1/2)/n, (j + 1/2)/n) in case coordinates, so the
// halfway walls are at y = 0 and y = ny/n.
func buildBoundary(l *lattice, c Case, p params) *boundary {
	n := float64(p.n)
	pos := func(i, j int) (float64, float64) { return (float64(i) + 0.5) / n, (float64(j) + 0.5) / n }
	for j := 0; j < l.ny; j++ {
		for i := 0; i < l.nx; i++ {
			if x, y := pos(i, j); p.shape.inside(x, y) {
				l.flag[l.index(i, j)] = nodeSolid
			}
		}
	}
	l.buildRuns()

	NS := l.NS
	slot := func(q, k int) int { return q*NS + k }
	fluid := func(i, j int) bool {
		return i >= 0 && j >= 0 && i < l.nx && j < l.ny && l.flag[l.index(i, j)] == nodeFluid
	}

	b := &boundary{beta: cs / float64(l.nx), profile: make([]float64, l.ny)}
	height := float64(l.ny)
	for j := range b.profile {
		b.profile[j] = p.u
		if c.Flow.Inflow == "parabolic" {
			y := float64(j) + 0.5
			b.profile[j] = 1.5 * p.u * 4 * y * (height - y) / (height * height)
		}
	}

	for j := 0; j < l.ny; j++ {
		for i := 0; i < l.nx; i++ {
			k := l.index(i, j)
			if l.flag[k] != nodeFluid {
				continue
			}
			if i == 0 {
				b.inlet = append(b.inlet, k)
			}
			var on outletNode
			for q := 1; q < 9; q++ {
				si, sj := i-cx[q], j-cy[q]
				if fluid(si, sj) || (i == 0 && cx[q] == 1) { // inlet rule
					continue
				}
				s := k - cx[q] - cy[q]*l.NX // source node (solid or halo)
				o := opp[q]
				bb := link{to: slot(q, k), s1: slot(o, s), a: 1}
				switch {
				case si >= 0 && sj >= 0 && si < l.nx && sj < l.ny: // body
					x, y := pos(i, j)
					d := wallFraction(p.shape, x, y, float64(cx[o])/n, float64(cy[o])/n)
					bl := bodyLink{link: bb, ex: float64(cx[o]), ey: float64(cy[o])}
					switch {
					case d < 0.5 && fluid(i+cx[q], j+cy[q]):
						// f_q(k) = 2δ f*_o(k) + (1 − 2δ) f*_o(k + c_q)
						bl.a, bl.s2, bl.b = 2*d, slot(o, k), 1-2*d
					case d >= 0.5:
						// f_q(k) = f*_o(k)/(2δ) + (2δ − 1)/(2δ) f*_q(k)
						bl.a, bl.s2, bl.b = 1/(2*d), slot(q, k+cx[q]+cy[q]*l.NX), (2*d-1)/(2*d)
					}
					b.body = append(b.body, bl)
				case (sj < 0 || sj >= l.ny) && !slipEnd(c, q, sj, i, l.nx): // wall
					kind := c.Flow.Top
					if sj < 0 {
						kind = c.Flow.Bottom
					}
					switch kind {
					case "moving":
						// Moving wall u_w = (U s(t), 0): f_q = f*_o − 6 w_o ρ₀ c_o·u_w.
						bb.c = 6 * wq[q] * float64(cx[q]) * p.u
					case "slip":
						// Specular reflection: the population arriving with
						// (cx, cy) left node (i − cx, j) with (cx, −cy) and
						// was pushed to the halo node beside k.
						if cx[q] != 0 && fluid(i-cx[q], j) {
							bb.s1 = slot(dirOf(cx[q], -cy[q]), k-cy[q]*l.NX)
						}
					}
					b.walls = append(b.walls, bb)
				default: // outlet, corners of slip walls included
					on.q[on.nq] = q
					on.nq++
				}
			}
			if on.nq > 0 {
				on.k, on.up = k, k-1
				b.outlet = append(b.outlet, on)
			}
		}
	}
	return b
}

// slipEnd reports whether the population arriving at column i with
// direction q from beyond a slip wall (row sj) would be the mirror image of
// one that came from beyond the inlet or outlet; that population belongs to
// the inlet or outlet rule.
func slipEnd(c Case, q, sj, i, nx int) bool {
	kind := c.Flow.Top
	if sj < 0 {
		kind = c.Flow.Bottom
	}
	m := i - cx[q]
	return kind == "slip" && cx[q] != 0 && (m < 0 || m >= nx)
}

// dirOf returns the direction index of the lattice velocity (ex, ey).
func dirOf(ex, ey int) int {
	for q := 0; q < 9; q++ {
		if cx[q] == ex && cy[q] == ey {
			return q
		}
	}
	panic("lbm: not a D2Q9 velocity")
}

// apply runs every rule on l.dst for the ramp factor s and returns the force
// on the body in lattice units.
//
// Walls are halfway bounce-back, f_q(k) = f*_o(k), plus −6 w_o c_o·u_w for
// the moving ground (Ladd 1994, J. Fluid Mech. 271, 285-309); a slip wall
// reflects populations specularly.
//
// The body uses the linear interpolated bounce-back of Bouzidi, Firdaouss
// and Lallemand (2001, Phys. Fluids 13, 3452-3459). With δ the fraction of
// the link from k to the wall:
//
//	δ < 1/2:  f_q(k) = 2δ f*_o(k) + (1 − 2δ) f*_o(k + c_q)
//	δ ≥ 1/2:  f_q(k) = f*_o(k)/(2δ) + (2δ − 1)/(2δ) f*_q(k)
//
// falling back to plain bounce-back when δ < 1/2 and k + c_q is not fluid.
// The force is the momentum exchange (Ladd 1994)
//
//	F = Σ_links c_o (f*_o(k) + f_q(k, t+1)),
//
// which for a body at rest equals the Galilean-invariant form of Wen et al.
// (2014, J. Comput. Phys. 266, 161-170), whose extra terms carry the wall
// velocity.
//
// The inlet imposes u = (s(t) u_in(y), 0) on the first column of nodes with
// the rule of Zou and He (1997, Phys. Fluids 9, 1591-1598) written for the
// incompressible equilibrium:
//
//	f_1 = f_3 + 2/3 u_x,  f_5 = f_7 − (f_2 − f_4)/2 + u_x/6,
//	f_8 = f_6 + (f_2 − f_4)/2 + u_x/6.
//
// (A bounce-back inlet was tried first; with the TRT collision it goes
// unstable at Re/n above about 10.)
//
// The outlet is partially non-reflecting: each unknown population is the
// blend
//
//	f_q(k) = β f_q^ABB(k) + (1 − β) f_q(k − 1),  β = c_s / n_x,
//
// of zero-gradient extrapolation, which lets pressure waves leave, and the
// anti-bounce-back constant-pressure rule (Krüger et al. 2017, The Lattice
// Boltzmann Method, Springer, sect. 5.3.4)
//
//	f_q^ABB(k) = −f*_o(k) + 2 w_q (ρ_out − 3/2 u_w² + 9/2 (c_q·u_w)²),
//
// with ρ_out = 1 and u_w = u(k) + (u(k) − u(k−1))/2 from the velocities at
// the start of the step, which holds the mean pressure. β sets the pressure
// relaxation to about one sound crossing of the domain, as the relaxation
// constant of Rudy and Strikwerda (1980, J. Comput. Phys. 36, 55-70) does
// (from memory). With a fully reflecting outlet the channel rings as a
// quarter-wave resonator, whose third harmonic can lock onto the shedding.
func (b *boundary) apply(l *lattice, s float64) (fx, fy float64) {
	d := l.dst
	for _, w := range b.walls {
		d[w.to] = w.a*d[w.s1] + w.b*d[w.s2] + w.c*s
	}
	for _, w := range b.body {
		out := d[w.s1]
		in := w.a*out + w.b*d[w.s2]
		d[w.to] = in
		fx += w.ex * (out + in)
		fy += w.ey * (out + in)
	}
	NS, NX := l.NS, l.NX
	for _, k := range b.inlet {
		ux := b.profile[k/NX-1] * s
		f2, f3, f4, f6, f7 := d[2*NS+k], d[3*NS+k], d[4*NS+k], d[6*NS+k], d[7*NS+k]
		d[1*NS+k] = f3 + 2.0/3*ux
		d[5*NS+k] = f7 - 0.5*(f2-f4) + ux/6
		d[8*NS+k] = f6 + 0.5*(f2-f4) + ux/6
	}
	beta := b.beta
	for _, on := range b.outlet {
		_, ux, uy := l.moments(on.k)
		_, vx, vy := l.moments(on.up)
		ux, uy = 1.5*ux-0.5*vx, 1.5*uy-0.5*vy
		for _, q := range on.q[:on.nq] {
			cu := float64(cx[q])*ux + float64(cy[q])*uy
			abb := -d[opp[q]*NS+on.k-cx[q]-cy[q]*NX] + 2*wq[q]*(1-1.5*(ux*ux+uy*uy)+4.5*cu*cu)
			d[q*NS+on.k] = beta*abb + (1-beta)*d[q*NS+on.up]
		}
	}
	return fx, fy
}

// rampFactor returns sin²(π t / (2 T)) for 0 ≤ t < T and 1 afterwards.
func rampFactor(t, T float64) float64 {
	if t >= T {
		return 1
	}
	if t <= 0 {
		return 0
	}
	s := math.Sin(0.5 * math.Pi * t / T)
	return s * s
}
