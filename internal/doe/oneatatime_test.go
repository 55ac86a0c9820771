package doe

import "testing"

// Ensure the one-factor-at-a-time plan (common practice): the baseline
// once, then each factor alone at its low and its high, others at the
// baseline; 1 + 2k runs when no bound equals the baseline.
func TestOneAtATime(t *testing.T) {
	base := []float64{0.5, 0.25, 0.75}
	got := OneAtATime(base, nil, nil)
	want := [][]float64{
		{0.5, 0.25, 0.75},
		{0, 0.25, 0.75}, {1, 0.25, 0.75},
		{0.5, 0, 0.75}, {0.5, 1, 0.75},
		{0.5, 0.25, 0}, {0.5, 0.25, 1},
	}
	if len(got) != len(want) {
		t.Fatalf("runs = %d, want %d", len(got), len(want))
	}
	for i := range want {
		for j := range want[i] {
			if got[i][j] != want[i][j] {
				t.Errorf("run %d = %v, want %v", i, got[i], want[i])
				break
			}
		}
	}
	got[0][0] = 9
	if base[0] != 0.5 {
		t.Error("design shares memory with the baseline")
	}
}

// Ensure that runs equal to the baseline or repeating a low are left out.
func TestOneAtATimeNoRepeats(t *testing.T) {
	got := OneAtATime([]float64{0, 0.5}, []float64{0, 0.4}, []float64{0.2, 0.4})
	want := [][]float64{{0, 0.5}, {0.2, 0.5}, {0, 0.4}}
	if !sameRuns(got, want, 0) || len(got) != 3 {
		t.Errorf("runs %v, want %v", got, want)
	}
}

func TestOneAtATimePanics(t *testing.T) {
	mustPanic(t, "empty", func() { OneAtATime(nil, nil, nil) })
	mustPanic(t, "length", func() { OneAtATime([]float64{0.5}, []float64{0, 0}, nil) })
	mustPanic(t, "range", func() { OneAtATime([]float64{1.5}, nil, nil) })
}
