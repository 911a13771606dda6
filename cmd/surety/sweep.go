package main

import (
	"context"
	"fmt"
	"io"
	"strings"

	"github.com/spf13/pflag"

	"surety/datasets"
	"surety/trainer"
)

func init() {
	register("sweep", "--data FILE [--label COL] [--objective LIST] [--tradeoff LIST] [--prior LIST] [--test FILE] [--out-dir DIR] [flags]",
		"Train every setting of a grid on one split and select the smallest certificate honestly, at delta / K.",
		func() command { return &sweepOptions{} })
}

type sweepOptions struct {
	data   dataFlags
	grid   gridFlags
	train  trainFlags
	test   string
	outDir string
	output outputFlags
}

func (o *sweepOptions) AddFlags(fs *pflag.FlagSet) {
	o.data.AddFlags(fs, true)
	o.grid.AddFlags(fs)
	o.train.AddFlags(fs)
	fs.StringVar(&o.test, "test", "", "labelled test CSV `file`: each setting's vote is checked on it (read with the same data flags)")
	fs.StringVar(&o.outDir, "out-dir", "", "`folder` to write each model, selected.json, sweep.csv and sweep.json to (created if missing)")
	o.output.AddFlags(fs)
}

func (o *sweepOptions) run(ctx context.Context, args []string, e *env) error {
	if len(args) > 0 {
		return usagef("unexpected argument %q", args[0])
	}
	cfg := o.train.config(nil)
	t, err := o.data.read(e, datasets.ReadOptions{DeferKinds: true})
	if err != nil {
		return err
	}
	objectives := make([]trainer.Objective, len(o.grid.objectives))
	for i, w := range o.grid.objectives {
		objectives[i] = trainer.Objective(w)
	}
	objectives, dropped := trainer.ObjectivesFor(objectives, len(t.Classes))
	if len(objectives) == 0 {
		return fmt.Errorf("%s: the %s objective needs exactly 2 classes, the label %q has %d: try --objective tandem", t.Source, dropped[0], t.LabelName, len(t.Classes))
	}
	for _, d := range dropped {
		fmt.Fprintf(e.stderr, "warning: %s dropped from the sweep: the label %q has %d classes, the %s objective needs 2\n", d, t.LabelName, len(t.Classes), d)
	}
	priors := make([]trainer.PriorKind, len(o.grid.priors))
	for i, w := range o.grid.priors {
		priors[i] = trainer.PriorKind(w)
	}
	settings := trainer.Grid(objectives, o.grid.tradeoffs, priors)

	stop := e.showStages(&cfg, len(t.Columns), len(settings))
	cfg.Warn = e.warn
	res, err := trainer.Sweep(ctx, t, cfg, settings)
	stop()
	if err != nil {
		return err
	}
	if o.test != "" {
		d := o.data
		d.path = o.test
		test, err := readLabelled(e, &d, res.Models[0], "the sweep's model")
		if err != nil {
			return err
		}
		if err := res.CheckOn(test); err != nil {
			return fmt.Errorf("--test %s: %w", o.test, err)
		}
	}
	if o.outDir != "" {
		if err := trainer.WriteSweepDir(o.outDir, res); err != nil {
			return err
		}
	}
	if o.output.json {
		return writeJSON(e.stdout, res)
	}
	printSweep(e.stdout, t, res, o.outDir)
	return nil
}

func printSweep(w io.Writer, t *datasets.Table, res *trainer.SweepResult, outDir string) {
	m0 := res.Models[0].Provenance
	fmt.Fprintf(w, "data   %s: %d rows, label %q with %d classes (%s)\n", t.Source, t.Rows, t.LabelName, len(t.Classes), classCounts(t))
	all := fmt.Sprintf("all %d settings", res.K)
	if res.K == 1 {
		all = "the one setting"
	}
	fmt.Fprintf(w, "split  %d prior rows, %d certify rows (seed %d), pool of %s, the same for %s\n\n",
		m0.PriorRows, m0.CertifyRows, m0.Seed, counted(m0.PoolSize, "voter", "voters"), all)
	hasTest := res.Rows[0].Test != nil
	width := len("setting")
	for _, r := range res.Rows {
		width = max(width, len(r.Name))
	}
	head := fmt.Sprintf("  %-*s  %11s  %11s  %-18s  %10s  %8s  %7s", width, "setting", "certificate", "selection", "family", "vote error", "KL", "voters")
	sub := fmt.Sprintf("  %-*s  %11s  %11s  %-18s  %10s  %8s  %7s", width, "", fmt.Sprintf("at %g", res.Delta), fmt.Sprintf("at %.4g", res.SelectionDelta), "", "certify", "", "> 1%")
	if hasTest {
		head += fmt.Sprintf("  %10s  %10s", "test error", "test bound")
		sub += fmt.Sprintf("  %10s  %10s", counted(res.Rows[0].Test.Rows, "row", "rows"), fmt.Sprintf("at %g", res.Delta))
	}
	fmt.Fprintln(w, head)
	fmt.Fprintln(w, strings.TrimRight(sub, " "))
	for i, r := range res.Rows {
		line := fmt.Sprintf("  %-*s  %11s  %11s  %-18s  %10s  %8s  %7d", width, r.Name, trainer.FormatBound(r.Certificate), trainer.FormatBound(r.SelectionCertificate), r.Family, pct(r.VoteError), trainer.FormatFigure(r.KL), r.HeavyVoters)
		if hasTest {
			line += fmt.Sprintf("  %10s  %10s", pct(r.Test.ErrorRate), trainer.FormatBound(r.Test.Bound))
		}
		if i == res.Selected {
			line += "  <- selected"
		}
		fmt.Fprintln(w, line)
	}
	for _, m := range res.Models {
		if m.Certificate.Vote != trainer.VotePosterior {
			fmt.Fprintf(w, "  (a hold-out row ships a vote fixed on the prior rows alone; its KL is the unshipped posterior's, which its certificate does not use)\n")
			break
		}
	}
	fmt.Fprintln(w)
	fmt.Fprintln(w, res.Statement)
	sel := res.SelectedModel.Certificate
	fmt.Fprintf(w, "The selected model ships the vote its %s family certifies (%s).\n", sel.Family, sel.Vote)
	if note := res.SelectedModel.VacuousNote(); note != "" {
		fmt.Fprintln(w, note)
	}
	if hasTest {
		fmt.Fprintf(w, "The test bounds hold one setting at a time (each at delta = %g, not corrected for the %s): do not select by them.\n", res.Delta, counted(res.K, "setting", "settings"))
	}
	if outDir != "" {
		fmt.Fprintf(w, "\nwritten to %s: %s, selected.json (the selected model, certified at delta / %d), sweep.csv, sweep.json\n",
			outDir, counted(res.K, "model file", "model files"), res.K)
	}
	fmt.Fprintln(w)
	printCautions(w)
}
