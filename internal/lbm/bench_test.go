package lbm

import (
	"testing"
	"time"
)

// BenchmarkCollideStream times the fused TRT collide-and-stream kernel on a
// 2048 × 2048 lattice (4.2 million nodes with the halo, 302 MB per
// distribution array) on one goroutine, and in the same run measures the
// plain memory-copy bandwidth B with copy() between two arrays of the same
// size (both touched first, so page faults are not counted). Each kernel
// step is followed by one timed copy, so both see the same load on a shared
// machine. A D2Q9 update reads 9 and writes 9 doubles, so the memory-bound
// limit is
//
//	limit = B / (18 · 8 bytes)  updates per second,
//
// with B counted as bytes read plus bytes written by copy(). The metrics are
// MLUPS, copy-GB/s (B), limit-MLUPS and frac = MLUPS / limit.
//
// Measured on the shared 2-core build machine (AMD EPYC, Go 1.26, GOAMD64
// v1), go test -bench CollideStream -benchtime 20x, seven runs at varying
// load: 80-99 MLUPS against a copy bandwidth of 29-32 GB/s (limit 200-221
// MLUPS), frac 0.39-0.46 (0.42-0.46 with the machine otherwise idle). The
// kernel alone, in cache, runs at about 105 MLUPS, so it is close to
// compute-bound; the rest of the gap is the write-allocate traffic of the
// nine destination streams, which copy() avoids with non-temporal stores.
// A single fused loop over the same arrays reached 0.29-0.36.
func BenchmarkCollideStream(b *testing.B) {
	const n = 2048
	l := newLattice(n, n, 1/0.6, 1/(0.5+0.25/0.1))
	// A gentle shear so the kernel works on a non-trivial state.
	for j := 0; j < n; j++ {
		for i := 0; i < n; i++ {
			k := l.index(i, j)
			l.src[1*l.NS+k] += 0.001 * float64(j%64) / 64
		}
	}
	s := newStepper(l, 1)
	s.collideStream() // touch dst
	l.swap()
	s.collideStream()
	l.swap()
	copy(l.dst, l.src)

	var kernel, cp time.Duration
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		t0 := time.Now()
		s.collideStream()
		l.swap()
		t1 := time.Now()
		copy(l.dst, l.src) // dst is rewritten by the next step
		kernel += t1.Sub(t0)
		cp += time.Since(t1)
	}
	b.StopTimer()

	mlups := float64(b.N) * float64(n*n) / kernel.Seconds() / 1e6
	bw := float64(b.N) * 2 * 8 * float64(len(l.src)) / cp.Seconds()
	limit := bw / (18 * 8) / 1e6
	b.ReportMetric(mlups, "MLUPS")
	b.ReportMetric(bw/1e9, "copy-GB/s")
	b.ReportMetric(limit, "limit-MLUPS")
	b.ReportMetric(mlups/limit, "frac")
}

// BenchmarkStepDFG times whole steps (kernel, boundaries, force) of the DFG
// 2D-2 case at 20 cells per diameter (440 × 82 nodes, small enough to stay
// in cache), on one and two goroutines. Measured: 84-92 MLUPS on one,
// 53-78 on two (on the shared 2-core machine a lattice this small gains
// nothing from a second goroutine).
func BenchmarkStepDFG(b *testing.B) {
	for _, threads := range []int{1, 2} {
		b.Run(map[int]string{1: "threads=1", 2: "threads=2"}[threads], func(b *testing.B) {
			c, err := LoadCase("testdata/dfg_2d2_cylinder.toml")
			if err != nil {
				b.Fatal(err)
			}
			p, err := c.lattice()
			if err != nil {
				b.Fatal(err)
			}
			l := newLattice(p.nx, p.ny, 1/p.tauPlus, 1/p.tauMinus)
			bc := buildBoundary(l, c, p)
			st := newStepper(l, threads)
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				st.collideStream()
				bc.apply(l, 1)
				l.swap()
			}
			b.ReportMetric(float64(b.N)*float64(p.nx*p.ny)/b.Elapsed().Seconds()/1e6, "MLUPS")
		})
	}
}
