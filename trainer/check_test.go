package trainer

import (
	"context"
	"errors"
	"math"
	"strings"
	"testing"

	"surety/objective"
	"surety/voters"
)

func TestCheck(t *testing.T) {
	m, err := Train(context.Background(), demoTable(t, 800, 2), Config{Seed: 1, Pool: voters.PoolConfig{Thresholds: 8, LinearVoters: intp(2)}})
	if err != nil {
		t.Fatal(err)
	}
	// The margin histogram holds every certify row, and its bins below
	// zero hold exactly the shipped vote's errors there.
	h, below := m.Empirical.Margins, 0
	total := 0
	for i, n := range h.Counts {
		total += n
		if i < MarginBins/2 {
			below += n
		}
	}
	if total != m.Empirical.M || math.Abs(float64(below)/float64(total)-m.Empirical.VoteError) > 1e-12 {
		t.Errorf("margins: %d rows (want %d), %d below zero (vote error %v)", total, m.Empirical.M, below, m.Empirical.VoteError)
	}

	fresh := demoTable(t, 3000, 99)
	res, err := Check(m, fresh, CheckConfig{Delta: 0.05, Population: 10000})
	if err != nil {
		t.Fatal(err)
	}
	direct, err := m.CountErrors(fresh)
	if err != nil {
		t.Fatal(err)
	}
	if res.Errors != direct || res.Rows != fresh.Rows {
		t.Errorf("%d errors on %d rows, CountErrors says %d on %d", res.Errors, res.Rows, direct, fresh.Rows)
	}
	total = 0
	for i := range res.Classes {
		for _, n := range res.Confusion[i] {
			total += n
		}
		total += res.Ties[i]
	}
	if total != res.Rows {
		t.Errorf("confusion matrix and ties hold %d rows, want %d", total, res.Rows)
	}
	perClass := 0
	for _, c := range res.PerClass {
		perClass += c.Errors
		if b, _ := objective.TestSetBound(c.Errors, c.Rows, res.ClassDelta); b.Value != c.Bound {
			t.Errorf("class %s: bound %v, want the test-set bound at delta/K %v", c.Class, c.Bound, b.Value)
		}
	}
	if perClass != res.Errors || res.ClassDelta != 0.05/float64(len(res.PerClass)) {
		t.Errorf("per-class errors %d (want %d), class delta %v", perClass, res.Errors, res.ClassDelta)
	}
	if !(res.Lower.Value <= res.ErrorRate && res.ErrorRate <= res.Upper.Value) {
		t.Errorf("limits [%v, %v] miss the rate %v", res.Lower.Value, res.Upper.Value, res.ErrorRate)
	}
	// Fresh draws from the training source: the certificate holds here
	// (it can fail with probability delta; seeds fixed, so this is stable).
	if !res.Consistent || !strings.HasPrefix(res.Verdict, "consistent") {
		t.Errorf("verdict %q on fresh rows from the same source", res.Verdict)
	}
	if res.Population == nil || res.Population.Value < 0 || res.Population.Value > 1 {
		t.Errorf("population bound %+v", res.Population)
	}

	// Drift: flip every label; the vote now errs far above its certificate.
	for i, c := range fresh.Label {
		fresh.Label[i] = 1 - c
	}
	res, err = Check(m, fresh, CheckConfig{})
	if err != nil {
		t.Fatal(err)
	}
	if res.Consistent || !strings.Contains(res.Verdict, "drifted") || math.Abs(res.Delta-0.05) > 0 {
		t.Errorf("flipped labels: consistent %v, verdict %q, delta %v", res.Consistent, res.Verdict, res.Delta)
	}
}

// A few fresh rows whose error rate is above the certificate but whose
// lower limit is not: consistent, and the verdict says the rows are too few.
func TestCheckTooFewToTell(t *testing.T) {
	m, err := Train(context.Background(), demoTable(t, 800, 2), Config{Seed: 1, Pool: voters.PoolConfig{Thresholds: 8, LinearVoters: intp(2)}})
	if err != nil {
		t.Fatal(err)
	}
	fresh := demoTable(t, 30, 5)
	cls, _, err := m.Predict(fresh)
	if err != nil {
		t.Fatal(err)
	}
	want := int(math.Ceil(30 * (m.Certificate.RiskBound + 0.05)))
	errs, _ := m.CountErrors(fresh)
	for i := range cls {
		if errs >= want {
			break
		}
		if m.Classes[cls[i]] == fresh.Classes[fresh.Label[i]] {
			fresh.Label[i] = 1 - fresh.Label[i]
			errs++
		}
	}
	res, err := Check(m, fresh, CheckConfig{})
	if err != nil {
		t.Fatal(err)
	}
	if !(res.ErrorRate > res.ModelBound && res.Lower.Value <= res.ModelBound) {
		t.Fatalf("set-up: rate %v, lower %v, bound %v", res.ErrorRate, res.Lower.Value, res.ModelBound)
	}
	if !res.Consistent || !strings.Contains(res.Verdict, "too few to tell") {
		t.Errorf("consistent %v, verdict %q", res.Consistent, res.Verdict)
	}
}

func TestCheckRejects(t *testing.T) {
	m, err := Train(context.Background(), demoTable(t, 400, 2), Config{Seed: 1, Pool: voters.PoolConfig{Thresholds: 4, LinearVoters: intp(0)}})
	if err != nil {
		t.Fatal(err)
	}
	fresh := demoTable(t, 100, 3)
	cases := []struct {
		name string
		cfg  CheckConfig
		want string
	}{
		{"delta above one", CheckConfig{Delta: 1.5}, "delta"},
		{"population too small", CheckConfig{Population: 100}, "population"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			if _, err := Check(m, fresh, c.cfg); err == nil || !strings.Contains(err.Error(), c.want) {
				t.Errorf("error %v, want one naming %s", err, c.want)
			}
		})
	}
}

func TestMarginHistogram(t *testing.T) {
	cases := []struct {
		name string
		x    float64
		bin  int
	}{
		{"tie", math.Copysign(0, -1), 19},
		{"tiny negative", -1e-17, 19},
		{"float noise", -5.551115123125783e-17, 19}, // 0.3 - (0.1 + 0.2) in float64
		{"zero", 0, 20},
		{"tiny positive", 1e-17, 20},
		{"one", 1, 39},
		{"minus one", -1, 0},
		{"just below a bin edge", -0.05, 18},
		{"just above", 0.05, 21},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			h := marginHistogram([]float64{c.x})
			if h.Counts[c.bin] != 1 {
				t.Errorf("%v: counts %v, want bin %d", c.x, h.Counts, c.bin)
			}
		})
	}
}

// The file the model was trained on is not fresh: Check refuses it by its
// SHA-256 unless asked, and then says so in the verdict.
func TestCheckTrainingData(t *testing.T) {
	train := demoTable(t, 400, 2)
	m, err := Train(context.Background(), train, Config{Seed: 1, Pool: voters.PoolConfig{Thresholds: 4, LinearVoters: intp(0)}})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := Check(m, demoTable(t, 400, 2), CheckConfig{}); !errors.Is(err, ErrNotFresh) || !strings.Contains(err.Error(), "trained on") {
		t.Errorf("the training file: error %v, want ErrNotFresh", err)
	}
	res, err := Check(m, demoTable(t, 400, 2), CheckConfig{AllowTrainingData: true})
	if err != nil || !res.TrainingData || !strings.Contains(res.Verdict, "says nothing about new rows") {
		t.Errorf("allowed: %+v, %v", res, err)
	}
	res, err = Check(m, demoTable(t, 400, 5), CheckConfig{})
	if err != nil || res.TrainingData {
		t.Errorf("fresh rows: training %v, error %v", res != nil && res.TrainingData, err)
	}
	// Fresh rows whose classes are all unknown to the model: the label
	// column is likely the wrong one.
	fresh := demoTable(t, 50, 6)
	fresh.Classes = []string{"x", "y"}
	if _, err := Check(m, fresh, CheckConfig{}); err == nil || !strings.Contains(err.Error(), "none of the fresh rows' classes") {
		t.Errorf("unknown classes: error %v", err)
	}
}
