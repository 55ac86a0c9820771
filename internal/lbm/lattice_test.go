package lbm

import (
	"math"
	"math/rand"
	"testing"
)

// randomLattice returns an nx × ny lattice with random populations near
// equilibrium and a few solid nodes.
func randomLattice(nx, ny int, tau float64, seed int64) *lattice {
	l := newLattice(nx, ny, 1/tau, 1/(0.5+magic/(tau-0.5)))
	rng := rand.New(rand.NewSource(seed))
	for k := range l.flag {
		if l.flag[k] == nodeFluid && rng.Float64() < 0.05 {
			l.flag[k] = nodeSolid
		}
	}
	l.buildRuns()
	for q := 0; q < 9; q++ {
		for k := 0; k < l.NN; k++ {
			l.src[q*l.NS+k] = wq[q] * (1 + 0.2*(rng.Float64()-0.5))
		}
	}
	return l
}

// mrtBasis is the orthogonal moment basis of Lallemand and Luo (2000, Phys.
// Rev. E 61, 6546), rows ρ, e, ε, j_x, q_x, j_y, q_y, p_xx, p_xy, in this
// package's direction order.
var mrtBasis = [9][9]float64{
	{1, 1, 1, 1, 1, 1, 1, 1, 1},
	{-4, -1, -1, -1, -1, 2, 2, 2, 2},
	{4, -2, -2, -2, -2, 1, 1, 1, 1},
	{0, 1, 0, -1, 0, 1, -1, -1, 1},
	{0, -2, 0, 2, 0, 1, -1, -1, 1},
	{0, 0, 1, 0, -1, 1, 1, -1, -1},
	{0, 0, -2, 0, 2, 1, 1, -1, -1},
	{0, 1, -1, 1, -1, 0, 0, 0, 0},
	{0, 0, 0, 0, 0, 1, -1, 1, -1},
}

// collideReference relaxes the populations f of one node in moment space,
// written directly from the definition of a multiple-relaxation-time
// collision (Lallemand and Luo 2000): m = M f, m* = m − S (m − M e), f* =
// M⁻¹ m*, with the incompressible equilibrium of He and Luo (1997),
//
//	e_q = w_q (ρ + 3 c_q·j + 9/2 (c_q·j)² − 3/2 j²),
//
// the even moments ε, p_xx, p_xy relaxed at ω⁺, the energy e at ω_e and
// the odd moments q_x, q_y at ω⁻ (the rates of the conserved ρ, j do not
// matter). With ω_e = ω⁺, as the package uses, this is the TRT collision of
// Ginzburg, Verhaeghe and d'Humières (2008).
func collideReference(f [9]float64, op, om, oe float64) [9]float64 {
	var rho, jx, jy float64
	for q := 0; q < 9; q++ {
		rho += f[q]
		jx += float64(cx[q]) * f[q]
		jy += float64(cy[q]) * f[q]
	}
	var e [9]float64
	for q := 0; q < 9; q++ {
		cj := float64(cx[q])*jx + float64(cy[q])*jy
		e[q] = wq[q] * (rho + 3*cj + 4.5*cj*cj - 1.5*(jx*jx+jy*jy))
	}
	rates := [9]float64{0, oe, op, 0, om, 0, om, op, op}
	var out [9]float64
	out = f
	for r, row := range mrtBasis {
		var m, meq, norm float64
		for q := 0; q < 9; q++ {
			m += row[q] * f[q]
			meq += row[q] * e[q]
			norm += row[q] * row[q]
		}
		for q := 0; q < 9; q++ {
			out[q] -= rates[r] * (m - meq) * row[q] / norm
		}
	}
	return out
}

// Ensure that the fused, split-pass kernel computes exactly the collision
// of its definition and streams each result to the right
// neighbour, for every fluid node and no solid node (rounding only: the
// moment-space form takes about twenty operations per population, so allow
// 2e-14 relative).
func TestKernelMatchesDefinition(t *testing.T) {
	for _, tau := range []float64{0.51, 0.6, 1.3} {
		l := randomLattice(150, 7, tau, 1) // 150 > 2 chunks, so chunk seams are covered
		for k := range l.dst {
			l.dst[k] = math.NaN()
		}
		newStepper(l, 1).collideStream()
		worst := 0.0
		for j := 0; j < l.ny; j++ {
			for i := 0; i < l.nx; i++ {
				k := l.index(i, j)
				if l.flag[k] != nodeFluid {
					continue
				}
				var f [9]float64
				for q := range f {
					f[q] = l.src[q*l.NS+k]
				}
				want := collideReference(f, l.omegaPlus, l.omegaMinus, l.omegaPlus)
				for q := 0; q < 9; q++ {
					got := l.dst[q*l.NS+k+cx[q]+cy[q]*l.NX]
					worst = math.Max(worst, math.Abs(got-want[q])/want[q])
				}
			}
		}
		if worst > 2e-14 {
			t.Errorf("τ = %g: kernel differs from the collision's definition by %.3g (relative)", tau, worst)
		}
		// No fluid node pushed into a solid node's own slot q = 0.
		for k, fl := range l.flag {
			if fl == nodeSolid && !math.IsNaN(l.dst[k]) {
				t.Fatalf("τ = %g: solid node %d was collided", tau, k)
			}
		}
	}
}

// Ensure that the collision conserves mass and momentum and leaves the
// equilibrium unchanged (properties of any lattice Boltzmann collision;
// exact to rounding, 1e-15).
func TestCollisionInvariants(t *testing.T) {
	rng := rand.New(rand.NewSource(3))
	for it := 0; it < 1000; it++ {
		var f, e [9]float64
		jx, jy := 0.1*(rng.Float64()-0.5), 0.1*(rng.Float64()-0.5)
		rho := 1 + 0.1*(rng.Float64()-0.5)
		for q := 0; q < 9; q++ {
			f[q] = wq[q] * (1 + 0.3*(rng.Float64()-0.5))
			cj := float64(cx[q])*jx + float64(cy[q])*jy
			e[q] = wq[q] * (rho + 3*cj + 4.5*cj*cj - 1.5*(jx*jx+jy*jy))
		}
		tau := 0.5 + 0.01 + rng.Float64()
		op, om := 1/tau, 1/(0.5+magic/(tau-0.5))
		g := collideReference(f, op, om, op)
		var m0, m1, mx0, mx1, my0, my1 float64
		for q := 0; q < 9; q++ {
			m0 += f[q]
			m1 += g[q]
			mx0 += float64(cx[q]) * f[q]
			mx1 += float64(cx[q]) * g[q]
			my0 += float64(cy[q]) * f[q]
			my1 += float64(cy[q]) * g[q]
		}
		if math.Abs(m1-m0) > 1e-15 || math.Abs(mx1-mx0) > 1e-15 || math.Abs(my1-my0) > 1e-15 {
			t.Fatalf("collision changed mass by %.3g, momentum by (%.3g, %.3g)", m1-m0, mx1-mx0, my1-my0)
		}
		h := collideReference(e, op, om, op)
		for q := 0; q < 9; q++ {
			if math.Abs(h[q]-e[q]) > 1e-15 {
				t.Fatalf("equilibrium is not a fixed point: q = %d moved by %.3g", q, h[q]-e[q])
			}
		}
	}
}

// Ensure that splitting the rows among goroutines gives bit-identical
// results.
func TestThreadsBitIdentical(t *testing.T) {
	a := randomLattice(90, 37, 0.53, 5)
	b := randomLattice(90, 37, 0.53, 5)
	for step := 0; step < 5; step++ {
		newStepper(a, 1).collideStream()
		newStepper(b, 3).collideStream()
		a.swap()
		b.swap()
	}
	for k := range a.src {
		if a.src[k] != b.src[k] && !(math.IsNaN(a.src[k]) && math.IsNaN(b.src[k])) {
			t.Fatalf("slot %d: 1 thread %v, 3 threads %v", k, a.src[k], b.src[k])
		}
	}
}

// Ensure that a channel with the parabolic inflow and no body carries plane
// Poiseuille flow: the velocity profile stays u(y) = 6 Ū y (H − y)/H²
// downstream and the pressure falls with dp/dx = −12 ρ ν Ū / H² (the exact
// steady solution of the Navier-Stokes equations between parallel plates;
// common practice). This checks the viscosity the relaxation time gives,
// the wall placement of the halfway bounce-back and the inlet. Tolerance:
// 0.5 % of the peak speed for the profile and 0.5 % for the gradient, just
// above the discretisation error of order 1/H² = 0.4 % at H = 16 cells.
func TestPoiseuilleChannel(t *testing.T) {
	c, err := parseCase([]byte(`
[domain]
length = 8.0
height = 1.0
cells_per_length = 16
[flow]
reynolds = 10.0
inflow = "parabolic"
[body]
shape = "cylinder"
center = [4.0, 0.5]
diameter = 0.4
[run]
steps = 1
output_interval = 1.0
output = "unused"
`))
	if err != nil {
		t.Fatal(err)
	}
	p, err := c.lattice()
	if err != nil {
		t.Fatal(err)
	}
	p.shape = cylinder{xc: -100, yc: -100, d: 1} // no body in the channel
	l := newLattice(p.nx, p.ny, 1/p.tauPlus, 1/p.tauMinus)
	bc := buildBoundary(l, c, p)
	st := newStepper(l, 1)
	for step := 0; step < 30000; step++ {
		st.collideStream()
		bc.apply(l, 1)
		l.swap()
	}
	H, U := float64(p.ny), p.u
	worst := 0.0
	for j := 0; j < p.ny; j++ {
		y := float64(j) + 0.5
		_, ux, uy := l.moments(l.index(p.nx/2, j))
		want := 6 * U * y * (H - y) / (H * H)
		worst = math.Max(worst, math.Max(math.Abs(ux-want), math.Abs(uy))/(1.5*U))
	}
	t.Logf("profile error %.3f %% of the peak speed", 100*worst)
	if worst > 0.005 {
		t.Errorf("velocity profile off by %.2f %% of the peak speed", 100*worst)
	}
	i1, i2 := p.nx/4, 3*p.nx/4
	var r1, r2 float64
	for j := 0; j < p.ny; j++ {
		a, _, _ := l.moments(l.index(i1, j))
		b, _, _ := l.moments(l.index(i2, j))
		r1 += a / H
		r2 += b / H
	}
	got := (r1 - r2) / 3 / float64(i2-i1) // −dp/dx with p = ρ/3
	want := 12 * p.nu * U / (H * H)
	t.Logf("pressure gradient %.6g, analytic %.6g (%+.2f %%)", got, want, 100*(got-want)/want)
	if math.Abs(got-want)/want > 0.005 {
		t.Errorf("pressure gradient %.6g, want %.6g within 0.5 %%", got, want)
	}
}
