package doe

// OneAtATime returns a one-factor-at-a-time design around a baseline in the
// unit cube (common practice in engineering studies; see e.g. Daniel 1973,
// "One-at-a-time plans", J. Amer. Statist. Assoc. 68): the baseline first,
// then for each factor j in turn the baseline with factor j moved to
// low[j], then to high[j]. A nil low means 0 for every factor and a nil
// high means 1. A run equal to the baseline (a factor whose low or high
// equals its baseline value, or a high equal to its low) is left out, so no
// run is repeated; with all
// low and high distinct from the baseline there are 1 + 2k runs.
//
// It panics if baseline is empty, low or high has the wrong length, or any
// value lies outside [0,1].
func OneAtATime(baseline, low, high []float64) [][]float64 {
	k := len(baseline)
	if k == 0 {
		panic("doe: one-at-a-time design needs a baseline")
	}
	if low == nil {
		low = make([]float64, k)
	}
	if high == nil {
		high = make([]float64, k)
		for j := range high {
			high[j] = 1
		}
	}
	if len(low) != k || len(high) != k {
		panic("doe: one-at-a-time bounds length mismatch")
	}
	for j := range k {
		for _, v := range []float64{baseline[j], low[j], high[j]} {
			if !(v >= 0 && v <= 1) {
				panic("doe: one-at-a-time values must lie in [0,1]")
			}
		}
	}
	runs := [][]float64{append([]float64(nil), baseline...)}
	for j := range k {
		for i, v := range []float64{low[j], high[j]} {
			if v == baseline[j] || (i == 1 && v == low[j]) {
				continue
			}
			p := append([]float64(nil), baseline...)
			p[j] = v
			runs = append(runs, p)
		}
	}
	return runs
}
