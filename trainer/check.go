package trainer

import (
	"errors"
	"fmt"

	"surety/datasets"
	"surety/objective"
)

// CheckConfig holds the settings of Check. The zero value means the
// defaults given beside each field.
type CheckConfig struct {
	// Delta is the probability that each stated bound is wrong. Default
	// 0.05.
	Delta float64
	// Population, when not zero, is the size N of a fixed population the
	// fresh rows were drawn from uniformly without replacement; Check then
	// bounds the error rate of the N - n rows not labelled. It must exceed
	// the number of fresh rows.
	Population int
	// AllowTrainingData lets Check run on the very file the model was
	// trained on (same SHA-256 as the model's provenance), for a
	// demonstration; the result then says so. By default such a file is
	// refused with ErrNotFresh.
	AllowTrainingData bool
}

// ErrNotFresh is the error Check wraps when the rows it is given are the
// model's own training file: the certify rows among them were counted for
// the certificate and the prior rows built the vote, so their error says
// nothing about new rows. The file is recognised by its SHA-256
// (datasets.Fingerprint), which the model records: a copy that differs in
// any byte (gzipped, reordered, a subset) is not recognised.
var ErrNotFresh = errors.New("its rows are not fresh")

// CheckResult is a vote checked on labelled fresh rows.
type CheckResult struct {
	Rows   int `json:"rows"`
	Errors int `json:"errors"`
	// ErrorRate is Errors / Rows, ties counted as errors.
	ErrorRate float64 `json:"error_rate"`
	Delta     float64 `json:"delta"`
	// Upper and Lower are the one-sided binomial limits on the vote's true
	// error rate, each holding with probability at least 1 - Delta.
	Upper objective.Bound `json:"upper"`
	Lower objective.Bound `json:"lower"`
	// ModelBound and ModelDelta are the model's own certificate.
	ModelBound float64 `json:"model_bound"`
	ModelDelta float64 `json:"model_delta"`
	// Consistent is false when Lower exceeds ModelBound: the fresh rows
	// err more than the certificate allows, beyond the fresh rows' own
	// uncertainty.
	Consistent bool   `json:"consistent"`
	Verdict    string `json:"verdict"`
	// TrainingData is true when the rows are the model's own training file,
	// checked anyway (CheckConfig.AllowTrainingData): the verdict then says
	// nothing about new rows.
	TrainingData bool `json:"training_data,omitempty"`
	// Population, when asked for, bounds the error rate of the unlabelled
	// rest of the population, at Delta.
	Population *objective.Bound `json:"population,omitempty"`
	// Classes names the rows of Confusion: the model's classes, then any
	// class of the fresh rows the model does not know (all its rows are
	// errors).
	Classes []string `json:"classes"`
	// Confusion[i][j] counts rows of class Classes[i] the vote gave the
	// model's class j; Ties[i] counts those with a tie, which are errors
	// and are not in Confusion.
	Confusion [][]int `json:"confusion"`
	Ties      []int   `json:"ties"`
	// PerClass holds each class with fresh rows, its error rate and its
	// upper bound at ClassDelta = Delta / len(PerClass), so that all hold
	// at once with probability 1 - Delta.
	PerClass   []ClassCheck `json:"per_class"`
	ClassDelta float64      `json:"class_delta"`
}

// ClassCheck is one class's line of a check.
type ClassCheck struct {
	Class     string  `json:"class"`
	Rows      int     `json:"rows"`
	Errors    int     `json:"errors"`
	ErrorRate float64 `json:"error_rate"`
	Bound     float64 `json:"bound"`
}

// Check predicts every row of the labelled table t with m's vote and bounds
// the vote's error rate from those rows alone (the test-set bound,
// FIELD-GUIDE.md "Certifying on fresh rows"). The rows must not have been
// used to train m: Check refuses the training file itself (by its SHA-256,
// see ErrNotFresh) unless cfg.AllowTrainingData is set, but cannot tell a
// file that holds some training rows among others.
func Check(m *Model, t *datasets.Table, cfg CheckConfig) (*CheckResult, error) {
	if cfg.Delta == 0 {
		cfg.Delta = DefaultDelta
	}
	if !(cfg.Delta > 0 && cfg.Delta < 1) {
		return nil, fmt.Errorf("trainer: check: delta must be in (0, 1), got %g", cfg.Delta)
	}
	if t.Label == nil {
		return nil, fmt.Errorf("trainer: check: %s: the table has no label column", t.Source)
	}
	if t.Rows == 0 {
		return nil, fmt.Errorf("trainer: check: %s: no rows", t.Source)
	}
	if cfg.Population != 0 && cfg.Population <= t.Rows {
		return nil, fmt.Errorf("trainer: check: population %d must exceed the %d fresh rows", cfg.Population, t.Rows)
	}
	training := t.Fingerprint.SHA256 != "" && t.Fingerprint.SHA256 == m.Provenance.Data.SHA256
	if training && !cfg.AllowTrainingData {
		return nil, fmt.Errorf("trainer: check: %s is the file the model was trained on (SHA-256 %s): %w", t.Source, t.Fingerprint.SHA256, ErrNotFresh)
	}
	cls, margins, err := m.Predict(t)
	if err != nil {
		return nil, err
	}
	k := len(m.Classes)
	res := &CheckResult{Rows: t.Rows, Delta: cfg.Delta, ModelBound: m.Certificate.RiskBound, ModelDelta: m.Certificate.Delta,
		Classes: append([]string(nil), m.Classes...)}
	// fresh class index -> row of Confusion
	rowOf := make([]int, len(t.Classes))
	for i, name := range t.Classes {
		rowOf[i] = -1
		for j, c := range m.Classes {
			if c == name {
				rowOf[i] = j
			}
		}
		if rowOf[i] < 0 {
			rowOf[i] = len(res.Classes)
			res.Classes = append(res.Classes, name)
		}
	}
	res.Confusion = make([][]int, len(res.Classes))
	for i := range res.Confusion {
		res.Confusion[i] = make([]int, k)
	}
	if !known(rowOf, k) {
		return nil, fmt.Errorf("trainer: check: %s: none of the fresh rows' classes %q is a class of the model %q: is the label column %q the right one?",
			t.Source, t.Classes, m.Classes, t.LabelName)
	}
	res.Ties = make([]int, len(res.Classes))
	rows := make([]int, len(res.Classes))
	errs := make([]int, len(res.Classes))
	for i, c := range cls {
		truth := rowOf[t.Label[i]]
		rows[truth]++
		if margins[i] == 0 {
			res.Ties[truth]++
		} else {
			res.Confusion[truth][c]++
		}
		if margins[i] == 0 || c != truth {
			errs[truth]++
			res.Errors++
		}
	}
	res.ErrorRate = float64(res.Errors) / float64(res.Rows)
	if res.Upper, err = objective.TestSetBound(res.Errors, res.Rows, cfg.Delta); err != nil {
		return nil, fmt.Errorf("trainer: check: %w", err)
	}
	if res.Lower, err = objective.TestSetLowerBound(res.Errors, res.Rows, cfg.Delta); err != nil {
		return nil, fmt.Errorf("trainer: check: %w", err)
	}
	res.Consistent = res.Lower.Value <= res.ModelBound
	switch {
	case !res.Consistent:
		res.Verdict = fmt.Sprintf("the fresh rows' error exceeds the training certificate's bound: at least %s against at most %s; the data may have drifted, or this is the delta case",
			Percent(res.Lower.Value, false), Percent(res.ModelBound, true))
	case res.ErrorRate > res.ModelBound:
		res.Verdict = fmt.Sprintf("consistent, though barely: the fresh rows' error rate, %.2f%%, is above the training certificate's bound of %s, but its lower limit, %s, is not; %d rows are too few to tell",
			100*res.ErrorRate, Percent(res.ModelBound, true), Percent(res.Lower.Value, false), res.Rows)
	default:
		res.Verdict = fmt.Sprintf("consistent: the fresh rows' error rate, %.2f%% (at least %s), is within the training certificate's bound of %s",
			100*res.ErrorRate, Percent(res.Lower.Value, false), Percent(res.ModelBound, true))
	}
	if training {
		res.TrainingData = true
		res.Verdict += "; but these are the rows the model was trained on, so this says nothing about new rows"
	}
	if cfg.Population != 0 {
		b, err := objective.PopulationBound(res.Errors, res.Rows, cfg.Population, cfg.Delta)
		if err != nil {
			return nil, fmt.Errorf("trainer: check: %w", err)
		}
		res.Population = &b
	}
	present := 0
	for _, n := range rows {
		if n > 0 {
			present++
		}
	}
	res.ClassDelta = cfg.Delta / float64(present)
	for i, n := range rows {
		if n == 0 {
			continue
		}
		b, err := objective.TestSetBound(errs[i], n, res.ClassDelta)
		if err != nil {
			return nil, fmt.Errorf("trainer: check: class %q: %w", res.Classes[i], err)
		}
		res.PerClass = append(res.PerClass, ClassCheck{Class: res.Classes[i], Rows: n, Errors: errs[i],
			ErrorRate: float64(errs[i]) / float64(n), Bound: b.Value})
	}
	return res, nil
}

// known reports whether some fresh class (its row of Confusion in rowOf)
// is one of the model's k classes.
func known(rowOf []int, k int) bool {
	for _, r := range rowOf {
		if r < k {
			return true
		}
	}
	return false
}
