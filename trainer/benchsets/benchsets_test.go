package benchsets

import (
	"context"
	"math"
	"testing"

	"surety/objective"
	"surety/trainer"
)

// The accuracy benchmark as a test (accuracy, not time): on every set,
// trained with the default settings, the shipped vote's test error is at
// most the better of scikit-learn's AdaBoost-500 and StandardScaler +
// LogisticRegression, both trained on the whole training file
// (testdata/bench/baseline.csv, from testdata/bench/make.py), plus 0.02 or
// 1.5 standard errors of our test estimate, sqrt(p (1-p) / n), whichever
// is larger (the test parts of iris, golearn's iris, wine and MNIST's 3
// against 8 hold 45, 50, 54 and 91 rows, where one error is 1 to 2
// points); and the
// certificate is never clearly below the test error: the test error's
// lower 99% Clopper-Pearson limit (objective.TestSetLowerBound) is at most
// the certificate. The margins are ours.
func TestAccuracyAgainstBaselines(t *testing.T) {
	if testing.Short() {
		t.Skip("trains on eleven data sets, MNIST among them: about a minute")
	}
	base, err := ReadBaselines("../..")
	if err != nil {
		t.Fatal(err)
	}
	for _, s := range Sets() {
		t.Run(s.Name, func(t *testing.T) {
			b, ok := base[s.Name]
			if !ok {
				t.Fatalf("no baseline for %s", s.Name)
			}
			r, err := Run(context.Background(), s, "../..", trainer.Config{Seed: trainer.DefaultSeed})
			if err != nil {
				t.Fatal(err)
			}
			if r.TestRows != b.TestRows {
				t.Fatalf("%d test rows, the baseline has %d: not the same split", r.TestRows, b.TestRows)
			}
			best := b.Best()
			p := r.TestError
			margin := math.Max(0.02, 1.5*math.Sqrt(p*(1-p)/float64(r.TestRows)))
			t.Logf("test error %.4f (%d of %d), certificate %.4f (%s), best baseline %.4f, margin %.4f, converged %v",
				r.TestError, r.TestErrors, r.TestRows, r.Certificate, r.Family, best, margin, r.Converged)
			if r.TestError > best+margin {
				t.Errorf("test error %.4f above the better baseline %.4f plus %.4f", r.TestError, best, margin)
			}
			lo, err := objective.TestSetLowerBound(r.TestErrors, r.TestRows, 0.01)
			if err != nil {
				t.Fatal(err)
			}
			if lo.Value > r.Certificate {
				t.Errorf("the test rows contradict the certificate: 99%% lower limit %.4f above %.4f", lo.Value, r.Certificate)
			}
			if !r.Converged {
				t.Errorf("the optimiser did not converge")
			}
		})
	}
}
