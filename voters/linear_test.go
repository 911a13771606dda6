package voters

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"

	"surety/datasets"
)

// TestLinearSeparable: on a table every column of which separates the
// classes with a wide gap, every linear voter (random columns, bootstrap
// sample; and the full voter, last) classifies all the prior rows, so its
// bootstrap sample too.
func TestLinearSeparable(t *testing.T) {
	for _, k := range []int{2, 3} {
		t.Run(fmt.Sprintf("%d classes", k), func(t *testing.T) {
			rng := rand.New(rand.NewPCG(uint64(k), 7))
			const m = 300
			tab := &datasets.Table{Source: "separable", Rows: m, Label: make([]int, m)}
			for c := range k {
				tab.Classes = append(tab.Classes, fmt.Sprintf("c%d", c))
			}
			latent := make([]float64, m)
			for i := range latent {
				tab.Label[i] = rng.IntN(k)
				latent[i] = 4*float64(tab.Label[i]) + rng.Float64()
			}
			for j := range 6 {
				c := datasets.Column{Name: fmt.Sprintf("x%d", j), Kind: datasets.Numeric, Num: make([]float64, m)}
				for i := range c.Num {
					c.Num[i] = float64(j+1)*latent[i] + 0.2*rng.Float64()
				}
				tab.Columns = append(tab.Columns, c)
			}
			// One-hot inputs too: a categorical column equal to the class.
			cat := datasets.Column{Name: "tag", Kind: datasets.Categorical, Codes: make([]uint32, m), Levels: tab.Classes}
			for i := range cat.Codes {
				cat.Codes[i] = uint32(tab.Label[i])
			}
			tab.Columns = append(tab.Columns, cat)
			eight := 8
			p, err := BuildPool(tab, allRows(tab), PoolConfig{LinearVoters: &eight, Thresholds: 1}, rand.New(rand.NewPCG(9, 9)))
			if err != nil {
				t.Fatal(err)
			}
			linear := 0
			for i, v := range p.Voters {
				l, ok := v.(*Linear)
				if !ok {
					continue
				}
				if p.OutOfBag[i] != nil {
					linear++
				} else if i != len(p.Voters)-1 || p.OutOfFold[i] == nil {
					t.Fatalf("linear voter %d has no out-of-bag rows and is not the full voter", i)
				}
				for r := range m {
					if got := l.Predict(r); got != tab.Label[r] {
						t.Fatalf("voter on %v misclassifies row %d: %d, want %d", l.Columns(), r, got, tab.Label[r])
					}
				}
			}
			if linear != 8 {
				t.Fatalf("%d bootstrap linear voters, want 8", linear)
			}
		})
	}
}

func TestLinearMissingIsMean(t *testing.T) {
	tab := table([]string{"a", "b"}, []int{0, 0, 1, 1}, numCol("x", 1, 2, 3, 4))
	l, err := FitLinear(tab, allRows(tab), allRows(tab), []string{"x"}, 0.01)
	if err != nil {
		t.Fatal(err)
	}
	// The prior-row mean, 2.5, and a missing cell both give the intercept.
	probe := table([]string{"a", "b"}, []int{0, 0}, numCol("x", 2.5, nan()))
	if err := l.Bind(probe); err != nil {
		t.Fatal(err)
	}
	if a, b := l.score(1, 0), l.score(1, 1); a != b {
		t.Fatalf("score of the mean %v, of a missing cell %v; want equal", a, b)
	}
}

func TestFitLinearErrors(t *testing.T) {
	tab := table([]string{"a", "b"}, []int{0, 1}, numCol("x", 1, 2))
	cases := []struct {
		name string
		cols []string
		l2   float64
	}{
		{"unknown column", []string{"nope"}, 0.01},
		{"zero L2", []string{"x"}, 0},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			if _, err := FitLinear(tab, []int{0, 1}, []int{0, 1}, tc.cols, tc.l2); err == nil {
				t.Fatal("no error")
			}
		})
	}
}

// TestLinearPredictSkipsZeroClass checks that Predict, which takes class
// 0's score of a two-class voter as 0 without working it out, picks the
// class that the largest of the worked-out scores picks (ties to the lower
// class), on cells that make a term infinite or NaN.
func TestLinearPredictSkipsZeroClass(t *testing.T) {
	big := math.MaxFloat64
	cells := []float64{0, 1, -1, big, -big, math.Inf(1), math.Inf(-1), nan(), 1e-300}
	var xs, zs []float64
	for _, x := range cells {
		for _, z := range cells {
			xs, zs = append(xs, x), append(zs, z)
		}
	}
	labels := make([]int, len(xs))
	tab := table([]string{"a", "b"}, labels, numCol("x", xs...), numCol("z", zs...))
	cases := []struct {
		name    string
		weights []float64
		bias    float64
	}{
		{"positive", []float64{2, 3}, 0.5},
		{"mixed", []float64{-2, 3}, -0.5},
		{"a zero weight", []float64{0, 1}, 0},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			l := &Linear{
				Inputs: []LinearInput{
					{Column: "x", Kind: datasets.Numeric, Mean: -big / 2, Scale: 1},
					{Column: "z", Kind: datasets.Numeric, Mean: 1, Scale: 3},
				},
				Weights: [][]float64{{0, 0}, tc.weights},
				Bias:    []float64{0, tc.bias},
			}
			if err := l.Bind(tab); err != nil {
				t.Fatal(err)
			}
			if !l.zeroFirst {
				t.Fatal("zeroFirst not set")
			}
			for r := range xs {
				want, bestScore := 0, math.Inf(-1)
				for c := range 2 {
					if s := l.score(c, r); s > bestScore {
						want, bestScore = c, s
					}
				}
				if got := l.Predict(r); got != want {
					t.Errorf("x=%v z=%v: Predict %d, scores worked out give %d", xs[r], zs[r], got, want)
				}
			}
		})
	}
}
