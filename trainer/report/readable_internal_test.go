package report

import (
	"math"
	"testing"

	"surety/datasets"
	"surety/voters"
)

// The classes a multiclass linear voter votes for, counted on synthetic
// standard-normal rows, match the normal distribution: scores -z, 0.5 and
// z give class 0 below z = -0.5, class 2 above 0.5, class 1 between.
func TestClassVotes(t *testing.T) {
	l := &voters.Linear{
		Inputs:  []voters.LinearInput{{Column: "x", Kind: datasets.Numeric, Mean: 3, Scale: 2}},
		Weights: [][]float64{{-1}, {0}, {1}},
		Bias:    []float64{0, 0.5, 0},
	}
	got := classVotes(l)
	// Phi(-0.5) = 0.3085 and Phi(0.5) - Phi(-0.5) = 0.3829, from a standard
	// normal table (from memory, 4 digits).
	want := []float64{0.3085, 0.3829, 0.3085}
	for c, n := range got {
		share := float64(n) / classVotesRows
		// 3 standard errors of a share near 0.35 over 2000 rows is about 0.032.
		if math.Abs(share-want[c]) > 0.032 {
			t.Errorf("class %d: share %.4f, want %.4f within 0.032", c, share, want[c])
		}
	}
}

// A count of one takes its noun in the singular (the README's rule for
// figures, "Commands").
func TestMore(t *testing.T) {
	cases := []struct {
		name string
		k    int
		want string
	}{
		{"one", 1, "1 more column"},
		{"two", 2, "2 more columns"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			if got := more(tc.k, "column", "columns"); got != tc.want {
				t.Fatalf("%q, want %q", got, tc.want)
			}
		})
	}
}
