package trainer

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
)

// TestBoostGradByCells checks the cell sums against the definition of the
// partial derivative, sum_r a[r, h_i(r)], summed row by row: the cells
// only regroup the sum (exact arithmetic identity; common practice, no
// source), so the two agree to rounding.
func TestBoostGradByCells(t *testing.T) {
	tests := []struct {
		name   string
		k      int
		groups func(n int) [][]int
		levels int // distinct vote patterns a group's voters share
	}{
		{"two classes, one group per voter", 2, singles, 2},
		{"two classes, shared column", 2, triples, 5},
		{"two classes, groups of two", 2, pairs, 5},
		{"four classes, shared column", 4, all, 7},
		{"too many cells for a group", 3, all, 1 << 20},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			const rows, nv = 3000, 12
			rng := rand.New(rand.NewPCG(7, 1))
			// Voters of a group are functions of a shared row level, as the
			// stumps of one column are functions of the row's value.
			level := make([]int, rows)
			for r := range level {
				level[r] = rng.IntN(tc.levels)
			}
			votes := make([][]uint8, nv)
			for i := range votes {
				votes[i] = make([]uint8, rows)
				m := make(map[int]uint8)
				for r, l := range level {
					if _, ok := m[l]; !ok || tc.levels > 100 {
						m[l] = uint8(rng.IntN(tc.k))
					}
					votes[i][r] = m[l]
				}
			}
			a := make([]float64, rows*tc.k)
			for i := range a {
				a[i] = rng.NormFloat64()
			}
			got := make([]float64, nv)
			boostGrad(got, votes, makeCells(votes, rows, tc.k, tc.groups(nv)), a, tc.k)
			for i := range votes {
				var want float64
				for r, c := range votes[i] {
					want += a[r*tc.k+int(c)]
				}
				if math.Abs(got[i]-want) > 1e-9*math.Max(1, math.Abs(want)) {
					t.Errorf("voter %d: %v by cells, %v by rows", i, got[i], want)
				}
			}
		})
	}
}

func singles(n int) [][]int {
	g := make([][]int, n)
	for i := range g {
		g[i] = []int{i}
	}
	return g
}

func pairs(n int) [][]int {
	var g [][]int
	for i := 0; i < n; i += 2 {
		g = append(g, []int{i, i + 1})
	}
	return g
}

func triples(n int) [][]int {
	var g [][]int
	for i := 0; i < n; i += 3 {
		g = append(g, []int{i, i + 1, i + 2})
	}
	return g
}

func all(n int) [][]int {
	g := []int{}
	for i := range n {
		g = append(g, i)
	}
	return [][]int{g}
}

// TestBoostStepMinimises checks the Newton step worked from the softmax
// probabilities against the loss along the voter written out from its
// definition, sum_r logsumexp(F_r + t e_h(r)) - F_r,y_r: at the returned
// step its derivative, sum_r p_r,h(r)(t) - [h(r) = y_r] with p the
// softmax worked out with exp, is zero, or positive when the step sits on
// its lower limit (first-order condition of a convex function on a
// half-line; common practice, no source).
func TestBoostStepMinimises(t *testing.T) {
	tests := []struct {
		name   string
		k      int
		spread float64 // scale of the class scores
		lo     float64
	}{
		{"two classes", 2, 1, math.Inf(-1)},
		{"three classes", 3, 2, math.Inf(-1)},
		{"ten classes, large scores", 10, 40, math.Inf(-1)},
		{"on the lower limit", 3, 1, 0.05},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			rng := rand.New(rand.NewPCG(7, uint64(tc.k)))
			const rows = 500
			f := make([]float64, rows*tc.k)
			for i := range f {
				f[i] = tc.spread * rng.NormFloat64()
			}
			y := make([]int, rows)
			h := make([]uint8, rows)
			for r := range y {
				y[r] = rng.IntN(tc.k)
				h[r] = uint8(y[r])
				if rng.Float64() < 0.3 {
					h[r] = uint8(rng.IntN(tc.k))
				}
			}
			a, prob := make([]float64, rows*tc.k), make([]float64, rows*tc.k)
			boostSlope(f, a, prob, y, tc.k)
			step := boostStep(prob, h, y, tc.k, tc.lo)
			var d1 float64
			for r := range y {
				fr := f[r*tc.k : (r+1)*tc.k]
				mx := math.Inf(-1)
				for j, v := range fr {
					if j == int(h[r]) {
						v += step
					}
					mx = math.Max(mx, v)
				}
				var z float64
				for j, v := range fr {
					if j == int(h[r]) {
						v += step
					}
					z += math.Exp(v - mx)
				}
				d1 += math.Exp(fr[h[r]]+step-mx) / z
				if int(h[r]) == y[r] {
					d1--
				}
			}
			if step > tc.lo && math.Abs(d1) > 1e-8*rows {
				t.Errorf("step %v: derivative %v, want 0", step, d1)
			}
			if step == tc.lo && d1 < -1e-8*rows {
				t.Errorf("step at the limit %v: derivative %v, want >= 0", step, d1)
			}
			if tc.lo > math.Inf(-1) && step < tc.lo {
				t.Errorf("step %v below the limit %v", step, tc.lo)
			}
		})
	}
}

// BenchmarkBoostWeights times the boosted vote's fit on the shape the
// trainer gives it at 200,000 rows of 50 numeric columns: a sample of
// 6,000 prior rows, 32 threshold stumps a column and 33 linear voters
// (voters beyond the CV budget, so every round up to boostRounds runs).
func BenchmarkBoostWeights(b *testing.B) {
	for _, k := range []int{2, 3} {
		b.Run(fmt.Sprintf("classes=%d", k), func(b *testing.B) {
			const rows, cols, cuts, linear = 6000, 50, 32, 33
			rng := rand.New(rand.NewPCG(3, 4))
			y := make([]int, rows)
			x := make([][]float64, cols)
			for j := range x {
				x[j] = make([]float64, rows)
				for r := range x[j] {
					x[j][r] = rng.NormFloat64()
				}
			}
			for r := range y {
				s := x[0][r] + 0.5*x[1][r] - 0.3*x[2][r] + rng.NormFloat64()
				y[r] = min(k-1, int(max(0, s+float64(k)/2)))
			}
			var votes [][]uint8
			var groups [][]int
			for j := range cols {
				var g []int
				for c := range cuts {
					cut := -2 + 4*float64(c)/cuts
					v := make([]uint8, rows)
					for r := range v {
						if x[j][r] > cut {
							v[r] = uint8((c + 1) % k)
						} else {
							v[r] = uint8(c % k)
						}
					}
					g = append(g, len(votes))
					votes = append(votes, v)
				}
				groups = append(groups, g)
			}
			for range linear {
				v := make([]uint8, rows)
				for r := range v {
					v[r] = uint8(min(k-1, int(max(0, x[rng.IntN(cols)][r]+float64(k)/2))))
				}
				groups = append(groups, []int{len(votes)})
				votes = append(votes, v)
			}
			b.ResetTimer()
			for range b.N {
				boostWeights(votes, y, k, groups, 1)
			}
		})
	}
}
