package doe

import (
	"math"
	"testing"
)

// Ensure the trajectory structure of Morris (1991): r(k+1) rows; every
// coordinate on the grid {0, 1/(p−1), …, 1}; each step changes exactly one
// coordinate by ±Δ, Δ = p/(2(p−1)) (to rounding of l/(p−1), 1e-15); every
// factor moves exactly once per trajectory.
func TestMorrisTrajectorySteps(t *testing.T) {
	for _, tc := range []struct{ k, p, r int }{{1, 2, 3}, {3, 4, 10}, {6, 6, 8}, {10, 8, 5}} {
		pts := Morris(tc.k, MorrisOptions{Levels: tc.p, Trajectories: tc.r, Seed: 9})
		delta := MorrisDelta(tc.p)
		if len(pts) != tc.r*(tc.k+1) {
			t.Fatalf("k=%d: %d rows, want %d", tc.k, len(pts), tc.r*(tc.k+1))
		}
		for _, p := range pts {
			for _, x := range p {
				l := x * float64(tc.p-1)
				if math.Abs(l-math.Round(l)) > 1e-12 || x < 0 || x > 1 {
					t.Fatalf("coordinate %v off the %d-level grid", x, tc.p)
				}
			}
		}
		for tr := range tc.r {
			moved := make([]int, tc.k)
			for s := tr * (tc.k + 1); s < tr*(tc.k+1)+tc.k; s++ {
				changed := 0
				for j := range tc.k {
					d := pts[s+1][j] - pts[s][j]
					if d == 0 {
						continue
					}
					changed++
					moved[j]++
					if math.Abs(math.Abs(d)-delta) > 1e-15 {
						t.Errorf("k=%d p=%d: step of %v, Δ = %v", tc.k, tc.p, d, delta)
					}
				}
				if changed != 1 {
					t.Errorf("k=%d: step %d changes %d coordinates", tc.k, s, changed)
				}
			}
			for j, m := range moved {
				if m != 1 {
					t.Errorf("k=%d trajectory %d: factor %d moved %d times", tc.k, tr, j, m)
				}
			}
		}
	}
	if d := MorrisDelta(4); d != 2.0/3 {
		t.Errorf("Δ(p=4) = %v, want 2/3 (Morris 1991)", d)
	}
}

// Ensure that all p levels are equally likely (Morris 1991: with p even and
// Δ = p/(2(p−1)) the design samples every level with probability 1/p):
// counts over 4000 trajectories within 4 standard deviations. Derivation
// by hand of the standard deviation for p = 4: per trajectory, a factor
// visits a given level 0 times with probability ½ (its base level is the
// other of the two), else s times, s uniform on 1..k,
// so the count has variance (k+1)(2k+1)/12 − ((k+1)/4)² per trajectory.
func TestMorrisLevelFrequencies(t *testing.T) {
	const k, p, r = 4, 4, 4000
	pts := Morris(k, MorrisOptions{Levels: p, Trajectories: r, Seed: 21})
	mean := float64(r*(k+1)) / p
	sd := math.Sqrt(r * (float64((k+1)*(2*k+1))/12 - math.Pow(float64(k+1)/4, 2)))
	for j := range k {
		counts := make([]float64, p)
		for _, pt := range pts {
			counts[int(math.Round(pt[j]*(p-1)))]++
		}
		for l, c := range counts {
			if math.Abs(c-mean) > 4*sd {
				t.Errorf("factor %d level %d: %v visits, want %v ± %.0f", j, l, c, mean, 4*sd)
			}
		}
	}
}

// Ensure that a linear function y = b₀ + Σ b_j x_j gives exact elementary
// effects: μ_j = b_j, μ*_j = |b_j|, σ_j = 0 (Morris 1991: a factor with a
// linear, additive effect has constant elementary effects), abs 1e-12.
func TestMorrisLinearExact(t *testing.T) {
	b := []float64{3, -1.5, 0, 0.25, 10}
	pts := Morris(len(b), MorrisOptions{Trajectories: 12, Seed: 4})
	y := make([]float64, len(pts))
	for i, p := range pts {
		y[i] = 2
		for j, x := range p {
			y[i] += b[j] * x
		}
	}
	ee := MorrisEffects(pts, y, len(b))
	for j, bj := range b {
		if ee.N[j] != 12 {
			t.Errorf("factor %d: %d effects, want 12", j, ee.N[j])
		}
		if math.Abs(ee.Mu[j]-bj) > 1e-12 || math.Abs(ee.MuStar[j]-math.Abs(bj)) > 1e-12 || ee.Sigma[j] > 1e-12 {
			t.Errorf("factor %d: μ=%v μ*=%v σ=%v, want %v, %v, 0", j, ee.Mu[j], ee.MuStar[j], ee.Sigma[j], bj, math.Abs(bj))
		}
	}
}

// Ensure the reading of μ, μ* and σ on functions worked by hand:
//   - y = x₁² has effect ((x+Δ)² − x²)/Δ = 2x + Δ at lower level x,
//     whichever way the step goes (checked effect by effect, rel 1e-12);
//   - y = x₂x₃ + x₄ gives σ₂, σ₃ > 0 (interaction, Morris 1991) while the
//     additive x₄ has σ₄ = 0 and μ₄ = 1, and x₁, absent from it, has
//     μ*₁ = 0.
func TestMorrisHandFunctions(t *testing.T) {
	const k = 4
	pts := Morris(k, MorrisOptions{Levels: 6, Trajectories: 20, Seed: 8})
	delta := MorrisDelta(6)
	y := make([]float64, len(pts))
	for i, p := range pts {
		y[i] = p[0] * p[0]
	}
	ee := MorrisEffects(pts, y, k)
	var lows []float64
	for tr := 0; tr < len(pts); tr += k + 1 {
		for s := tr; s < tr+k; s++ {
			if pts[s][0] != pts[s+1][0] {
				lows = append(lows, min(pts[s][0], pts[s+1][0]))
			}
		}
	}
	for i, d := range ee.Effects[0] {
		if want := 2*lows[i] + delta; math.Abs(d-want) > 1e-12*want {
			t.Errorf("effect %d of x₁² = %v, want %v", i, d, want)
		}
	}
	for i, p := range pts {
		y[i] = p[1]*p[2] + p[3]
	}
	ee = MorrisEffects(pts, y, k)
	if ee.MuStar[0] != 0 || ee.Sigma[1] < 0.05 || ee.Sigma[2] < 0.05 || ee.Sigma[3] > 1e-12 || math.Abs(ee.Mu[3]-1) > 1e-12 {
		t.Errorf("y = x₂x₃ + x₄: μ* = %v, σ = %v, μ = %v", ee.MuStar, ee.Sigma, ee.Mu)
	}
}

// Ensure that a failed run (NaN response) removes only the effects of its
// two steps, and the remaining summaries stay exact for a linear function.
func TestMorrisFailedRun(t *testing.T) {
	const k = 3
	pts := Morris(k, MorrisOptions{Trajectories: 5, Seed: 2})
	y := make([]float64, len(pts))
	for i, p := range pts {
		y[i] = p[0] - 2*p[1] + 4*p[2]
	}
	y[5] = math.NaN() // row 1 of trajectory 2: its steps in and out are lost
	ee := MorrisEffects(pts, y, k)
	total := 0
	for _, n := range ee.N {
		total += n
	}
	if total != 5*k-2 {
		t.Errorf("%d effects kept, want %d", total, 5*k-2)
	}
	for j, b := range []float64{1, -2, 4} {
		if math.Abs(ee.Mu[j]-b) > 1e-12 || ee.Sigma[j] > 1e-12 {
			t.Errorf("factor %d: μ=%v σ=%v", j, ee.Mu[j], ee.Sigma[j])
		}
	}
	one := MorrisEffects(pts[:k+1], y[:k+1], k)
	for j := range k {
		if !math.IsNaN(one.Sigma[j]) {
			t.Errorf("σ from one effect = %v, want NaN", one.Sigma[j])
		}
	}
}

func TestMorrisPanics(t *testing.T) {
	mustPanic(t, "odd p", func() { Morris(3, MorrisOptions{Levels: 5, Trajectories: 2}) })
	mustPanic(t, "r", func() { Morris(3, MorrisOptions{}) })
	mustPanic(t, "k", func() { Morris(0, MorrisOptions{Trajectories: 1}) })
	pts := Morris(2, MorrisOptions{Trajectories: 2})
	mustPanic(t, "len", func() { MorrisEffects(pts, make([]float64, 5), 2) })
	mustPanic(t, "rows", func() { MorrisEffects(pts[:5], make([]float64, 5), 2) })
	bad := [][]float64{{0, 0}, {1, 1}, {1, 0}}
	mustPanic(t, "two factors", func() { MorrisEffects(bad, make([]float64, 3), 2) })
}
