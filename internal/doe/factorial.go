package doe

// FullFactorial returns every combination of levels[i] equally spaced
// levels per factor, in the unit cube. Level j of n sits at j/(n-1); a
// factor with one level sits at 0.5. The first factor varies slowest, so
// the run order reads like a nested loop over the factors.
//
// It panics if levels is empty or any entry is below 1.
func FullFactorial(levels []int) [][]float64 {
	if len(levels) == 0 {
		panic("doe: full factorial needs at least one factor")
	}
	n := 1
	for _, l := range levels {
		if l < 1 {
			panic("doe: a factor needs at least one level")
		}
		n *= l
	}
	pts := make([][]float64, n)
	idx := make([]int, len(levels))
	for r := range pts {
		p := make([]float64, len(levels))
		for i, l := range levels {
			if l == 1 {
				p[i] = 0.5
			} else {
				p[i] = float64(idx[i]) / float64(l-1)
			}
		}
		pts[r] = p
		for i := len(levels) - 1; i >= 0; i-- {
			idx[i]++
			if idx[i] < levels[i] {
				break
			}
			idx[i] = 0
		}
	}
	return pts
}
