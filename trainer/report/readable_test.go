package report_test

import (
	"math"
	"testing"

	"surety/datasets"
	"surety/trainer/report"
	"surety/voters"
)

// twoClassLinear is a hand-written two-class linear voter: a numeric x
// (mean 10, sd 2) and a categorical color with levels red and blue.
func twoClassLinear() *voters.Linear {
	return &voters.Linear{
		Inputs: []voters.LinearInput{
			{Column: "x", Kind: datasets.Numeric, Mean: 10, Scale: 2},
			{Column: "color", Kind: datasets.Categorical, Levels: []string{"red", "blue"}},
		},
		Weights: [][]float64{{0, 0, 0}, {0.5, -1.25, 0.1}},
		Bias:    []float64{0, -0.3},
	}
}

func TestShortLinear(t *testing.T) {
	three := &voters.Linear{
		Inputs:  []voters.LinearInput{{Column: "x", Kind: datasets.Numeric, Mean: 3, Scale: 2}, {Column: "y", Kind: datasets.Numeric, Mean: 0, Scale: 1}},
		Weights: [][]float64{{-1, 0}, {0, 0}, {1, 0.25}},
		Bias:    []float64{0, 0.5, 0},
	}
	cases := []struct {
		name string
		l    *voters.Linear
		k    int
		want string
	}{
		// The terms sorted by |coefficient| by hand: -1.25, 0.5, 0.1.
		{"two classes, cut to 2 terms", twoClassLinear(), 2,
			`-1.25 [color="red"] +0.50 z(x) + 1 more term, bias -0.30: > 0 -> yes, else no`},
		{"two classes, every term", twoClassLinear(), 4,
			`-1.25 [color="red"] +0.50 z(x) +0.10 [color="blue"], bias -0.30: > 0 -> yes, else no`},
		// Sums of |weight| over the classes by hand: x 2, y 0.25. The
		// shares of the classes are TestClassVotes' (about 31%, 38%, 31%).
		{"three classes", three, 1,
			"3 classes; votes b 38%, c 32%, a 30% (synthetic rows); strongest by sum of |coef| over classes: z(x) 2.00 + 1 more term"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			classes := []string{"no", "yes"}
			if len(c.l.Weights) == 3 {
				classes = []string{"a", "b", "c"}
			}
			if got := report.ShortLinear(c.l, classes, c.k); got != c.want {
				t.Errorf("got  %s\nwant %s", got, c.want)
			}
		})
	}
}

func TestImportance(t *testing.T) {
	stump := &voters.Stump{Column: "x", Threshold: 1, Below: 0, Above: 1}
	cat := &voters.CategoryStump{Column: "color", Level: "red", Equal: 1, Other: 0}
	cases := []struct {
		name string
		vote *voters.Vote
		want map[string]float64
	}{
		// By hand: the linear voter's |coefficients| are 0.5 on x and
		// 1.25 + 0.1 = 1.35 on color, of 1.85 in all.
		{"linear and stump", &voters.Vote{Voters: []voters.Voter{twoClassLinear(), stump}, Weights: []float64{0.6, 0.4}},
			map[string]float64{"x": 0.6*0.5/1.85 + 0.4, "color": 0.6 * 1.35 / 1.85}},
		{"stumps only, a voter of weight 0", &voters.Vote{Voters: []voters.Voter{stump, cat, twoClassLinear()}, Weights: []float64{0.25, 0.75, 0}},
			map[string]float64{"x": 0.25, "color": 0.75}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			got := report.Importance(c.vote)
			if len(got) != len(c.want) {
				t.Fatalf("got %v, want %v", got, c.want)
			}
			for i, s := range got {
				if math.Abs(s.Weight-c.want[s.Column]) > 1e-12 {
					t.Errorf("%s: %v, want %v", s.Column, s.Weight, c.want[s.Column])
				}
				if i > 0 && s.Weight > got[i-1].Weight {
					t.Errorf("not largest first: %v", got)
				}
			}
		})
	}
}
