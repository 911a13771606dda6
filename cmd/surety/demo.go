package main

import (
	"bytes"
	"context"
	"fmt"
	"os"
	"path/filepath"

	"github.com/spf13/pflag"

	"surety/datasets"
	"surety/datasets/demodata"
	"surety/trainer"
	"surety/trainer/atomicfile"
)

func init() {
	register("demo", "[--rows N] [--seed N] [--out FILE] [--json]",
		"Run the main job on generated demo data with a known true rule, and measure the vote's true error.",
		func() command { return &demoOptions{} })
}

type demoOptions struct {
	rows      int
	freshRows int
	fit       fitFlags
	train     trainFlags
	out       string
	output    outputFlags
}

func (o *demoOptions) AddFlags(fs *pflag.FlagSet) {
	o.rows = 4000
	fs.Var(&intRange{v: &o.rows, lo: 2 * 2 * trainer.MinPartRows, hi: 1 << 30, what: "--rows"}, "rows", "rows of demo data to train and certify on")
	o.freshRows = 200000
	fs.Var(&intRange{v: &o.freshRows, lo: 1, hi: 1 << 30, what: "--fresh-rows"}, "fresh-rows", "fresh rows drawn to measure the vote's true error")
	o.fit.AddFlags(fs)
	o.train.AddFlags(fs)
	fs.StringVar(&o.out, "out", "", "model `file` to write (default: model.json in a new temporary folder)")
	o.output.AddFlags(fs)
}

// demoJSON is demo's --json output: train's, plus the true error.
type demoJSON struct {
	trainJSON
	DataPath string `json:"data_path"`
	trainer.DemoMeasure
}

func (o *demoOptions) run(ctx context.Context, args []string, e *env) error {
	if len(args) > 0 {
		return usagef("unexpected argument %q", args[0])
	}
	cfg := o.train.config(&o.fit)
	out := o.out
	if out == "" {
		dir, err := os.MkdirTemp("", "surety-demo-")
		if err != nil {
			return err
		}
		out = filepath.Join(dir, "model.json")
	}
	dataPath := filepath.Join(filepath.Dir(out), "pipes.csv")
	var buf bytes.Buffer
	if err := demodata.Write(&buf, demodata.Config{Rows: o.rows}, cfg.Seed); err != nil {
		return err
	}
	if err := makeFolder(dataPath); err != nil {
		return err
	}
	if err := atomicfile.Write(dataPath, buf.Bytes()); err != nil {
		return err
	}
	t, err := datasets.ReadFile(dataPath, datasets.ReadOptions{Label: demodata.Label, DeferKinds: true})
	if err != nil {
		return err
	}
	m, err := trainWithProgress(ctx, e, t, cfg)
	if err != nil {
		return err
	}
	if err := trainer.WriteModel(out, m); err != nil {
		return err
	}
	stop := e.spinner("measuring the true error")
	meas, err := trainer.MeasureDemo(m, o.freshRows, cfg.Seed)
	stop()
	if err != nil {
		return err
	}
	if o.output.json {
		return writeJSON(e.stdout, demoJSON{trainReport(t, m, out), dataPath, meas})
	}
	fmt.Fprintf(e.stdout, "demo: %d rows of generated pipe-inspection data (label %q: does a pipe segment leak within a year), written to %s\n\n", t.Rows, demodata.Label, dataPath)
	printTrain(e.stdout, t, m, out)
	fmt.Fprintf(e.stdout, "\ntrue error, measured on %d fresh rows from the same generator: %s (certificate %s; best possible %s, the label noise)\n",
		meas.Rows, pct(meas.ErrorRate), trainer.Percent(m.Certificate.RiskBound, true), pct(meas.BayesError))
	return nil
}
