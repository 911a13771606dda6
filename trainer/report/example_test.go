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

// A model's heaviest voters for people: a linear voter by its largest
// standardised coefficients, the scales behind z(), and each column's
// share of the vote.
func ExampleReadableOf() {
	m := &trainer.Model{Classes: []string{"no", "yes"}, Vote: &voters.Vote{
		Classes: []string{"no", "yes"},
		Weights: []float64{0.75, 0.25},
		Voters: []voters.Voter{
			&voters.Linear{
				Inputs:  []voters.LinearInput{{Column: "income", Kind: datasets.Numeric, Mean: 52000, Scale: 9000}, {Column: "age", Kind: datasets.Numeric, Mean: 41, Scale: 12}},
				Weights: [][]float64{{0, 0}, {1.5, -0.5}},
				Bias:    []float64{0, 0.25},
			},
			&voters.Stump{Column: "age", Threshold: 30, Below: 0, Above: 1},
		},
	}}
	rd, err := report.ReadableOf(m, 10)
	if err != nil {
		panic(err)
	}
	for _, v := range rd.Voters {
		fmt.Println(v.Weight, v.Short)
	}
	for _, s := range rd.Scales {
		fmt.Printf("z(%s) = (%s - %g) / %g\n", s.Column, s.Column, s.Mean, s.SD)
	}
	for _, c := range rd.Importance {
		fmt.Printf("%s %.4f\n", c.Column, c.Weight)
	}
	// Output:
	// 0.75 +1.50 z(income) -0.50 z(age), bias +0.25: > 0 -> yes, else no
	// 0.25 age <= 30 -> no, else yes (missing: yes)
	// z(income) = (income - 52000) / 9000
	// z(age) = (age - 41) / 12
	// income 0.5625
	// age 0.4375
}

// A two-class linear voter in one line: its largest standardised
// coefficients, the count of the rest, and the score's sign rule.
func ExampleShortLinear() {
	l := &voters.Linear{
		Inputs: []voters.LinearInput{
			{Column: "income", Kind: datasets.Numeric, Mean: 52000, Scale: 9000},
			{Column: "region", Kind: datasets.Categorical, Levels: []string{"north", "south"}},
		},
		Weights: [][]float64{{0, 0, 0}, {1.5, -0.75, 0.05}},
		Bias:    []float64{0, 0.25},
	}
	fmt.Println(report.ShortLinear(l, []string{"no", "yes"}, 2))
	// Output:
	// +1.50 z(income) -0.75 [region="north"] + 1 more term, bias +0.25: > 0 -> yes, else no
}

// Each column's share of a vote's weight: the stump's 0.4 goes to age, the
// linear voter's 0.6 is shared 3:1 by its |coefficients|.
func ExampleImportance() {
	v := &voters.Vote{Classes: []string{"no", "yes"}, Weights: []float64{0.6, 0.4}, Voters: []voters.Voter{
		&voters.Linear{
			Inputs:  []voters.LinearInput{{Column: "income", Kind: datasets.Numeric, Mean: 0, Scale: 1}, {Column: "age", Kind: datasets.Numeric, Mean: 0, Scale: 1}},
			Weights: [][]float64{{0, 0}, {-1.5, 0.5}},
			Bias:    []float64{0, 0},
		},
		&voters.Stump{Column: "age", Threshold: 30, Below: 0, Above: 1},
	}}
	for _, c := range report.Importance(v) {
		fmt.Printf("%s %.2f\n", c.Column, c.Weight)
	}
	// Output:
	// age 0.55
	// income 0.45
}
