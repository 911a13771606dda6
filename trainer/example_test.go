package trainer_test

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"log"
	"os"
	"time"

	"surety/datasets"
	"surety/datasets/demodata"
	"surety/trainer"
	"surety/voters"
)

// demo reads rows of the pipe-leak demo data drawn with seed.
func demo(rows int, seed uint64) *datasets.Table {
	var buf bytes.Buffer
	if err := demodata.Write(&buf, demodata.Config{Rows: rows}, seed); err != nil {
		log.Fatal(err)
	}
	t, err := datasets.Read(&buf, "pipes.csv", datasets.ReadOptions{Label: demodata.Label})
	if err != nil {
		log.Fatal(err)
	}
	return t
}

// small keeps the examples quick: 8 thresholds, 2 linear voters.
var small = voters.PoolConfig{Thresholds: 8, LinearVoters: new(2)}

func ExampleTrain() {
	m, err := trainer.Train(context.Background(), demo(1000, 1), trainer.Config{Seed: 1, Pool: small})
	if err != nil {
		log.Fatal(err)
	}
	fmt.Println(m.Certificate.Sentence())
	fmt.Println("family:", m.Certificate.Family, "on", m.Certificate.CertifyRows, "certify rows")
	// Output:
	// With probability at least 95% over the draw of these rows, the error rate of this vote on new rows from the same source is at most 9.1%.
	// family: hold-out-logistic on 300 certify rows
}

// Prepare splits, builds the pool and counts once; Fit then tries
// settings on the same rows. Each certificate holds for a setting fixed in
// advance; to pick one after seeing them, use Sweep.
func ExamplePrepare() {
	p, err := trainer.Prepare(context.Background(), demo(1000, 1), trainer.Config{Seed: 1, Pool: small})
	if err != nil {
		log.Fatal(err)
	}
	for _, s := range []trainer.Setting{
		{Objective: trainer.Tandem, Tradeoff: 1, Prior: trainer.LearnedPrior},
		{Objective: trainer.Linear, Tradeoff: 3, Prior: trainer.UniformPrior},
	} {
		m, err := p.Fit(context.Background(), s)
		if err != nil {
			log.Fatal(err)
		}
		fmt.Printf("%-26s %s\n", s, trainer.FormatBound(m.Certificate.RiskBound))
	}
	// Output:
	// tandem prior=learned       0.0905
	// linear C=3 prior=uniform   0.0905
}

func ExampleSweep() {
	grid := trainer.Grid([]trainer.Objective{trainer.Linear, trainer.Tandem}, []float64{0.3, 3}, []trainer.PriorKind{trainer.LearnedPrior})
	res, err := trainer.Sweep(context.Background(), demo(1000, 1), trainer.Config{Seed: 1, Pool: small}, grid)
	if err != nil {
		log.Fatal(err)
	}
	for _, r := range res.Rows {
		fmt.Printf("%-26s at delta %s, at delta/K %s\n", r.Name, trainer.FormatBound(r.Certificate), trainer.FormatBound(r.SelectionCertificate))
	}
	fmt.Println("selected:", res.Rows[res.Selected].Name, "certified at", trainer.FormatBound(res.SelectedModel.Certificate.RiskBound))
	// Output:
	// linear C=0.3 prior=learned at delta 0.0905, at delta/K 0.0972
	// linear C=3 prior=learned   at delta 0.0905, at delta/K 0.0972
	// tandem prior=learned       at delta 0.0905, at delta/K 0.0972
	// selected: linear C=0.3 prior=learned certified at 0.0972
}

func ExampleCheck() {
	m, err := trainer.Train(context.Background(), demo(1000, 1), trainer.Config{Seed: 1, Pool: small})
	if err != nil {
		log.Fatal(err)
	}
	c, err := trainer.Check(m, demo(2000, 2), trainer.CheckConfig{Delta: 0.05})
	if err != nil {
		log.Fatal(err)
	}
	fmt.Printf("%d errors on %d fresh rows; limits [%s, %s]\n", c.Errors, c.Rows, trainer.Percent(c.Lower.Value, false), trainer.Percent(c.Upper.Value, true))
	fmt.Println(c.Verdict)
	// Output:
	// 138 errors on 2000 fresh rows; limits [5.9%, 8%]
	// consistent: the fresh rows' error rate, 6.90% (at least 5.9%), is within the training certificate's bound of 9.1%
}

// A sweep folder written by WriteSweepDir holds one model per setting,
// selected.json and the table; ReadSweepDir reads the table back.
func ExampleWriteSweepDir() {
	t := demo(1000, 1)
	objs, dropped := trainer.ObjectivesFor([]trainer.Objective{trainer.CBound, trainer.Tandem}, len(t.Classes))
	fmt.Println("fitted:", objs, "dropped:", dropped)
	res, err := trainer.Sweep(context.Background(), t, trainer.Config{Seed: 1, Pool: small},
		trainer.Grid(objs, nil, []trainer.PriorKind{trainer.UniformPrior}))
	if err != nil {
		log.Fatal(err)
	}
	dir, err := os.MkdirTemp("", "sweep-")
	if err != nil {
		log.Fatal(err)
	}
	defer os.RemoveAll(dir)
	if err := trainer.WriteSweepDir(dir, res); err != nil {
		log.Fatal(err)
	}
	back, err := trainer.ReadSweepDir(dir)
	if err != nil {
		log.Fatal(err)
	}
	for _, r := range back.Rows {
		fmt.Println(r.ModelFile)
	}
	// Output:
	// fitted: [cbound tandem] dropped: []
	// cbound-uniform.json
	// tandem-uniform.json
}

// MeasureDemo measures a model trained on demo rows on fresh rows of the
// same generator: its true error, up to sampling noise.
func ExampleMeasureDemo() {
	m, err := trainer.Train(context.Background(), demo(1000, 1), trainer.Config{Seed: 1, Pool: small})
	if err != nil {
		log.Fatal(err)
	}
	meas, err := trainer.MeasureDemo(m, 50000, 1)
	if err != nil {
		log.Fatal(err)
	}
	fmt.Printf("true error %.1f%%, certificate %s, label noise %.0f%%\n", 100*meas.ErrorRate, trainer.FormatBound(m.Certificate.RiskBound), 100*meas.BayesError)
	fmt.Println(meas.ErrorRate <= m.Certificate.RiskBound)
	// Output:
	// true error 7.1%, certificate 0.0905, label noise 5%
	// true
}

// A monitoring ledger: each week's labelled rows are checked against the
// certificate, and check k spends delta * 6 / (pi^2 k^2), so that every
// limit of every check holds at once with probability at least 1 - delta.
// The time is the caller's: the library reads no clock.
func ExampleMonitor() {
	m, err := trainer.Train(context.Background(), demo(1000, 1), trainer.Config{Seed: 1, Pool: small})
	if err != nil {
		log.Fatal(err)
	}
	ledger, err := trainer.NewMonitorLedger(m, 0.05)
	if err != nil {
		log.Fatal(err)
	}
	week := time.Date(2026, 12, 7, 9, 0, 0, 0, time.UTC)
	for k := range 3 {
		_, e, err := trainer.Monitor(m, demo(500, uint64(50+k)), ledger, trainer.MonitorConfig{Time: week.AddDate(0, 0, 7*k)})
		if err != nil {
			log.Fatal(err)
		}
		fmt.Printf("check %d  %s  %d errors of %d  delta_k %.5f  limits [%.3f, %.3f]  consistent %v\n",
			e.Check, e.Time[:10], e.Errors, e.Rows, e.Delta, e.Lower, e.Upper, e.Consistent)
	}
	// The same rows twice add no evidence: refused.
	_, _, err = trainer.Monitor(m, demo(500, 50), ledger, trainer.MonitorConfig{Time: week.AddDate(0, 1, 0)})
	fmt.Println(errors.Is(err, trainer.ErrRepeatedData))
	// Output:
	// check 1  2026-12-07  32 errors of 500  delta_k 0.03040  limits [0.042, 0.092]  consistent true
	// check 2  2026-12-14  30 errors of 500  delta_k 0.00760  limits [0.035, 0.094]  consistent true
	// check 3  2026-12-21  41 errors of 500  delta_k 0.00338  limits [0.050, 0.124]  consistent true
	// true
}
