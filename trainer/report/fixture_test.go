package report_test

import (
	"bytes"
	"context"
	"sync"
	"testing"

	"surety/datasets"
	"surety/datasets/demodata"
	"surety/trainer"
	"surety/trainer/report"
	"surety/voters"
)

// demoInput is a report's input from the demo data: the model selected by
// a small sweep over every objective, both priors and three trade-offs,
// checked on fresh rows drawn with another seed. It is built once per test
// binary, since training is the slow part.
var demoInput = sync.OnceValues(func() (report.Input, error) {
	read := func(rows int, seed uint64, opts datasets.ReadOptions) (*datasets.Table, error) {
		var b bytes.Buffer
		if err := demodata.Write(&b, demodata.Config{Rows: rows}, seed); err != nil {
			return nil, err
		}
		return datasets.Read(&b, "demo.csv", opts)
	}
	t, err := read(3000, 7, datasets.ReadOptions{Label: demodata.Label})
	if err != nil {
		return report.Input{}, err
	}
	two := 2
	cfg := trainer.Config{Seed: 1, Pool: voters.PoolConfig{Thresholds: 8, LinearVoters: &two}}
	grid := trainer.Grid([]trainer.Objective{trainer.Linear, trainer.Tandem, trainer.CBound, trainer.KL},
		[]float64{0.3, 3, 30}, []trainer.PriorKind{trainer.LearnedPrior, trainer.UniformPrior})
	sw, err := trainer.Sweep(context.Background(), t, cfg, grid)
	if err != nil {
		return report.Input{}, err
	}
	m := sw.SelectedModel
	opts := m.ReadOptions()
	opts.NoLabel, opts.Label = false, m.Label
	fresh, err := read(600, 99, opts)
	if err != nil {
		return report.Input{}, err
	}
	chk, err := trainer.Check(m, fresh, trainer.CheckConfig{})
	if err != nil {
		return report.Input{}, err
	}
	return report.Input{Model: m, ModelPath: "demo/model.json", Sweep: sw, SweepPath: "demo/sweep",
		Check: chk, CheckPath: "demo/fresh.csv"}, nil
})

func fixture(t testing.TB) report.Input {
	t.Helper()
	in, err := demoInput()
	if err != nil {
		t.Fatal(err)
	}
	return in
}
