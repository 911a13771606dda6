package report_test

import (
	"bytes"
	"context"
	"fmt"
	"strings"

	"surety/datasets"
	"surety/datasets/demodata"
	"surety/trainer"
	"surety/trainer/report"
	"surety/voters"
)

// Train a vote on the demo data and write its report: one HTML page with
// the certificate, the ledger, the voters as rules, the plots and the
// cautions.
func ExampleWrite() {
	var csv bytes.Buffer
	if err := demodata.Write(&csv, demodata.Config{Rows: 800}, 1); err != nil {
		panic(err)
	}
	t, err := datasets.Read(&csv, "pipes.csv", datasets.ReadOptions{Label: demodata.Label})
	if err != nil {
		panic(err)
	}
	two := 2
	m, err := trainer.Train(context.Background(), t, trainer.Config{Seed: 1, Pool: voters.PoolConfig{Thresholds: 8, LinearVoters: &two}})
	if err != nil {
		panic(err)
	}
	var page bytes.Buffer
	if err := report.Write(&page, report.Input{Model: m, ModelPath: "model.json"}); err != nil {
		panic(err)
	}
	fmt.Println(report.PlotIDs(report.Input{Model: m}))
	fmt.Println(strings.HasPrefix(page.String(), "<!DOCTYPE html>"), strings.Contains(page.String(), `id="certificate"`))
	// Output:
	// [plot-weights plot-margins]
	// true true
}
