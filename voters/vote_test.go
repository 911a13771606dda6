package voters

import (
	"math"
	"math/rand/v2"
	"runtime"
	"slices"
	"testing"

	"surety/datasets"
)

func nan() float64 { return math.NaN() }

func TestVoteTies(t *testing.T) {
	tab := table([]string{"a", "b", "c"}, []int{0, 1, 2, 2}, numCol("x", 1, 2, 3, 4))
	lowA := &Stump{Column: "x", Threshold: 2.5, Below: 0, Above: 1}
	lowB := &Stump{Column: "x", Threshold: 2.5, Below: 1, Above: 0}
	highC := &Stump{Column: "x", Threshold: 3.5, Below: 0, Above: 2}
	cases := []struct {
		name       string
		voters     []Voter
		weights    []float64
		wantClass  []int
		wantMargin []float64
		wantErrors int
	}{
		{
			name: "two voters disagree everywhere: ties to the lower class", voters: []Voter{lowA, lowB}, weights: []float64{0.5, 0.5},
			wantClass: []int{0, 0, 0, 0}, wantMargin: []float64{0, 0, 0, 0}, wantErrors: 4,
		},
		{
			name: "a clear winner", voters: []Voter{lowA, lowB, highC}, weights: []float64{0.5, 0.25, 0.25},
			// x = 1, 2: a 0.5+0.25 (lowA, highC), b 0.25; x = 3: b 0.5 (lowA),
			// a 0.25+0.25, a tie; x = 4: b 0.5, a 0.25, c 0.25.
			wantClass: []int{0, 0, 0, 1}, wantMargin: []float64{0.5, 0.5, 0, 0.25}, wantErrors: 3,
		},
		{
			name: "all weights zero: every row a tie", voters: []Voter{lowA, highC}, weights: []float64{0, 0},
			wantClass: []int{0, 0, 0, 0}, wantMargin: []float64{0, 0, 0, 0}, wantErrors: 4,
		},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			v := &Vote{Voters: tc.voters, Weights: tc.weights, Classes: tab.Classes}
			classes, margins, err := v.Predict(tab, allRows(tab))
			if err != nil {
				t.Fatal(err)
			}
			for i := range classes {
				if classes[i] != tc.wantClass[i] || margins[i] != tc.wantMargin[i] {
					t.Fatalf("row %d: class %d margin %v, want %d and %v", i, classes[i], margins[i], tc.wantClass[i], tc.wantMargin[i])
				}
			}
			n, err := v.Errors(tab, allRows(tab))
			if err != nil {
				t.Fatal(err)
			}
			if n != tc.wantErrors {
				t.Fatalf("%d errors, want %d", n, tc.wantErrors)
			}
		})
	}
}

// TestVotePredictMatchesNaive compares the panel prediction with a
// per-row sum in voter order, at several GOMAXPROCS.
func TestVotePredictMatchesNaive(t *testing.T) {
	tab, _, v, rows := sparseVote(t, 31, 9000, 2000, PoolConfig{Thresholds: 5})
	w := v.Weights
	wantErrs := 0
	wantClass := make([]int, len(rows))
	for i, r := range rows {
		s := make([]float64, 3)
		for j, vt := range v.Voters {
			s[vt.Predict(r)] += w[j]
		}
		c, margin := winner(s)
		wantClass[i] = c
		if margin == 0 || c != tab.Label[r] {
			wantErrs++
		}
	}
	for _, procs := range []int{1, 2} {
		old := runtime.GOMAXPROCS(procs)
		classes, _, err := v.Predict(tab, rows)
		runtime.GOMAXPROCS(old)
		if err != nil {
			t.Fatal(err)
		}
		for i := range classes {
			if classes[i] != wantClass[i] {
				t.Fatalf("GOMAXPROCS=%d row %d: class %d, want %d", procs, rows[i], classes[i], wantClass[i])
			}
		}
	}
	n, err := v.Errors(tab, rows)
	if err != nil {
		t.Fatal(err)
	}
	if n != wantErrs {
		t.Fatalf("%d errors, want %d", n, wantErrs)
	}
}

func TestVoteErrorsBadInput(t *testing.T) {
	tab := table([]string{"a", "b"}, []int{0, 1}, numCol("x", 1, 2))
	s := &Stump{Column: "x", Threshold: 1, Below: 0, Above: 1}
	cases := []struct {
		name string
		v    *Vote
	}{
		{"weights and voters differ", &Vote{Voters: []Voter{s}, Weights: []float64{1, 2}, Classes: tab.Classes}},
		{"NaN weight", &Vote{Voters: []Voter{s}, Weights: []float64{nan()}, Classes: tab.Classes}},
		{"class out of range", &Vote{Voters: []Voter{&Stump{Column: "x", Below: 0, Above: 5}}, Weights: []float64{1}, Classes: tab.Classes}},
		{"unknown column", &Vote{Voters: []Voter{&Stump{Column: "y", Below: 0, Above: 1}}, Weights: []float64{1}, Classes: tab.Classes}},
		{"one class", &Vote{Voters: []Voter{s}, Weights: []float64{1}, Classes: []string{"a"}}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			if _, err := tc.v.Errors(tab, []int{0, 1}); err == nil {
				t.Fatal("no error")
			}
		})
	}
	if _, _, err := (&Vote{Voters: []Voter{s}, Weights: []float64{1}, Classes: tab.Classes}).Predict(tab, []int{2}); err == nil {
		t.Fatal("a row out of range gave no error")
	}
}

// TestPredictTotals: each row's class totals are the voters' weights added
// one at a time in SumOrder's order (the definition, summed naively), to
// the bit, and Predict's class and margin are the largest total and its
// lead, at any GOMAXPROCS.
func TestPredictTotals(t *testing.T) {
	tab, p, v, rows := sparseVote(t, 33, 3000, 1000, PoolConfig{Thresholds: 5})
	w := v.Weights
	for _, procs := range []int{1, 2} {
		old := runtime.GOMAXPROCS(procs)
		classes, margins, totals, err := v.PredictTotals(tab, rows)
		runtime.GOMAXPROCS(old)
		if err != nil {
			t.Fatal(err)
		}
		for i, r := range rows {
			want := make([]float64, 3)
			for _, j := range v.SumOrder() {
				if w[j] != 0 {
					want[p.Voters[j].Predict(r)] += w[j]
				}
			}
			got := totals[i*3 : i*3+3]
			if !slices.Equal(got, want) {
				t.Fatalf("GOMAXPROCS=%d row %d: totals %v, want %v", procs, r, got, want)
			}
			if c, m := winner(want); classes[i] != c || margins[i] != m {
				t.Fatalf("GOMAXPROCS=%d row %d: class %d margin %v, want %d %v", procs, r, classes[i], margins[i], c, m)
			}
		}
	}
}

// TestPredictKnown checks that a vote predicts the same classes and
// margins, to the bit, with the linear voters' classes remembered as when
// it works them out, on rows in any order and over several panels.
func TestPredictKnown(t *testing.T) {
	eight := 8
	tab, p, v, rows := sparseVote(t, 35, 14000, 2000, PoolConfig{Thresholds: 5, LinearVoters: &eight})
	tests := []struct {
		name string
		rows []int
	}{
		{"shuffled, several panels", rows},
		{"sorted, several panels", slices.Sorted(slices.Values(rows))},
		{"one partial panel", rows[:100]},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			known, err := p.Remember(tab, tc.rows)
			if err != nil {
				t.Fatal(err)
			}
			wantC, wantM, err := v.Predict(tab, tc.rows)
			if err != nil {
				t.Fatal(err)
			}
			gotC, gotM, err := v.PredictKnown(known)
			if err != nil {
				t.Fatal(err)
			}
			if !slices.Equal(gotC, wantC) || !slices.Equal(gotM, wantM) {
				t.Fatal("classes or margins differ with the linear voters' classes remembered")
			}
		})
	}
}

// sparseVote draws, from one source seeded with seed, a three-class table
// of n rows with 5% of its cells missing, a pool built with cfg on prior
// of its rows in a random order, and a vote over the pool with about a
// quarter of the weights 0; it returns them and the other rows, in that
// order.
func sparseVote(t *testing.T, seed uint64, n, prior int, cfg PoolConfig) (*datasets.Table, *Pool, *Vote, []int) {
	t.Helper()
	rng := rand.New(rand.NewPCG(seed, seed+1))
	tab := randomTable(rng, n, 3, 0.05)
	perm := rng.Perm(tab.Rows)
	p, err := BuildPool(tab, perm[:prior], cfg, rand.New(rand.NewPCG(1, 1)))
	if err != nil {
		t.Fatal(err)
	}
	w := make([]float64, len(p.Voters))
	for i := range w {
		if rng.IntN(4) > 0 {
			w[i] = rng.Float64()
		}
	}
	return tab, p, &Vote{Voters: p.Voters, Weights: w, Classes: p.Classes}, perm[prior:]
}
