package report_test

import (
	"bytes"
	"context"
	"fmt"
	"sync"
	"testing"
	"time"

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
	// A monitoring ledger of six weekly checks of 300 rows, the fifth
	// with its labels flipped (a drift verdict).
	ledger, err := trainer.NewMonitorLedger(m, 0.05)
	if err != nil {
		return report.Input{}, err
	}
	week := time.Date(2026, 11, 2, 9, 0, 0, 0, time.UTC)
	for k := range 6 {
		rows, err := read(300, uint64(200+k), opts)
		if err != nil {
			return report.Input{}, err
		}
		if k == 4 {
			for i, c := range rows.Label {
				rows.Label[i] = len(rows.Classes) - 1 - c
			}
		}
		rows.Source = fmt.Sprintf("demo/week%d.csv", k+1)
		if _, _, err := trainer.Monitor(m, rows, ledger, trainer.MonitorConfig{Time: week.AddDate(0, 0, 7*k)}); err != nil {
			return report.Input{}, err
		}
	}
	return report.Input{Model: m, ModelPath: "demo/model.json", Sweep: sw, SweepPath: "demo/sweep",
		Check: chk, CheckPath: "demo/fresh.csv", Monitor: ledger, MonitorPath: "demo/ledger.jsonl"}, nil
})

func fixture(t testing.TB) report.Input {
	t.Helper()
	in, err := demoInput()
	if err != nil {
		t.Fatal(err)
	}
	return in
}
