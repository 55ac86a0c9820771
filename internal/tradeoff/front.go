package tradeoff

import (
	"fmt"
	"math"
	"slices"
)

// Dominates reports whether a dominates b: no worse in every objective
// and better in at least one (all minimised).
func Dominates(a, b []float64) bool {
	better := false
	for j := range a {
		if a[j] > b[j] {
			return false
		}
		if a[j] < b[j] {
			better = true
		}
	}
	return better
}

// Front returns the indices, in input order, of the points no other point
// dominates. Equal points are both on the front. The points are taken in
// lexicographic order, where any point's dominators come before it, and
// each is checked against the front found so far only: a dominated
// dominator is itself dominated by a front point, which then dominates
// the point too. That costs the number of points times the size of the
// front.
func Front(ys [][]float64) []int {
	order := make([]int, len(ys))
	for i := range order {
		order[i] = i
	}
	slices.SortStableFunc(order, func(a, b int) int {
		for j := range ys[a] {
			if c := cmpFloat(ys[a][j], ys[b][j]); c != 0 {
				return c
			}
		}
		return 0
	})
	var out []int
	for _, i := range order {
		on := true
		for _, k := range out {
			if Dominates(ys[k], ys[i]) {
				on = false
				break
			}
		}
		if on {
			out = append(out, i)
		}
	}
	slices.Sort(out)
	return out
}

// FrontWithin returns a front in which differences below eps[j] in
// objective j count as ties, by ε-box dominance (Laumanns, Thiele, Deb and
// Zitzler 2002, "Combining convergence and diversity in evolutionary
// multiobjective optimization", Evol. Comput. 10(3)): each point falls in
// the box of side eps it lies in, the boxes no other box dominates are
// kept, and of the points in a kept box the one nearest its lower corner
// (a point of the front) stands for it. A point that gains a negligible
// amount in one objective for a large loss in another then drops out,
// while dominance among boxes, unlike a tolerance on each comparison,
// stays transitive, so the result is never empty. An eps of 0 keeps that
// objective's values as they are.
func FrontWithin(ys [][]float64, eps []float64) []int {
	front := Front(ys)
	if len(front) == 0 {
		return nil
	}
	boxes := make([][]float64, len(front))
	for n, i := range front {
		boxes[n] = make([]float64, len(eps))
		for j, e := range eps {
			if e > 0 {
				boxes[n][j] = math.Floor(ys[i][j] / e)
			} else {
				boxes[n][j] = ys[i][j]
			}
		}
	}
	rep := map[string]int{} // box → index into front of its point
	for _, n := range Front(boxes) {
		key := fmt.Sprint(boxes[n])
		k, seen := rep[key]
		if !seen || corner(ys[front[n]], boxes[n], eps) < corner(ys[front[k]], boxes[k], eps) {
			rep[key] = n
		}
	}
	out := make([]int, 0, len(rep))
	for _, n := range rep {
		out = append(out, front[n])
	}
	slices.Sort(out)
	return out
}

// corner returns the scaled squared distance of y from its box's lower
// corner.
func corner(y, box, eps []float64) float64 {
	d := 0.0
	for j, e := range eps {
		if e > 0 {
			v := y[j]/e - box[j]
			d += v * v
		}
	}
	return d
}

// Layers returns each point's layer of non-dominated sorting: 1 for the
// front, 2 for the front of the rest, and so on.
func Layers(ys [][]float64) []int {
	layer := make([]int, len(ys))
	left := make([]int, len(ys))
	for i := range left {
		left[i] = i
	}
	for l := 1; len(left) > 0; l++ {
		sub := make([][]float64, len(left))
		for i, k := range left {
			sub[i] = ys[k]
		}
		on := Front(sub)
		var rest []int
		j := 0
		for i, k := range left {
			if j < len(on) && on[j] == i {
				layer[k] = l
				j++
			} else {
				rest = append(rest, k)
			}
		}
		left = rest
	}
	return layer
}

// Hypervolume returns the measure of the region the points dominate and
// the reference point bounds: the union of the boxes from each point to
// ref. Points not better than ref in every objective add nothing. It
// slices the region along the last objective (the HSO algorithm of While,
// Hingston, Barone and Huband 2006), which is exact and quick for the
// fronts of a study.
func Hypervolume(ys [][]float64, ref []float64) float64 {
	var pts [][]float64
	for _, y := range ys {
		inside := true
		for j := range ref {
			if !(y[j] < ref[j]) {
				inside = false
				break
			}
		}
		if inside {
			pts = append(pts, y)
		}
	}
	return hso(pts, ref, len(ref))
}

// hso returns the hypervolume of pts (all strictly inside ref) in their
// first m objectives.
func hso(pts [][]float64, ref []float64, m int) float64 {
	if len(pts) == 0 {
		return 0
	}
	switch m {
	case 1:
		lo := math.Inf(1)
		for _, p := range pts {
			lo = math.Min(lo, p[0])
		}
		return ref[0] - lo
	case 2:
		s := slices.Clone(pts)
		slices.SortFunc(s, func(a, b []float64) int {
			if a[0] != b[0] {
				return cmpFloat(a[0], b[0])
			}
			return cmpFloat(a[1], b[1])
		})
		v, top := 0.0, ref[1]
		for _, p := range s {
			if p[1] < top {
				v += (ref[0] - p[0]) * (top - p[1])
				top = p[1]
			}
		}
		return v
	}
	s := slices.Clone(pts)
	slices.SortFunc(s, func(a, b []float64) int { return cmpFloat(a[m-1], b[m-1]) })
	v := 0.0
	for i := range s {
		next := ref[m-1]
		if i+1 < len(s) {
			next = s[i+1][m-1]
		}
		if h := next - s[i][m-1]; h > 0 {
			v += h * hso(frontIn(s[:i+1], m-1), ref, m-1)
		}
	}
	return v
}

// frontIn returns the points not dominated in their first m objectives.
func frontIn(pts [][]float64, m int) [][]float64 {
	var out [][]float64
	for i, p := range pts {
		on := true
		for k, q := range pts {
			if k != i && (Dominates(q[:m], p[:m]) || (k < i && slices.Equal(q[:m], p[:m]))) {
				on = false
				break
			}
		}
		if on {
			out = append(out, p)
		}
	}
	return out
}

func cmpFloat(a, b float64) int {
	switch {
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}

// Improvement returns how much the hypervolume of front (bounded by ref)
// grows when y joins it.
func Improvement(front [][]float64, y, ref []float64) float64 {
	for j := range ref {
		if !(y[j] < ref[j]) {
			return 0
		}
	}
	for _, p := range front {
		if Dominates(p, y) || slices.Equal(p, y) {
			return 0
		}
	}
	if len(ref) == 2 {
		return improvement2(front, y, ref)
	}
	with := append(slices.Clone(front), y)
	return math.Max(Hypervolume(with, ref)-Hypervolume(front, ref), 0)
}

// improvement2 is Improvement in two objectives: the area y dominates
// that no front point does, swept along the first objective.
func improvement2(front [][]float64, y, ref []float64) float64 {
	// The front points that matter dominate part of y's box: sort them
	// by the first objective and walk y's box from left to right.
	var s [][]float64
	for _, p := range front {
		if p[0] < ref[0] && p[1] < ref[1] {
			s = append(s, p)
		}
	}
	slices.SortFunc(s, func(a, b []float64) int { return cmpFloat(a[0], b[0]) })
	// ceiling(x) is the lowest second objective of the front points at or
	// left of x: the area below it and above y is y's own.
	area := 0.0
	ceil := ref[1]
	x := y[0]
	k := 0
	for k < len(s) && s[k][0] <= x {
		ceil = math.Min(ceil, s[k][1])
		k++
	}
	for x < ref[0] {
		next := ref[0]
		if k < len(s) {
			next = math.Min(s[k][0], ref[0])
		}
		if h := ceil - y[1]; h > 0 {
			area += (next - x) * h
		}
		x = next
		if k < len(s) {
			ceil = math.Min(ceil, s[k][1])
			k++
		}
	}
	return area
}
