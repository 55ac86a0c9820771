package doe

import "math/bits"

// sobolBits is the number of binary digits of the unscrambled sequence, as
// in the reference generator of Joe & Kuo (2008): at most 2^32 points.
const sobolBits = 32

// owenBits is the number of binary digits of a scrambled coordinate: the
// 52 fraction bits a float64 can hold below 1.
const owenBits = 52

// SobolOptions selects variants of the Sobol' sequence. The zero value is
// the plain sequence starting at the origin.
type SobolOptions struct {
	// SkipZero drops point 0, which is the origin of the unscrambled
	// sequence (a corner of the cube). The first 2^m points returned are
	// then points 1..2^m, which no longer form a net; with Scramble it is
	// rarely wanted.
	SkipZero bool
	// Scramble applies Owen's nested uniform scrambling, randomised by Seed.
	Scramble bool
	// Seed selects the scrambling; it is ignored without Scramble.
	Seed uint64
}

// Sobol generates the Sobol' low-discrepancy sequence (Sobol' 1967, "On the
// distribution of points in a cube and the approximate evaluation of
// integrals", USSR Comput. Math. Math. Phys. 7) in [0,1)^dim with the
// direction numbers of Joe & Kuo (2008), "Constructing Sobol sequences with
// better two-dimensional projections", SIAM J. Sci. Comput. 30
// (new-joe-kuo-6.21201), dimension 1 being van der Corput's sequence.
//
// Points come in Gray-code order (Antonov & Saleev 1979): point i+1 is
// point i with the direction number V_c XOR-ed in, c the position of the
// lowest zero bit of i, exactly as in the reference program of Joe & Kuo.
// For every m, points 0..2^m − 1 are the same set as in natural order, and
// form a (t, m, dim)-net in base 2: in particular each coordinate puts
// exactly one point in each of the 2^m intervals [j/2^m, (j+1)/2^m).
//
// With scrambling, each coordinate's binary digits pass through Owen's
// nested uniform scrambling (Owen 1995, "Randomly permuted (t,m,s)-nets and
// (t,s)-sequences", in Monte Carlo and Quasi-Monte Carlo Methods in
// Scientific Computing, LNS 106): digit i is flipped by a random bit chosen
// independently for every value of the digits above it, which permutes
// elementary intervals among themselves and so keeps the net property,
// while each point becomes uniform on [0,1)^dim. The random bit of each
// node of the digit tree is drawn from a 64-bit hash (the SplitMix64
// finaliser) of the node, the dimension and the seed, so no tree is stored.
// Scrambled coordinates carry 52 random digits and are offset by half a
// unit of the last digit, so they lie strictly inside (0,1).
type Sobol struct {
	dim  int
	v    [][sobolBits]uint32 // v[j][i]: direction number V_{i+1} of dimension j, scaled by 2^32
	x    []uint32            // unscrambled digits of point idx
	idx  uint64              // index of the point Next returns
	keys []uint64            // scrambling keys per dimension, nil if unscrambled
}

// NewSobol returns a generator of the dim-dimensional Sobol' sequence.
//
// It panics if dim is not in [1, MaxSobolDim].
func NewSobol(dim int, opts SobolOptions) *Sobol {
	if dim < 1 || dim > MaxSobolDim {
		panic("doe: Sobol dimension out of range [1, MaxSobolDim]")
	}
	s := &Sobol{dim: dim, v: make([][sobolBits]uint32, dim), x: make([]uint32, dim)}
	for i := range sobolBits {
		s.v[0][i] = 1 << (sobolBits - 1 - i)
	}
	for j := 1; j < dim; j++ {
		row := joeKuo[j-1]
		deg := int(row.s)
		m := make([]uint32, sobolBits)
		copy(m, row.m)
		// m_i = 2a_1 m_{i−1} ⊕ 2²a_2 m_{i−2} ⊕ … ⊕ 2^{s−1}a_{s−1} m_{i−s+1}
		//       ⊕ 2^s m_{i−s} ⊕ m_{i−s}   (Bratley & Fox 1988, eq. for m_i)
		for i := deg; i < sobolBits; i++ {
			mi := m[i-deg] ^ (m[i-deg] << deg)
			for q := 1; q < deg; q++ {
				if (row.a>>(deg-1-q))&1 == 1 {
					mi ^= m[i-q] << q
				}
			}
			m[i] = mi
		}
		for i := range sobolBits {
			s.v[j][i] = m[i] << (sobolBits - 1 - i)
		}
	}
	if opts.Scramble {
		s.keys = make([]uint64, dim)
		for j := range s.keys {
			s.keys[j] = mix64(opts.Seed ^ mix64(uint64(j)+0x632be59bd9b4e019))
		}
	}
	if opts.SkipZero {
		s.advance()
	}
	return s
}

// Dim returns the dimension of the points.
func (s *Sobol) Dim() int { return s.dim }

// Index returns the sequence index of the point Next will return.
func (s *Sobol) Index() uint64 { return s.idx }

// Next returns the next point of the sequence as a new slice.
//
// It panics after 2^32 − 1 points, the length of the 32-digit sequence.
func (s *Sobol) Next() []float64 {
	p := make([]float64, s.dim)
	s.NextTo(p)
	return p
}

// NextTo writes the next point of the sequence into dst.
//
// It panics if len(dst) != Dim() or after 2^32 − 1 points.
func (s *Sobol) NextTo(dst []float64) {
	if len(dst) != s.dim {
		panic("doe: Sobol destination length mismatch")
	}
	for j, x := range s.x {
		if s.keys == nil {
			dst[j] = float64(x) / (1 << sobolBits)
		} else {
			dst[j] = (float64(owenScramble(x, s.keys[j])) + 0.5) / (1 << owenBits)
		}
	}
	s.advance()
}

// Points returns the next n points of the sequence.
func (s *Sobol) Points(n int) [][]float64 {
	if n < 0 {
		panic("doe: negative number of points")
	}
	pts := make([][]float64, n)
	flat := make([]float64, n*s.dim)
	for i := range pts {
		pts[i] = flat[i*s.dim : (i+1)*s.dim : (i+1)*s.dim]
		s.NextTo(pts[i])
	}
	return pts
}

// advance moves to the next index in Gray-code order.
func (s *Sobol) advance() {
	c := bits.TrailingZeros64(^s.idx) // lowest zero bit of idx
	if c >= sobolBits {
		panic("doe: Sobol sequence exhausted (2^32 points)")
	}
	for j := range s.x {
		s.x[j] ^= s.v[j][c]
	}
	s.idx++
}

// owenScramble applies nested uniform scrambling to the 32 digits of x
// (extended by zeros to 52 digits) and returns the 52 scrambled digits.
// Digit i (i = 0 the most significant) is flipped by a random bit that
// depends only on key and on the node of the binary digit tree, i.e. on i
// and the i original digits above it: node = 2^i + prefix.
func owenScramble(x uint32, key uint64) uint64 {
	v := uint64(x) << (owenBits - sobolBits)
	var out uint64
	for i := range owenBits {
		shift := owenBits - 1 - i
		node := uint64(1)<<i | v>>(shift+1)
		flip := mix64(key^mix64(node)) >> 63
		out |= ((v>>shift)&1 ^ flip) << shift
	}
	return out
}

// SobolPoints returns the first n points of the dim-dimensional Sobol'
// sequence with the given options; see Sobol. Taking n a power of two keeps
// the net balance (with SkipZero off).
//
// It panics if dim is not in [1, MaxSobolDim] or n < 0.
func SobolPoints(n, dim int, opts SobolOptions) [][]float64 {
	return NewSobol(dim, opts).Points(n)
}
