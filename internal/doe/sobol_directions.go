package doe

// joeKuo holds the primitive polynomials and initial direction integers of
// Joe & Kuo (2008), file new-joe-kuo-6.21201, for dimensions 2 to 21:
// degree s, the polynomial's interior coefficients a packed as a binary
// integer (most significant first), and the s initial direction integers
// m_1..m_s (each odd and below 2^i). Dimension 1 is the van der Corput
// sequence (all m_i = 1) and has no row. The test TestSobolDirectionTable
// compares this table with a copy of the published file.
var joeKuo = [...]struct {
	s, a uint32
	m    []uint32
}{
	{1, 0, []uint32{1}},                        // d = 2
	{2, 1, []uint32{1, 3}},                     // d = 3
	{3, 1, []uint32{1, 3, 1}},                  // d = 4
	{3, 2, []uint32{1, 1, 1}},                  // d = 5
	{4, 1, []uint32{1, 1, 3, 3}},               // d = 6
	{4, 4, []uint32{1, 3, 5, 13}},              // d = 7
	{5, 2, []uint32{1, 1, 5, 5, 17}},           // d = 8
	{5, 4, []uint32{1, 1, 5, 5, 5}},            // d = 9
	{5, 7, []uint32{1, 1, 7, 11, 19}},          // d = 10
	{5, 11, []uint32{1, 1, 5, 1, 1}},           // d = 11
	{5, 13, []uint32{1, 1, 1, 3, 11}},          // d = 12
	{5, 14, []uint32{1, 3, 5, 5, 31}},          // d = 13
	{6, 1, []uint32{1, 3, 3, 9, 7, 49}},        // d = 14
	{6, 13, []uint32{1, 1, 1, 15, 21, 21}},     // d = 15
	{6, 16, []uint32{1, 3, 1, 13, 27, 49}},     // d = 16
	{6, 19, []uint32{1, 1, 1, 15, 7, 5}},       // d = 17
	{6, 22, []uint32{1, 3, 1, 15, 13, 25}},     // d = 18
	{6, 25, []uint32{1, 1, 5, 5, 19, 61}},      // d = 19
	{7, 1, []uint32{1, 3, 7, 11, 23, 15, 103}}, // d = 20
	{7, 4, []uint32{1, 3, 7, 13, 13, 15, 69}},  // d = 21
}

// MaxSobolDim is the largest dimension Sobol supports: dimension 1 plus the
// rows of the Joe & Kuo (2008) table embedded in the package.
const MaxSobolDim = len(joeKuo) + 1
