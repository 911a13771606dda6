package main

import (
	"bytes"
	"context"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"
	"strconv"
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
	// train holds the flags shared with train (data, delta, split, pool,
	// --json); its single objective, trade-off, prior and --out are
	// replaced by the lists below.
	train      trainOptions
	objectives []string
	tradeoffs  []float64
	priors     []string
	test       string
	outDir     string
}

func (o *sweepOptions) AddFlags(fs *pflag.FlagSet) {
	o.objectives = []string{"linear", "cbound", "tandem"}
	o.tradeoffs = []float64{0.1, 0.3, 1, 3, 10, 30}
	o.priors = []string{"learned", "uniform"}
	all := pflag.NewFlagSet("train", pflag.ContinueOnError)
	all.SortFlags = false
	o.train.AddFlags(all)
	all.VisitAll(func(f *pflag.Flag) {
		switch f.Name {
		case "objective":
			fs.Var(&enumList{v: &o.objectives, words: objectiveWords}, "objective",
				"objectives to try, comma-separated (cbound is dropped with a warning when the label has more than two classes)")
		case "tradeoff":
			fs.Var(&positiveList{v: &o.tradeoffs, what: "--tradeoff"}, "tradeoff",
				"values of C to try in the linear objective, comma-separated (the other objectives' bounds do not contain it: they are fitted once, at C = 1)")
		case "prior":
			fs.Var(&enumList{v: &o.priors, words: []string{"learned", "uniform"}}, "prior", "priors to try, comma-separated")
		case "out":
			fs.StringVar(&o.test, "test", "", "labelled test CSV `file`: each setting's vote is checked on it (read with the same data flags)")
			fs.StringVar(&o.outDir, "out-dir", "", "`folder` to write each model, selected.json, sweep.csv and sweep.json to (created if missing)")
		default:
			fs.AddFlag(f)
		}
	})
}

func (o *sweepOptions) run(ctx context.Context, args []string, e *env) error {
	if len(args) > 0 {
		return usagef("unexpected argument %q", args[0])
	}
	cfg, err := o.train.config()
	if err != nil {
		return err
	}
	t, err := o.train.data.read(e, datasets.ReadOptions{DeferKinds: true})
	if err != nil {
		return err
	}
	objectives := make([]trainer.Objective, 0, len(o.objectives))
	for _, w := range o.objectives {
		if trainer.Objective(w) == trainer.CBound && len(t.Classes) != 2 {
			if len(o.objectives) == 1 {
				return fmt.Errorf("%s: the C-bound objective needs exactly 2 classes, the label %q has %d: try --objective tandem", t.Source, t.LabelName, len(t.Classes))
			}
			fmt.Fprintf(e.stderr, "warning: cbound dropped from the sweep: the label %q has %d classes, the C-bound needs 2\n", t.LabelName, len(t.Classes))
			continue
		}
		objectives = append(objectives, trainer.Objective(w))
	}
	priors := make([]trainer.PriorKind, len(o.priors))
	for i, w := range o.priors {
		priors[i] = trainer.PriorKind(w)
	}
	settings := trainer.Grid(objectives, o.tradeoffs, priors)

	show, stop := e.stages()
	cfg.Progress, cfg.Warn = show, e.warn
	res, err := trainer.Sweep(ctx, t, cfg, settings)
	stop()
	if err != nil {
		return err
	}
	if o.test != "" {
		if err := o.checkTest(e, t, res); err != nil {
			return err
		}
	}
	if o.outDir != "" {
		if err := writeSweep(o.outDir, res); err != nil {
			return err
		}
	}
	if o.train.json {
		return writeJSON(e.stdout, res)
	}
	printSweep(e.stdout, t, res, o.outDir)
	return nil
}

// checkTest checks every setting's model on the --test file, each at the
// sweep's delta.
func (o *sweepOptions) checkTest(e *env, t *datasets.Table, res *trainer.SweepResult) error {
	d := o.train.data
	d.path = o.test
	test, err := readLabelled(e, &d, res.Models[0], "the sweep's model")
	if err != nil {
		return err
	}
	for i, m := range res.Models {
		c, err := trainer.Check(m, test, trainer.CheckConfig{Delta: res.Delta})
		if err != nil {
			return fmt.Errorf("--test %s: %w", o.test, err)
		}
		res.Rows[i].Test = &trainer.TestLine{Rows: c.Rows, Errors: c.Errors, ErrorRate: c.ErrorRate, Bound: c.Upper.Value, Delta: c.Delta}
	}
	return nil
}

// modelFileName names a setting's model file with letters, digits, dots and
// hyphens only: linear-C0.3-learned.json, tandem-uniform.json.
func modelFileName(s trainer.Setting) string {
	name := string(s.Objective)
	if s.Objective == trainer.Linear {
		name += "-C" + strconv.FormatFloat(s.Tradeoff, 'g', -1, 64)
	}
	name += "-" + string(s.Prior)
	return strings.Map(func(r rune) rune {
		switch {
		case r >= 'a' && r <= 'z', r >= 'A' && r <= 'Z', r >= '0' && r <= '9', r == '.', r == '-':
			return r
		}
		return '_'
	}, name) + ".json"
}

// writeSweep writes each model, the selected model, and the table as CSV
// and JSON to dir, each file atomically. Model files are named in the rows
// relative to dir. When dir held an earlier sweep, its model files that
// the new one does not write are removed at the end, so the folder never
// mixes two grids; nothing else in dir is touched.
func writeSweep(dir string, res *trainer.SweepResult) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	var stale []string
	if old, err := trainer.ReadSweepFile(filepath.Join(dir, "sweep.json")); err == nil {
		for _, r := range old.Rows {
			if r.ModelFile != "" && r.ModelFile == filepath.Base(r.ModelFile) {
				stale = append(stale, r.ModelFile)
			}
		}
	}
	for i, m := range res.Models {
		name := modelFileName(res.Rows[i].Setting)
		if err := trainer.WriteModel(filepath.Join(dir, name), m); err != nil {
			return err
		}
		res.Rows[i].ModelFile = name
	}
	if err := trainer.WriteModel(filepath.Join(dir, "selected.json"), res.SelectedModel); err != nil {
		return err
	}
	var buf bytes.Buffer
	if err := writeSweepCSV(&buf, res); err != nil {
		return err
	}
	if err := trainer.WriteFileAtomic(filepath.Join(dir, "sweep.csv"), buf.Bytes()); err != nil {
		return err
	}
	b, err := json.MarshalIndent(res, "", "  ")
	if err != nil {
		return err
	}
	if err := trainer.WriteFileAtomic(filepath.Join(dir, "sweep.json"), append(b, '\n')); err != nil {
		return err
	}
	for _, name := range stale {
		if !slices.ContainsFunc(res.Rows, func(r trainer.SweepRow) bool { return r.ModelFile == name }) {
			if err := os.Remove(filepath.Join(dir, name)); err != nil && !os.IsNotExist(err) {
				return err
			}
		}
	}
	return nil
}

var sweepCSVHeader = []string{"setting", "objective", "tradeoff", "prior", "certificate", "family",
	"selection_certificate", "selection_family", "vote_error", "kl", "heavy_voters",
	"test_rows", "test_errors", "test_error_rate", "test_bound", "model_file", "selected"}

// writeSweepCSV writes one line per setting; the test columns are empty
// without --test.
func writeSweepCSV(w io.Writer, res *trainer.SweepResult) error {
	cw := csv.NewWriter(w)
	cw.Write(sweepCSVHeader)
	g := func(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
	for i, r := range res.Rows {
		rec := []string{r.Name, string(r.Setting.Objective), g(r.Setting.Tradeoff), string(r.Setting.Prior),
			g(r.Certificate), r.Family, g(r.SelectionCertificate), r.SelectionFamily,
			g(r.VoteError), g(r.KL), strconv.Itoa(r.HeavyVoters), "", "", "", "", r.ModelFile, strconv.FormatBool(i == res.Selected)}
		if r.Test != nil {
			copy(rec[11:15], []string{strconv.Itoa(r.Test.Rows), strconv.Itoa(r.Test.Errors), g(r.Test.ErrorRate), g(r.Test.Bound)})
		}
		cw.Write(rec)
	}
	cw.Flush()
	return cw.Error()
}

func printSweep(w io.Writer, t *datasets.Table, res *trainer.SweepResult, outDir string) {
	m0 := res.Models[0].Provenance
	fmt.Fprintf(w, "data   %s: %d rows, label %q with %d classes\n", t.Source, t.Rows, t.LabelName, len(t.Classes))
	fmt.Fprintf(w, "split  %d prior rows, %d certify rows (seed %d), pool of %d voters, the same for all %d settings\n\n",
		m0.PriorRows, m0.CertifyRows, m0.Seed, m0.PoolSize, res.K)
	hasTest := res.Rows[0].Test != nil
	width := len("setting")
	for _, r := range res.Rows {
		width = max(width, len(r.Name))
	}
	head := fmt.Sprintf("  %-*s  %11s  %11s  %-18s  %10s  %8s  %7s", width, "setting", "certificate", "selection", "family", "vote error", "KL", "voters")
	sub := fmt.Sprintf("  %-*s  %11s  %11s  %-18s  %10s  %8s  %7s", width, "", fmt.Sprintf("at %g", res.Delta), fmt.Sprintf("at %.4g", res.SelectionDelta), "", "certify", "", "> 1%")
	if hasTest {
		head += fmt.Sprintf("  %10s  %10s", "test error", "test bound")
		sub += fmt.Sprintf("  %10s  %10s", fmt.Sprintf("%d rows", res.Rows[0].Test.Rows), fmt.Sprintf("at %g", res.Delta))
	}
	fmt.Fprintln(w, head)
	fmt.Fprintln(w, strings.TrimRight(sub, " "))
	for i, r := range res.Rows {
		line := fmt.Sprintf("  %-*s  %11s  %11s  %-18s  %10s  %8.4f  %7d", width, r.Name, trainer.FormatBound(r.Certificate), trainer.FormatBound(r.SelectionCertificate), r.Family, pct(r.VoteError), r.KL, r.HeavyVoters)
		if hasTest {
			line += fmt.Sprintf("  %10s  %10s", pct(r.Test.ErrorRate), trainer.FormatBound(r.Test.Bound))
		}
		if i == res.Selected {
			line += "  <- selected"
		}
		fmt.Fprintln(w, line)
	}
	for _, m := range res.Models {
		if m.Certificate.Vote == trainer.VotePriorRows {
			fmt.Fprintf(w, "  (a %s row ships the vote fitted on the prior rows alone; its KL is the unshipped posterior's, which its certificate does not use)\n", trainer.FamilyHoldOut)
			break
		}
	}
	fmt.Fprintln(w)
	fmt.Fprintln(w, res.Statement)
	sel := res.SelectedModel.Certificate
	fmt.Fprintf(w, "The selected model ships the vote its %s family certifies (%s).\n", sel.Family, sel.Vote)
	if hasTest {
		fmt.Fprintf(w, "The test bounds hold one setting at a time (each at delta = %g, not corrected for the %d settings): do not select by them.\n", res.Delta, res.K)
	}
	if outDir != "" {
		fmt.Fprintf(w, "\nwritten to %s: %d model files, selected.json (the selected model, certified at delta / %d), sweep.csv, sweep.json\n",
			outDir, res.K, res.K)
	}
	fmt.Fprintln(w)
	printCautions(w)
}
