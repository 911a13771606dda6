package voters

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"
)

// TestSumOrderMatchesPlan checks that SumOrder lists the voters in the
// order the panel evaluator adds their weights.
func TestSumOrderMatchesPlan(t *testing.T) {
	rng := rand.New(rand.NewPCG(41, 42))
	tab := randomTable(rng, 3000, 3, 0.05)
	perm := rng.Perm(tab.Rows)
	p, err := BuildPool(tab, perm[:1000], PoolConfig{Thresholds: 5}, rand.New(rand.NewPCG(1, 1)))
	if err != nil {
		t.Fatal(err)
	}
	w := make([]float64, len(p.Voters))
	keep := make([]bool, len(w))
	for i := range w {
		if rng.IntN(4) > 0 {
			w[i], keep[i] = rng.Float64(), true
		}
	}
	// Shuffle the pool so that groups interleave, as in a trimmed pool.
	vs := slices.Clone(p.Voters)
	rng.Shuffle(len(vs), func(i, j int) {
		vs[i], vs[j], w[i], w[j], keep[i], keep[j] = vs[j], vs[i], w[j], w[i], keep[j], keep[i]
	})
	v := &Vote{Voters: vs, Weights: w, Classes: p.Classes}
	if err := v.Bind(tab); err != nil {
		t.Fatal(err)
	}
	pl := newPlan(vs, keep, 3, nil)
	var want []int
	for _, g := range pl.nums {
		for _, c := range g.cuts {
			for _, s := range c.stumps {
				want = append(want, s.vi)
			}
		}
	}
	for _, g := range pl.cats {
		for _, l := range g.levels {
			for _, s := range l.stumps {
				want = append(want, s.vi)
			}
		}
	}
	for _, r := range pl.rest {
		want = append(want, r.vi)
	}
	if got := v.SumOrder(); !slices.Equal(got, want) {
		t.Fatalf("SumOrder %v,\nplan order %v", got, want)
	}
}

// TestPredictIndependentOfLevels checks that a row's margin does not
// depend on which levels the rest of the table holds. The weights are
// chosen so that the order of the sum shows in the last bit:
// (0.1 + 0.2) + 0.6 = 0.9 and (0.1 + 0.6) + 0.2 = 0.8999999999999999 in
// float64 (IEEE 754 rounding, checked with Python's float).
func TestPredictIndependentOfLevels(t *testing.T) {
	v := &Vote{Classes: []string{"no", "yes"}, Weights: []float64{0.1, 0.2, 0.6}, Voters: []Voter{
		&CategoryStump{Column: "c", Level: "x", Equal: 0, Other: 1},
		&CategoryStump{Column: "c", Level: "y", Equal: 0, Other: 1},
		&CategoryStump{Column: "c", Level: "z", Equal: 0, Other: 1},
	}}
	cases := []struct {
		name   string
		levels []string
		code   uint32 // of "q"
	}{
		{"every level present", []string{"q", "x", "y", "z"}, 0},
		{"x and z absent", []string{"q", "y"}, 0},
		{"only q", []string{"q"}, 0},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			tab := table([]string{"no", "yes"}, []int{0}, catCol("c", tc.levels, tc.code))
			cls, margins, err := v.Predict(tab, []int{0})
			if err != nil {
				t.Fatal(err)
			}
			if cls[0] != 1 || margins[0] != 0.9 {
				t.Fatalf("class %d margin %v, want 1 and 0.9 (the sum in SumOrder's order)", cls[0], margins[0])
			}
		})
	}
}

// TestNegativeZeroThreshold checks that the panel evaluator puts both
// zeros at or below a threshold of -0, as Stump.Predict does (IEEE 754:
// -0 == +0, so +0 <= -0).
func TestNegativeZeroThreshold(t *testing.T) {
	negZero := math.Copysign(0, -1)
	tab := table([]string{"a", "b"}, []int{0, 0, 0, 0}, numCol("x", 0, negZero, -1, 1))
	s := &Stump{Column: "x", Threshold: negZero, Below: 0, Above: 1}
	v := &Vote{Voters: []Voter{s}, Weights: []float64{1}, Classes: tab.Classes}
	cls, _, err := v.Predict(tab, allRows(tab))
	if err != nil {
		t.Fatal(err)
	}
	for r := range cls {
		if want := s.Predict(r); cls[r] != want {
			t.Errorf("row %d (x = %v): vote says %d, the stump %d", r, tab.Columns[0].Num[r], cls[r], want)
		}
	}
}
