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
)

func init() {
	register("demo", "[--rows N] [--seed N] [--out FILE] [--json]",
		"Run the main job on generated demo data with a known true rule, and measure the vote's true error.",
		func() command { return &demoOptions{} })
}

type demoOptions struct {
	train     trainOptions
	rows      int
	freshRows int
}

func (o *demoOptions) AddFlags(fs *pflag.FlagSet) {
	o.rows = 4000
	fs.Var(&intRange{v: &o.rows, lo: 2 * 2 * trainer.MinPartRows, hi: 1 << 30, what: "--rows"}, "rows", "rows of demo data to train and certify on")
	o.freshRows = 200000
	fs.Var(&intRange{v: &o.freshRows, lo: 1, hi: 1 << 30, what: "--fresh-rows"}, "fresh-rows", "fresh rows drawn to measure the vote's true error")
	// The training flags, less those that read a user's file.
	all := pflag.NewFlagSet("train", pflag.ContinueOnError)
	o.train.AddFlags(all)
	all.VisitAll(func(f *pflag.Flag) {
		switch f.Name {
		case "data", "label", "drop-missing-label", "no-header", "delimiter", "missing", "categorical", "ignore":
		case "out":
			f.DefValue = ""
			o.train.out = ""
			f.Usage = "model `file` to write (default: model.json in a new temporary folder)"
			fs.AddFlag(f)
		default:
			fs.AddFlag(f)
		}
	})
}

// demoJSON is demo's --json output: train's, plus the true error.
type demoJSON struct {
	trainJSON
	DataPath       string  `json:"data_path"`
	FreshRows      int     `json:"fresh_rows"`
	FreshErrorRate float64 `json:"fresh_error_rate"`
	BestErrorRate  float64 `json:"best_error_rate"`
}

func (o *demoOptions) run(ctx context.Context, args []string, e *env) error {
	if len(args) > 0 {
		return usagef("unexpected argument %q", args[0])
	}
	cfg, err := o.train.config()
	if err != nil {
		return err
	}
	out := o.train.out
	if out == "" {
		dir, err := os.MkdirTemp("", "surety-demo-")
		if err != nil {
			return err
		}
		out = filepath.Join(dir, "model.json")
	}
	dataPath := filepath.Join(filepath.Dir(out), "pipes.csv")
	gen := demodata.Config{Rows: o.rows}
	var buf bytes.Buffer
	if err := demodata.Write(&buf, gen, o.train.seed); err != nil {
		return err
	}
	if err := trainer.WriteFileAtomic(dataPath, buf.Bytes()); err != nil {
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

	// The true error: the vote on many fresh rows from the same generator,
	// drawn with another seed so none of them is a training row.
	stop := e.spinner("measuring the true error")
	buf.Reset()
	if err := demodata.Write(&buf, demodata.Config{Rows: o.freshRows}, o.train.seed^0xf7e54); err != nil {
		stop()
		return err
	}
	ro := m.ReadOptions()
	ro.NoLabel, ro.Label = false, demodata.Label
	fresh, err := datasets.Read(&buf, "fresh demo rows", ro)
	if err != nil {
		stop()
		return err
	}
	errs, err := m.CountErrors(fresh)
	stop()
	if err != nil {
		return err
	}
	rate := float64(errs) / float64(fresh.Rows)
	if o.train.json {
		return writeJSON(e.stdout, demoJSON{trainReport(t, m, out), dataPath, fresh.Rows, rate, gen.BayesError()})
	}
	fmt.Fprintf(e.stdout, "demo: %d rows of generated pipe-inspection data (label %q: does a pipe segment leak within a year), written to %s\n\n", t.Rows, demodata.Label, dataPath)
	printTrain(e.stdout, t, m, out)
	fmt.Fprintf(e.stdout, "\ntrue error, measured on %d fresh rows from the same generator: %s (certificate %s; best possible %s, the label noise)\n",
		fresh.Rows, pct(rate), pct(m.Certificate.RiskBound), pct(gen.BayesError()))
	return nil
}
