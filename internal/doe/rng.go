package doe

import "math/rand/v2"

// Stream constants keep the random numbers of different designs apart when
// a caller uses the same seed for several of them. Each is an arbitrary odd
// 64-bit constant; only their being distinct matters.
const (
	streamLatin   uint64 = 0x9e3779b97f4a7c15
	streamMorris  uint64 = 0xbf58476d1ce4e5b9
	streamUniform uint64 = 0x94d049bb133111eb
)

// newRand returns a PCG generator (O'Neill 2014, as implemented by
// math/rand/v2) seeded from seed on the given stream.
func newRand(seed, stream uint64) *rand.Rand {
	return rand.New(rand.NewPCG(seed, stream))
}

// mix64 is the SplitMix64 output function (Steele, Lea & Flood 2014,
// "Fast splittable pseudorandom number generators", OOPSLA): a bijection of
// the 64-bit integers whose output bits all depend on every input bit.
func mix64(z uint64) uint64 {
	z ^= z >> 30
	z *= 0xbf58476d1ce4e5b9
	z ^= z >> 27
	z *= 0x94d049bb133111eb
	z ^= z >> 31
	return z
}
