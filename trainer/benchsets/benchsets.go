// Package benchsets holds the accuracy benchmark: the public data sets
// Surety's votes are compared on, each split into training and test rows
// as the committed baselines were (testdata/bench/make.py, scikit-learn),
// and one run of the trainer on a set. cmd/accuracybench prints the table;
// the trainer's tests check the same comparisons.
package benchsets

import (
	"context"
	"encoding/csv"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"time"

	"surety/datasets"
	"surety/datasets/ucidata"
	"surety/trainer"
)

// Set is one benchmark data set.
type Set struct {
	Name string
	// Load reads the training and test tables; root is the module's root
	// folder (testdata/bench lives there).
	Load func(root string) (train, test *datasets.Table, err error)
}

// files loads testdata/bench/<name>_train.csv and _test.csv, the test
// file read with the training file's column kinds.
func files(name, label string) Set {
	return Set{Name: name, Load: func(root string) (*datasets.Table, *datasets.Table, error) {
		dir := filepath.Join(root, "testdata", "bench")
		train, err := datasets.ReadFile(filepath.Join(dir, name+"_train.csv"), datasets.ReadOptions{Label: label})
		if err != nil {
			return nil, nil, err
		}
		test, err := datasets.ReadFile(filepath.Join(dir, name+"_test.csv"), sameKinds(train, label))
		return train, test, err
	}}
}

// sameKinds reads a file with t's column kinds forced.
func sameKinds(t *datasets.Table, label string) datasets.ReadOptions {
	kinds := map[string]datasets.Kind{}
	for _, c := range t.Columns {
		kinds[c.Name] = c.Kind
	}
	return datasets.ReadOptions{Label: label, Kinds: kinds, OneClass: true}
}

// golearn loads one of golearn's bundled UCI files and splits it by split.
func golearn(name, file, label string, split func(t *datasets.Table) (train, test []int, err error)) Set {
	return Set{Name: name, Load: func(string) (*datasets.Table, *datasets.Table, error) {
		p, err := ucidata.File(file)
		if err != nil {
			return nil, nil, err
		}
		t, err := datasets.ReadFile(p, datasets.ReadOptions{Label: label})
		if err != nil {
			return nil, nil, err
		}
		a, b, err := split(t)
		if err != nil {
			return nil, nil, err
		}
		return t.Subset(a), t.Subset(b), nil
	}}
}

// mnist loads golearn's MNIST sample (its own training and test files),
// keeping the named classes (all when none).
func mnist(name string, classes ...string) Set {
	return Set{Name: name, Load: func(string) (*datasets.Table, *datasets.Table, error) {
		var out [2]*datasets.Table
		for i, f := range []string{"mnist_train.csv", "mnist_test.csv"} {
			p, err := ucidata.File(f)
			if err != nil {
				return nil, nil, err
			}
			if out[i], err = datasets.ReadFile(p, datasets.ReadOptions{Label: "label"}); err != nil {
				return nil, nil, err
			}
			if len(classes) > 0 {
				out[i] = out[i].ClassSubset(classes...)
			}
		}
		return out[0], out[1], nil
	}}
}

// Sets lists the benchmark sets in the order the table prints them; the
// names are those of testdata/bench/baseline.csv.
func Sets() []Set {
	return []Set{
		files("breast_cancer", "label"),
		files("wine", "label"),
		files("iris", "label"),
		files("digits", "label"),
		files("digits38", "label"),
		files("diabetes", "label"),
		files("demo", "leaked"),
		golearn("house-votes-84", "house-votes-84.csv", "party", func(t *datasets.Table) ([]int, []int, error) {
			// The split of trainer's TestHouseVotes, which make.py mirrors.
			return datasets.StratifiedSplit(t.Label, len(t.Classes), 0.5, 11)
		}),
		golearn("iris-golearn", "iris_headers.csv", "Species", func(t *datasets.Table) ([]int, []int, error) {
			var a, b []int
			for i := range t.Rows {
				if i%3 == 0 {
					b = append(b, i)
				} else {
					a = append(a, i)
				}
			}
			return a, b, nil
		}),
		mnist("mnist-10"),
		mnist("mnist-3v8", "3", "8"),
	}
}

// Baseline is a set's committed baseline test errors.
type Baseline struct {
	TrainRows, TestRows      int
	AdaBoost200, AdaBoost500 float64
	LogReg                   float64
}

// Best is the better of AdaBoost-500 and logistic regression.
func (b Baseline) Best() float64 { return min(b.AdaBoost500, b.LogReg) }

// ReadBaselines reads testdata/bench/baseline.csv under root.
func ReadBaselines(root string) (map[string]Baseline, error) {
	f, err := os.Open(filepath.Join(root, "testdata", "bench", "baseline.csv"))
	if err != nil {
		return nil, err
	}
	defer f.Close()
	r := csv.NewReader(f)
	r.Comment = '#'
	out := map[string]Baseline{}
	for line := 0; ; line++ {
		rec, err := r.Read()
		if err == io.EOF {
			return out, nil
		}
		if err != nil {
			return nil, err
		}
		if line == 0 {
			continue // header
		}
		if len(rec) != 7 {
			return nil, fmt.Errorf("benchsets: baseline.csv: %d fields, want 7", len(rec))
		}
		var b Baseline
		var errs [5]error
		b.TrainRows, errs[0] = strconv.Atoi(rec[1])
		b.TestRows, errs[1] = strconv.Atoi(rec[2])
		b.AdaBoost200, errs[2] = strconv.ParseFloat(rec[4], 64)
		b.AdaBoost500, errs[3] = strconv.ParseFloat(rec[5], 64)
		b.LogReg, errs[4] = strconv.ParseFloat(rec[6], 64)
		for _, e := range errs {
			if e != nil {
				return nil, fmt.Errorf("benchsets: baseline.csv: %s: %w", rec[0], e)
			}
		}
		out[rec[0]] = b
	}
}

// Result is one run of the trainer on a set.
type Result struct {
	Set                  string
	TestRows, TestErrors int
	TestError            float64
	// Certificate and Family are the shipped vote's certificate.
	Certificate float64
	Family      string
	Converged   bool
	Seconds     float64
}

// Run trains on the set's training table with cfg and counts the shipped
// vote's errors on its test table.
func Run(ctx context.Context, s Set, root string, cfg trainer.Config) (Result, error) {
	train, test, err := s.Load(root)
	if err != nil {
		return Result{}, fmt.Errorf("%s: %w", s.Name, err)
	}
	start := time.Now()
	m, err := trainer.Train(ctx, train, cfg)
	if err != nil {
		return Result{}, fmt.Errorf("%s: %w", s.Name, err)
	}
	secs := time.Since(start).Seconds()
	errs, err := m.CountErrors(test)
	if err != nil {
		return Result{}, fmt.Errorf("%s: %w", s.Name, err)
	}
	return Result{Set: s.Name, TestRows: test.Rows, TestErrors: errs, TestError: float64(errs) / float64(test.Rows),
		Certificate: m.Certificate.RiskBound, Family: m.Certificate.Family, Converged: m.Provenance.Optimizer.Converged, Seconds: secs}, nil
}

// Names lists the sets' names.
func Names() string {
	var n []string
	for _, s := range Sets() {
		n = append(n, s.Name)
	}
	return strings.Join(n, ", ")
}
