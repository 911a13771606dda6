package voters

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"testing"
)

// TestHouseVotesBestStump: on UCI's Congressional Voting Records (golearn's
// house-votes-84.csv, 435 rows), the stump with the fewest prior-row errors
// reaches on held-out rows about the accuracy Holte reports for one-rule
// classifiers: 95.2% on the voting data (Holte 1993, "Very simple
// classification rules perform well on most commonly used datasets",
// Machine Learning 11:63-91, Table 3, 1R on VO; the figure is from
// memory). Mean over 10 random halves, within 3 points.
func TestHouseVotesBestStump(t *testing.T) {
	tab := readUCI(t, "house-votes-84.csv", "party")
	const holte1R = 0.952 // Holte 1993, 1R on VO (from memory)
	var sum float64
	const splits = 10
	for seed := range splits {
		rng := rand.New(rand.NewPCG(uint64(seed), 0))
		perm := rng.Perm(tab.Rows)
		prior, held := perm[:tab.Rows/2], perm[tab.Rows/2:]
		p, err := BuildPool(tab, prior, PoolConfig{LinearVoters: noLinear, NoFullLinear: true}, nil)
		if err != nil {
			t.Fatal(err)
		}
		ps, err := p.Count(tab, prior)
		if err != nil {
			t.Fatal(err)
		}
		best := 0
		for i, e := range ps.Errors {
			if e < ps.Errors[best] {
				best = i
			}
		}
		hs, err := p.Count(tab, held)
		if err != nil {
			t.Fatal(err)
		}
		acc := 1 - float64(hs.Errors[best])/float64(hs.M)
		t.Logf("split %d: best stump %s, held-out accuracy %.3f", seed, p.Voters[best].Describe(p.Classes), acc)
		sum += acc
	}
	if mean := sum / splits; math.Abs(mean-holte1R) > 0.03 {
		t.Fatalf("mean held-out accuracy of the best stump %.3f, want within 0.03 of Holte's %.3f", mean, holte1R)
	}
}

// TestIrisLinearMatchesSklearn: a linear voter on all four iris columns
// matches scikit-learn's multinomial LogisticRegression on the same split
// (testdata/voters/iris_logreg.py and its output iris_logreg.json):
// the same test predictions, and weights within 1e-4.
func TestIrisLinearMatchesSklearn(t *testing.T) {
	tab := readUCI(t, "iris_headers.csv", "Species")
	raw, err := os.ReadFile(filepath.Join("..", "testdata", "voters", "iris_logreg.json"))
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		Classes         []string    `json:"classes"`
		TestAccuracy    float64     `json:"test_accuracy"`
		Coef            [][]float64 `json:"coef"`
		Intercept       []float64   `json:"intercept"`
		TestPredictions []int       `json:"test_predictions"`
	}
	if err := json.Unmarshal(raw, &ref); err != nil {
		t.Fatal(err)
	}
	var train, test []int
	for i := range tab.Rows {
		if i%3 != 0 {
			train = append(train, i)
		} else {
			test = append(test, i)
		}
	}
	cols := make([]string, len(tab.Columns))
	for j := range tab.Columns {
		cols[j] = tab.Columns[j].Name
	}
	// L2 = 1/(C n) with scikit-learn's C = 1 on n = 100 training rows.
	l, err := FitLinear(tab, train, train, cols, 1/float64(len(train)))
	if err != nil {
		t.Fatal(err)
	}
	right := 0
	for i, r := range test {
		got := l.Predict(r)
		if tab.Classes[got] != ref.Classes[ref.TestPredictions[i]] {
			t.Errorf("test row %d: %s, scikit-learn says %s", r, tab.Classes[got], ref.Classes[ref.TestPredictions[i]])
		}
		if got == tab.Label[r] {
			right++
		}
	}
	if acc := float64(right) / float64(len(test)); acc != ref.TestAccuracy {
		t.Errorf("test accuracy %.4f, scikit-learn %.4f", acc, ref.TestAccuracy)
	}
	for c := range ref.Coef {
		for j, want := range ref.Coef[c] {
			if got := l.Weights[c][j]; math.Abs(got-want) > 1e-4 {
				t.Errorf("weight [%d][%d] = %.6f, scikit-learn %.6f", c, j, got, want)
			}
		}
		// Intercepts are identified up to a common shift: compare to class 0's.
		if got, want := l.Bias[c]-l.Bias[0], ref.Intercept[c]-ref.Intercept[0]; math.Abs(got-want) > 1e-4 {
			t.Errorf("intercept difference [%d]-[0] = %.6f, scikit-learn %.6f", c, got, want)
		}
	}
}
