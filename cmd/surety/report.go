package main

import (
	"bytes"
	"context"
	"fmt"

	"github.com/spf13/pflag"

	"surety/trainer"
	"surety/trainer/atomicfile"
	"surety/trainer/report"
)

func init() {
	register("report", "--model FILE [--sweep DIR] [--check FILE] [--ledger FILE] [--delta D] [--out report.html] [--json]",
		"Write one self-contained HTML page on a model: certificate, ledger, data and split, voters as rules, plots, cautions; with a sweep, a check on fresh rows and a monitoring history when given.",
		func() command { return &reportOptions{} })
}

type reportOptions struct {
	model string
	sweep string
	// check reads the fresh rows: its path is the --check flag, and the
	// other data flags say how to read the file.
	check  dataFlags
	ledger string
	delta  deltaFlag
	top    int
	out    string
	output outputFlags
}

func (o *reportOptions) AddFlags(fs *pflag.FlagSet) {
	fs.StringVar(&o.model, "model", "", "model `file` written by train or sweep")
	fs.StringVar(&o.sweep, "sweep", "", "sweep `folder` written by sweep --out-dir (or its sweep.json): adds the sweep's table and plot")
	// The shared data flags, with --data named --check: the fresh rows are
	// optional here and read with the model's schema and label.
	o.check.flag = "check"
	o.check.usage = "labelled fresh CSV `file` to check the vote on (with the model's label column): adds the check and its plot"
	o.check.AddFlags(fs, false)
	fs.StringVar(&o.ledger, "ledger", "", "monitoring ledger `file` of this model (written by check --ledger): adds its history, as a table and a plot")
	o.delta.AddFlags(fs, "probability that each bound of the check is wrong")
	o.top = 10
	fs.Var(&intRange{v: &o.top, lo: 1, hi: 1 << 20, what: "--top"}, "top", "number of voters to list as rules, heaviest first")
	fs.StringVar(&o.out, "out", "report.html", "HTML `file` to write")
	o.output.AddFlags(fs)
}

// reportJSON is report's --json output; its keys are documented in the
// README.
type reportJSON struct {
	ReportPath string   `json:"report_path"`
	Plots      []string `json:"plots"`
}

func (o *reportOptions) run(ctx context.Context, args []string, e *env) error {
	m, err := modelArg(args, o.model)
	if err != nil {
		return err
	}
	in := report.Input{Model: m, ModelPath: o.model, TopVoters: o.top}
	if o.sweep != "" {
		if in.Sweep, err = trainer.ReadSweepDir(o.sweep); err != nil {
			return err
		}
		in.SweepPath = o.sweep
	}
	if o.check.path != "" {
		t, err := readLabelled(e, &o.check, m, o.model)
		if err != nil {
			return err
		}
		if in.Check, err = trainer.Check(m, t, trainer.CheckConfig{Delta: o.delta.delta}); err != nil {
			return err
		}
		in.CheckPath = o.check.path
	}
	if o.ledger != "" {
		if in.Monitor, err = trainer.ReadMonitorLedgerFile(o.ledger); err != nil {
			return err
		}
		in.MonitorPath = o.ledger
	}
	var page bytes.Buffer
	if err := report.Write(&page, in); err != nil {
		return err
	}
	if err := makeFolder(o.out); err != nil {
		return err
	}
	if err := atomicfile.Write(o.out, page.Bytes()); err != nil {
		return err
	}
	plots := report.PlotIDs(in)
	if o.output.json {
		return writeJSON(e.stdout, reportJSON{ReportPath: o.out, Plots: plots})
	}
	fmt.Fprintf(e.stdout, "report written to %s (%s: %v)\n", o.out, counted(len(plots), "plot", "plots"), plots)
	return nil
}
