// File: MSER-5, the marginal standard error rule for the end of the start-up
// transient (White 1997; batches of five, Spratt 1998; White, Cobb and
// Spratt 2000).

package estimate

// MSER5 returns the number of leading observations of y to discard as the
// initial transient, by the MSER-5 rule.
//
// The series is cut into k = ⌊n/5⌋ consecutive batches of five (a trailing
// incomplete batch is left out of the rule) with means Z_1..Z_k. For a
// truncation of d batches the marginal standard error statistic is
//
//	MSER(d) = 1/(k−d)² Σ_{j=d+1}^{k} (Z_j − Z̄_d)²,   Z̄_d = mean of Z_{d+1}..Z_k,
//
// that is, the squared width of a naive confidence interval of the
// remaining mean. It falls while removing biased early batches and rises
// once removing data only loses precision; d* minimises it and 5d* raw
// observations are discarded. The search is restricted to d ≤ k/2: a
// minimum in the second half means the run is too short to tell the warm-up
// from the rest, and the statistic becomes erratic when few batches remain
// (the cited practice also ignores the last batches for that reason; the
// half-run limit covers it). Ties go to the smaller d, so a constant series
// gives 0. MSER5 returns 0 when n < 10.
//
// For a strongly periodic signal the cut falls at an arbitrary phase, which
// is harmless; the half-run limit keeps it from taking the whole signal.
//
// References: K. P. White Jr., "An effective truncation heuristic for bias
// reduction in simulation output", Simulation 69(6) (1997) 323–334;
// S. C. Spratt, "Heuristics for the startup problem", M.S. thesis,
// University of Virginia (1998), for the batches of five; K. P. White Jr.,
// M. J. Cobb, S. C. Spratt, "A comparison of five steady-state truncation
// heuristics for simulation", Proc. 2000 Winter Simulation Conference,
// 755–760.
func MSER5(y []float64) int {
	d, _ := MSER(y, 5)
	return 5 * d
}

// MSER returns d* for batch size m and whether it hit the search limit k/2.
func MSER(y []float64, m int) (d int, atLimit bool) {
	k := len(y) / m
	if k < 2 {
		return 0, false
	}
	z := make([]float64, k)
	for j := range z {
		var s float64
		for _, v := range y[j*m : (j+1)*m] {
			s += v
		}
		z[j] = s / float64(m)
	}
	// Welford's update from the end backwards gives Σ (Z_j − Z̄_d)² for
	// every d in one pass, exactly zero for equal batch means.
	dmax := k / 2
	var mean, m2 float64
	best := -1.0
	for j := k - 1; j >= 0; j-- {
		cnt := float64(k - j)
		delta := z[j] - mean
		mean += delta / cnt
		m2 += delta * (z[j] - mean)
		if j <= dmax {
			stat := m2 / (cnt * cnt)
			if best < 0 || stat <= best {
				best, d = stat, j
			}
		}
	}
	return d, d == dmax && dmax > 0
}
