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

// subset returns the rows of t as a table of its own.
func subset(t *datasets.Table, rows []int) *datasets.Table {
	s := *t
	s.Rows = len(rows)
	s.Columns = make([]datasets.Column, len(t.Columns))
	s.Label = make([]int, len(rows))
	for i, r := range rows {
		s.Label[i] = t.Label[r]
	}
	for j, c := range t.Columns {
		n := c
		if c.Kind == datasets.Numeric {
			n.Num = make([]float64, len(rows))
			for i, r := range rows {
				n.Num[i] = c.Num[r]
			}
		} else {
			n.Codes = make([]uint32, len(rows))
			for i, r := range rows {
				n.Codes[i] = c.Codes[r]
			}
		}
		s.Columns[j] = n
	}
	return &s
}

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
			m, err := Train(context.Background(), subset(tab, trainRows), Config{Objective: obj, Seed: 3})
			if err != nil {
				t.Fatal(err)
			}
			errs, err := m.CountErrors(subset(tab, testRows))
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
