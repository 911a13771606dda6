package trainer

import (
	"context"
	"encoding/csv"
	"os"
	"strconv"
	"testing"

	"surety/datasets"
	"surety/datasets/ucidata"
)

// baseline reads a test error from testdata/trainer/baseline.csv, made by
// testdata/trainer/baseline.py with scikit-learn's AdaBoost (500 stumps).
func baseline(t *testing.T, dataset string) float64 {
	f, err := os.Open("../testdata/trainer/baseline.csv")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range recs[1:] {
		if r[0] == dataset {
			v, err := strconv.ParseFloat(r[3], 64)
			if err != nil {
				t.Fatal(err)
			}
			return v
		}
	}
	t.Fatalf("no baseline for %s", dataset)
	return 0
}

// On UCI's Congressional Voting Records (golearn's house-votes-84.csv),
// trained on a stratified half and tested on the other: the certificate is
// at least the test error (it is a bound; with 218 test rows the test error
// itself is noisy, so a failure here would be a strong sign of a bug), and
// the test error is within 5 points of scikit-learn AdaBoost's mean over
// 20 half splits (our margin: Surety builds its pool on half of the
// training half and certifies on the rest).
func TestHouseVotes(t *testing.T) {
	t.Parallel()
	tab, err := datasets.ReadFile(ucidata.Path(t, "house-votes-84.csv"), datasets.ReadOptions{Label: "party"})
	if err != nil {
		t.Fatal(err)
	}
	trainRows, testRows, err := datasets.StratifiedSplit(tab.Label, len(tab.Classes), 0.5, 11)
	if err != nil {
		t.Fatal(err)
	}
	for _, obj := range []Objective{Tandem, CBound, KL, Linear} {
		t.Run(string(obj), func(t *testing.T) {
			m, err := Train(context.Background(), tab.Subset(trainRows), Config{Objective: obj, Seed: 3})
			if err != nil {
				t.Fatal(err)
			}
			errs, err := m.CountErrors(tab.Subset(testRows))
			if err != nil {
				t.Fatal(err)
			}
			testErr := float64(errs) / float64(len(testRows))
			t.Logf("%s: certificate %.4f (%s), test error %.4f", obj, m.Certificate.RiskBound, m.Certificate.Family, testErr)
			if m.Certificate.RiskBound < testErr {
				t.Errorf("certificate %.4f below the test error %.4f", m.Certificate.RiskBound, testErr)
			}
			if base := baseline(t, "house-votes-84"); testErr > base+0.05 {
				t.Errorf("test error %.4f more than 5 points above the AdaBoost baseline %.4f", testErr, base)
			}
		})
	}
}

// On golearn's MNIST sample (5,000 training and 500 test images of 28 x 28
// pixels): train on mnist_train.csv, test on mnist_test.csv, the 10-class
// problem and the hard pair 3 against 8, with the default pool (capped at
// 2,048 of the stumps on 784 columns). The test error is within a stated
// margin of scikit-learn's AdaBoost with 500 stumps
// (testdata/trainer/baseline.csv), and the test rows do not contradict
// the certificate: their 95% lower limit (Clopper-Pearson) is at most the
// certificate, the verdict of Check. The raw test error is no fair yardstick:
//   - ten digits, 500 test rows: the rate's standard deviation is about 1.9
//     points, so near the bound the comparison is a coin toss (seed 3:
//     24.6% against a certificate of 23.9%; the stratified split used
//     before the random one happened to land above);
//   - 3 against 8, 91 test rows: one error moves the rate 1.1 points and its
//     standard deviation is about 3 (seed 3: 9 errors, 9.9%, against a
//     certificate of 8.1%).
//
// The margins are ours. Ten digits: no worse than AdaBoost (it is at 55.6%
// with stumps that split one class from the rest; the pool's multiclass
// linear voters do far better). The pair: 8 points, since Surety fits its
// shipped vote on half the training rows (the other half certifies) and
// the test error itself is that noisy.
func TestMNIST(t *testing.T) {
	if testing.Short() {
		t.Skip("MNIST: about half a minute")
	}
	t.Parallel()
	train, err := datasets.ReadFile(ucidata.Path(t, "mnist_train.csv"), datasets.ReadOptions{Label: "label"})
	if err != nil {
		t.Fatal(err)
	}
	test, err := datasets.ReadFile(ucidata.Path(t, "mnist_test.csv"), datasets.ReadOptions{Label: "label"})
	if err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		name, baseline string
		train, test    *datasets.Table
		margin         float64
	}{
		{"ten digits", "mnist-10", train, test, 0},
		{"3 against 8", "mnist-3v8", train.ClassSubset("3", "8"), test.ClassSubset("3", "8"), 0.08},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			m, err := Train(context.Background(), c.train, Config{Seed: 3})
			if err != nil {
				t.Fatal(err)
			}
			errs, err := m.CountErrors(c.test)
			if err != nil {
				t.Fatal(err)
			}
			testErr := float64(errs) / float64(c.test.Rows)
			base := baseline(t, c.baseline)
			t.Logf("%s: pool %d, certificate %.4f (%s), certify-row error %.4f, test error %.4f on %d rows, AdaBoost %.4f",
				c.name, m.Provenance.PoolSize, m.Certificate.RiskBound, m.Certificate.Family, m.Empirical.VoteError, testErr, c.test.Rows, base)
			chk, err := Check(m, c.test, CheckConfig{Delta: 0.05})
			if err != nil {
				t.Fatal(err)
			}
			if !chk.Consistent {
				t.Errorf("the test rows contradict the certificate: %s", chk.Verdict)
			}
			if testErr > base+c.margin {
				t.Errorf("test error %.4f more than %.2f above the AdaBoost baseline %.4f", testErr, c.margin, base)
			}
		})
	}
}
