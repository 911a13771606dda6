package trainer

import (
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
