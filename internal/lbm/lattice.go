package lbm

import (
	"math"
	"sync"
)

// D2Q9 velocity set (Qian, d'Humières and Lallemand 1992, Europhys. Lett.
// 17, 479). Direction q has the lattice velocity (cx[q], cy[q]) and the
// weight wq[q]; opp[q] is the direction with the opposite velocity. The pairs
// (1,3), (2,4), (5,7), (6,8) are the opposite pairs used by the
// two-relaxation-time collision.
var (
	cx  = [9]int{0, 1, 0, -1, 0, 1, -1, -1, 1}
	cy  = [9]int{0, 0, 1, 0, -1, 1, 1, -1, -1}
	opp = [9]int{0, 3, 4, 1, 2, 7, 8, 5, 6}
	wq  = [9]float64{4.0 / 9, 1.0 / 9, 1.0 / 9, 1.0 / 9, 1.0 / 9, 1.0 / 36, 1.0 / 36, 1.0 / 36, 1.0 / 36}
)

const (
	w0 = 4.0 / 9
	w1 = 1.0 / 9
	w2 = 1.0 / 36
)

// Node kinds stored in lattice.flag.
const (
	nodeFluid uint8 = iota // collided and streamed every step
	nodeSolid              // inside a body: never collided
	nodeHalo               // the one-cell frame around the domain
)

// chunk is the number of nodes the kernel handles per pass; its scratch
// arrays (3 × chunk doubles) and the chunk's populations stay in L1.
const chunk = 64

// run is a stretch of consecutive fluid nodes in one row: flat indices
// start, start+1, ..., start+n-1.
type run struct{ start, n int }

// lattice holds the distributions of an nx × ny fluid domain surrounded by a
// one-cell halo frame, so a row holds NX = nx+2 nodes. Node (i, j),
// 0 ≤ i < nx, 0 ≤ j < ny, has the flat index (j+1)·NX + i+1. The
// distributions are stored structure-of-arrays: population q of node k is
// f[q·NS+k]. The stream stride NS is the node count padded so that the nine
// streams start at different offsets modulo 4 KiB (avoiding false
// store-to-load dependencies between streams), and src and dst are cut from
// one allocation at a further offset for the same reason.
//
// The step is a fused collide-and-stream in push form: the kernel reads the
// nine populations of a node from src, relaxes them and writes each one to the
// neighbour it moves to in dst. Populations that leave the fluid land in the
// slots of solid or halo nodes, where the boundary pass (boundary.go) finds
// them and turns them into the populations that enter the fluid.
type lattice struct {
	nx, ny int // fluid domain size in cells
	NX     int // row length including the halo
	NN     int // node count including the halo
	NS     int // stream stride (≥ NN)
	src    []float64
	dst    []float64
	flag   []uint8

	runs     []run // fluid runs, row by row
	rowStart []int // runs of row j are runs[rowStart[j]:rowStart[j+1]]

	omegaPlus, omegaMinus float64 // TRT rates for the even and odd parts
}

// newLattice returns an nx × ny lattice at rest with unit density. All
// interior nodes are fluid; the frame is halo. Call buildRuns after
// changing flags.
func newLattice(nx, ny int, omegaPlus, omegaMinus float64) *lattice {
	if nx < 2 || ny < 2 {
		panic("lbm: lattice needs at least 2 × 2 cells")
	}
	NX := nx + 2
	NN := NX * (ny + 2)
	NS := NN
	for (NS*8)%4096 != 448 { // 9 streams spread over a 4 KiB page
		NS++
	}
	const dstShift = 28 // 224 bytes between the src and dst patterns
	buf := make([]float64, 18*NS+dstShift)
	l := &lattice{
		nx: nx, ny: ny, NX: NX, NN: NN, NS: NS,
		src:        buf[: 9*NS : 9*NS],
		dst:        buf[9*NS+dstShift:],
		flag:       make([]uint8, NN),
		omegaPlus:  omegaPlus,
		omegaMinus: omegaMinus,
	}
	for k := range l.flag {
		i, j := k%NX, k/NX
		if i == 0 || j == 0 || i == NX-1 || j == ny+1 {
			l.flag[k] = nodeHalo
		}
	}
	for q := 0; q < 9; q++ {
		s := l.src[q*NS : q*NS+NN]
		d := l.dst[q*NS : q*NS+NN]
		for k := range s {
			s[k] = wq[q]
			d[k] = wq[q]
		}
	}
	l.buildRuns()
	return l
}

// index returns the flat index of fluid-domain cell (i, j).
func (l *lattice) index(i, j int) int { return (j+1)*l.NX + i + 1 }

// buildRuns collects the fluid runs of every row.
func (l *lattice) buildRuns() {
	l.runs = l.runs[:0]
	l.rowStart = make([]int, l.ny+1)
	for j := 0; j < l.ny; j++ {
		l.rowStart[j] = len(l.runs)
		k0 := l.index(0, j)
		i := 0
		for i < l.nx {
			if l.flag[k0+i] != nodeFluid {
				i++
				continue
			}
			s := i
			for i < l.nx && l.flag[k0+i] == nodeFluid {
				i++
			}
			l.runs = append(l.runs, run{start: k0 + s, n: i - s})
		}
	}
	l.rowStart[l.ny] = len(l.runs)
}

// swap exchanges the source and destination arrays after a step.
func (l *lattice) swap() { l.src, l.dst = l.dst, l.src }

// moments returns the density and velocity of the node with flat index k,
// read from src (the populations after streaming and boundary handling,
// before the next collision). In the incompressible model the velocity is
// the momentum j = Σ c_q f_q divided by the reference density ρ₀ = 1.
func (l *lattice) moments(k int) (rho, ux, uy float64) {
	NS := l.NS
	f := l.src
	var jx, jy float64
	for q := 0; q < 9; q++ {
		v := f[q*NS+k]
		rho += v
		jx += float64(cx[q]) * v
		jy += float64(cy[q]) * v
	}
	return rho, jx, jy
}

// fastest returns the fluid cell with the largest speed and that speed, or
// the first cell whose state is not finite with a NaN speed, to locate a
// blow-up.
func (l *lattice) fastest() (i, j int, speed float64) {
	best := -1.0
	for jj := 0; jj < l.ny; jj++ {
		for ii := 0; ii < l.nx; ii++ {
			k := l.index(ii, jj)
			if l.flag[k] != nodeFluid {
				continue
			}
			_, ux, uy := l.moments(k)
			u := ux*ux + uy*uy
			if math.IsNaN(u) || math.IsInf(u, 0) {
				return ii, jj, math.NaN()
			}
			if u > best {
				best, i, j = u, ii, jj
			}
		}
	}
	return i, j, math.Sqrt(best)
}

// accelerate adds du[j]·ds to the x velocity of every fluid node in row j of
// dst, keeping each node's density and non-equilibrium part: the populations
// change by the difference of the equilibria at the new and the old
// velocity (the exact-difference forcing of Kupershtokh 2004, from memory),
// which in the incompressible model does not depend on the density.
func (l *lattice) accelerate(du []float64, ds float64) {
	NS := l.NS
	f := l.dst
	for j := 0; j < l.ny; j++ {
		dux := du[j] * ds
		for _, r := range l.runs[l.rowStart[j]:l.rowStart[j+1]] {
			for k := r.start; k < r.start+r.n; k++ {
				var ux, uy float64 // u = j/ρ₀
				for q := 0; q < 9; q++ {
					v := f[q*NS+k]
					ux += float64(cx[q]) * v
					uy += float64(cy[q]) * v
				}
				vx := ux + dux
				for q := 0; q < 9; q++ {
					cu0 := float64(cx[q])*ux + float64(cy[q])*uy
					cu1 := float64(cx[q])*vx + float64(cy[q])*uy
					f[q*NS+k] += wq[q] * (3*(cu1-cu0) + 4.5*(cu1*cu1-cu0*cu0) - 1.5*(vx*vx-ux*ux))
				}
			}
		}
	}
}

// scratch holds the per-node moments of one chunk between the kernel's
// passes.
type scratch struct {
	g, jx, jy [chunk]float64
}

// collideStreamRows runs the kernel over the fluid runs of rows j0 ≤ j < j1.
func (l *lattice) collideStreamRows(j0, j1 int, sc *scratch) {
	for _, r := range l.runs[l.rowStart[j0]:l.rowStart[j1]] {
		for off := 0; off < r.n; off += chunk {
			l.collideStreamChunk(r.start+off, min(chunk, r.n-off), sc)
		}
	}
}

// collideStreamChunk relaxes n consecutive fluid nodes starting at flat
// index base with the two-relaxation-time (TRT) operator and pushes the
// results to their neighbours. With the even and odd parts of an opposite
// pair (q, q̄)
//
//	f⁺ = (f_q + f_q̄)/2,  f⁻ = (f_q − f_q̄)/2
//
// and the same split of the incompressible equilibrium (He and Luo 1997)
//
//	e⁺ = w_q (ρ − 3/2 j² + 9/2 (c_q·j)²),  e⁻ = 3 w_q c_q·j,  j = Σ c_q f_q,
//
// the post-collision populations are
//
//	f*_q = f_q − ω⁺ (f⁺ − e⁺) − ω⁻ (f⁻ − e⁻)
//	f*_q̄ = f_q̄ − ω⁺ (f⁺ − e⁺) + ω⁻ (f⁻ − e⁻)
//
// (Ginzburg, Verhaeghe and d'Humières 2008, Commun. Comput. Phys. 3,
// 427-478). Written as f*_q = A f_q + B f_q̄ + ω⁺e⁺ + ω⁻e⁻ with
// A = 1 − (ω⁺+ω⁻)/2 and B = (ω⁻−ω⁺)/2.
//
// The work is split into three passes over the chunk (moments and the rest
// population; the two axis pairs; the two diagonal pairs). Each pass keeps
// few values live, so the compiled loops run without register spills, which
// is worth about 25 % over a single fused loop. All slices in a pass have
// the same length, so the compiler drops the bounds checks.
func (l *lattice) collideStreamChunk(base, n int, sc *scratch) {
	NX, NS := l.NX, l.NS
	op, om := l.omegaPlus, l.omegaMinus
	src, dst := l.src, l.dst
	G := sc.g[:n]
	JX := sc.jx[:n]
	JY := sc.jy[:n]

	// Pass 1: moments, the rest population.
	{
		s0 := src[0*NS+base:][:n]
		s1 := src[1*NS+base:][:n]
		s2 := src[2*NS+base:][:n]
		s3 := src[3*NS+base:][:n]
		s4 := src[4*NS+base:][:n]
		s5 := src[5*NS+base:][:n]
		s6 := src[6*NS+base:][:n]
		s7 := src[7*NS+base:][:n]
		s8 := src[8*NS+base:][:n]
		d0 := dst[0*NS+base:][:n]
		a0, c0 := 1-op, op*w0
		JX, JY := JX[:n], JY[:n]
		for i := range G {
			f0 := s0[i]
			p1, m1 := s1[i]+s3[i], s1[i]-s3[i]
			p2, m2 := s2[i]+s4[i], s2[i]-s4[i]
			p5, m5 := s5[i]+s7[i], s5[i]-s7[i]
			p6, m6 := s6[i]+s8[i], s6[i]-s8[i]
			rho := (f0 + p1) + (p2 + (p5 + p6))
			jx := m1 + (m5 - m6)
			jy := m2 + (m5 + m6)
			g := rho - 1.5*(jx*jx+jy*jy) // ρ − 3/2 u², u = j/ρ₀
			G[i], JX[i], JY[i] = g, jx, jy
			d0[i] = a0*f0 + c0*g
		}
	}
	A := 1 - 0.5*op - 0.5*om
	B := 0.5*om - 0.5*op

	// Pass 2: pairs (1,3) and (2,4).
	{
		s1 := src[1*NS+base:][:n]
		s2 := src[2*NS+base:][:n]
		s3 := src[3*NS+base:][:n]
		s4 := src[4*NS+base:][:n]
		d1 := dst[1*NS+base+1:][:n]
		d2 := dst[2*NS+base+NX:][:n]
		d3 := dst[3*NS+base-1:][:n]
		d4 := dst[4*NS+base-NX:][:n]
		JX, JY := JX[:n], JY[:n]
		cp, cm := op*w1, 3*om*w1
		for i, g := range G {
			fa, fb := s1[i], s3[i]
			j := JX[i]
			P := cp * (g + 4.5*j*j)
			M := cm * j
			d1[i] = (A*fa + B*fb) + (P + M)
			d3[i] = (A*fb + B*fa) + (P - M)
			fa, fb = s2[i], s4[i]
			j = JY[i]
			P = cp * (g + 4.5*j*j)
			M = cm * j
			d2[i] = (A*fa + B*fb) + (P + M)
			d4[i] = (A*fb + B*fa) + (P - M)
		}
	}

	// Pass 3: pairs (5,7) and (6,8).
	{
		s5 := src[5*NS+base:][:n]
		s6 := src[6*NS+base:][:n]
		s7 := src[7*NS+base:][:n]
		s8 := src[8*NS+base:][:n]
		d5 := dst[5*NS+base+NX+1:][:n]
		d6 := dst[6*NS+base+NX-1:][:n]
		d7 := dst[7*NS+base-NX-1:][:n]
		d8 := dst[8*NS+base-NX+1:][:n]
		JX, JY := JX[:n], JY[:n]
		cp, cm := op*w2, 3*om*w2
		for i, g := range G {
			jx, jy := JX[i], JY[i]
			fa, fb := s5[i], s7[i]
			j := jx + jy
			P := cp * (g + 4.5*j*j)
			M := cm * j
			d5[i] = (A*fa + B*fb) + (P + M)
			d7[i] = (A*fb + B*fa) + (P - M)
			fa, fb = s6[i], s8[i]
			j = jy - jx
			P = cp * (g + 4.5*j*j)
			M = cm * j
			d6[i] = (A*fa + B*fb) + (P + M)
			d8[i] = (A*fb + B*fa) + (P - M)
		}
	}
}

// stepper runs the kernel on a fixed number of goroutines. Rows are split
// into contiguous bands, one per goroutine; each destination slot is written
// by exactly one source node, so bands never write the same memory.
type stepper struct {
	l       *lattice
	bands   []int // band t covers rows bands[t] ≤ j < bands[t+1]
	scratch []scratch
}

func newStepper(l *lattice, threads int) *stepper {
	threads = max(1, min(threads, l.ny))
	s := &stepper{l: l, bands: make([]int, threads+1), scratch: make([]scratch, threads)}
	for t := 0; t <= threads; t++ {
		s.bands[t] = t * l.ny / threads
	}
	return s
}

// collideStream runs the kernel over the whole domain.
func (s *stepper) collideStream() {
	if len(s.scratch) == 1 {
		s.l.collideStreamRows(0, s.l.ny, &s.scratch[0])
		return
	}
	var wg sync.WaitGroup
	for t := range s.scratch {
		wg.Add(1)
		go func() {
			defer wg.Done()
			s.l.collideStreamRows(s.bands[t], s.bands[t+1], &s.scratch[t])
		}()
	}
	wg.Wait()
}
