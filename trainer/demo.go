package trainer

import (
	"bytes"
	"fmt"

	"surety/datasets"
	"surety/datasets/demodata"
)

// DemoMeasure is a model's true error on the demo scenario, measured on
// fresh rows from the same generator.
type DemoMeasure struct {
	Rows      int     `json:"fresh_rows"`
	Errors    int     `json:"fresh_errors"`
	ErrorRate float64 `json:"fresh_error_rate"`
	// BayesError is the best error rate possible: the label noise.
	BayesError float64 `json:"best_error_rate"`
}

// demoFreshSeed turns the training rows' seed into the fresh rows' seed, so
// that no fresh row repeats a training row's draw.
func demoFreshSeed(seed uint64) uint64 { return seed ^ 0xf7e54 }

// MeasureDemo draws rows fresh rows of the demo scenario
// (datasets/demodata) with a seed derived from the training rows' seed,
// and counts m's errors on them (ties are errors). For a model trained on
// demo rows, this is its true error up to sampling noise of order
// 1/sqrt(rows).
func MeasureDemo(m *Model, rows int, trainSeed uint64) (DemoMeasure, error) {
	var buf bytes.Buffer
	if err := demodata.Write(&buf, demodata.Config{Rows: rows}, demoFreshSeed(trainSeed)); err != nil {
		return DemoMeasure{}, fmt.Errorf("trainer: demo rows: %w", err)
	}
	ro := m.ReadOptions()
	ro.NoLabel, ro.Label = false, demodata.Label
	fresh, err := datasets.Read(&buf, "fresh demo rows", ro)
	if err != nil {
		return DemoMeasure{}, fmt.Errorf("trainer: %w", err)
	}
	errs, err := m.CountErrors(fresh)
	if err != nil {
		return DemoMeasure{}, err
	}
	return DemoMeasure{Rows: fresh.Rows, Errors: errs, ErrorRate: float64(errs) / float64(fresh.Rows),
		BayesError: demodata.Config{}.BayesError()}, nil
}
