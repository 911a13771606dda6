package main

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strings"

	"github.com/spf13/pflag"

	"surety/datasets"
	"surety/trainer"
)

func init() {
	register("train", "--data FILE [--label COL] [flags]",
		"Train a weighted vote on a CSV file and certify its error rate.",
		func() command { return &trainOptions{} })
}

type trainOptions struct {
	data   dataFlags
	fit    fitFlags
	train  trainFlags
	out    string
	costs  string
	output outputFlags
}

func (o *trainOptions) AddFlags(fs *pflag.FlagSet) {
	o.data.AddFlags(fs, true)
	o.fit.AddFlags(fs)
	o.train.AddFlags(fs)
	fs.StringVar(&o.out, "out", "model.json", "model `file` to write")
	fs.StringVar(&o.costs, "costs", "", "cost matrix `file` (rows: true class, columns: decided class; see the README): also bound the vote's expected cost")
	o.output.AddFlags(fs)
}

func (o *trainOptions) run(ctx context.Context, args []string, e *env) error {
	if len(args) > 0 {
		return usagef("unexpected argument %q", args[0])
	}
	cfg := o.train.config(&o.fit)
	if o.costs != "" {
		c, err := trainer.ReadCostsFile(o.costs)
		if err != nil {
			return err
		}
		cfg.Costs = c
	}
	t, err := o.data.read(e, datasets.ReadOptions{DeferKinds: true})
	if err != nil {
		return err
	}
	m, err := trainWithProgress(ctx, e, t, cfg)
	if err != nil {
		return err
	}
	if err := makeFolder(o.out); err != nil {
		return err
	}
	if err := trainer.WriteModel(o.out, m); err != nil {
		return err
	}
	if o.output.json {
		return writeJSON(e.stdout, trainReport(t, m, o.out))
	}
	printTrain(e.stdout, t, m, o.out)
	return nil
}

func trainWithProgress(ctx context.Context, e *env, t *datasets.Table, cfg trainer.Config) (*trainer.Model, error) {
	stop := e.showStages(&cfg, len(t.Columns), 0)
	cfg.Warn = e.warn
	m, err := trainer.Train(ctx, t, cfg)
	stop()
	if err == nil && !m.Provenance.Optimizer.Converged {
		fmt.Fprintf(e.stderr, "warning: the optimiser %s; the certificate holds all the same, but a better posterior may exist\n", m.Provenance.Optimizer.Summary())
	}
	return m, err
}

// trainJSON is the --json output of train; its keys are documented in the
// README.
type trainJSON struct {
	Certificate certificateJSON         `json:"certificate"`
	Statement   string                  `json:"statement"`
	Empirical   trainer.Empirical       `json:"empirical"`
	Data        dataJSON                `json:"data"`
	Split       splitJSON               `json:"split"`
	PoolSize    int                     `json:"pool_size"`
	Optimizer   trainer.OptimizerResult `json:"optimizer"`
	ModelPath   string                  `json:"model_path"`
	Cautions    []string                `json:"cautions"`
}

// certificateJSON is the model's certificate with the comparison to the
// majority guess, which is computed when printed and not kept in the
// model file.
type certificateJSON struct {
	trainer.Certificate
	// Vacuous says the bound is no better than always answering the
	// majority class (or is 1 or more).
	Vacuous       bool           `json:"vacuous"`
	MajorityGuess *trainer.Guess `json:"majority_guess,omitempty"`
}

func certificateOf(m *trainer.Model) certificateJSON {
	c := certificateJSON{Certificate: m.Certificate, Vacuous: m.Vacuous()}
	if g, ok := m.MajorityGuess(); ok {
		c.MajorityGuess = &g
	}
	return c
}

type dataJSON struct {
	Source  string   `json:"source"`
	Rows    int      `json:"rows"`
	Columns int      `json:"feature_columns"`
	Label   string   `json:"label"`
	Classes []string `json:"classes"`
	// ClassCounts holds the rows of each class, indexed like Classes.
	ClassCounts []int                `json:"class_counts"`
	Fingerprint datasets.Fingerprint `json:"fingerprint"`
	// KindChanges lists the columns read as categorical that the prior
	// rows made numeric.
	KindChanges []datasets.KindChange `json:"kind_changes,omitempty"`
}

type splitJSON struct {
	Seed        uint64 `json:"seed"`
	PriorRows   int    `json:"prior_rows"`
	CertifyRows int    `json:"certify_rows"`
}

func trainReport(t *datasets.Table, m *trainer.Model, path string) trainJSON {
	return trainJSON{
		Certificate: certificateOf(m),
		Statement:   m.Certificate.Sentence(),
		Empirical:   m.Empirical,
		Data: dataJSON{Source: t.Source, Rows: t.Rows, Columns: len(t.Columns), Label: t.LabelName,
			Classes: t.Classes, ClassCounts: t.ClassCounts(), Fingerprint: t.Fingerprint, KindChanges: m.Provenance.KindChanges},
		Split:     splitJSON{Seed: m.Provenance.Seed, PriorRows: m.Provenance.PriorRows, CertifyRows: m.Provenance.CertifyRows},
		PoolSize:  m.Provenance.PoolSize,
		Optimizer: m.Provenance.Optimizer,
		ModelPath: path,
		Cautions:  trainer.Cautions,
	}
}

func writeJSON(w io.Writer, v any) error {
	b, err := json.MarshalIndent(v, "", "  ")
	if err != nil {
		return err
	}
	_, err = fmt.Fprintf(w, "%s\n", b)
	return err
}

func printTrain(w io.Writer, t *datasets.Table, m *trainer.Model, path string) {
	num, cat := 0, 0
	for _, c := range t.Columns {
		if c.Kind == datasets.Numeric {
			num++
		} else {
			cat++
		}
	}
	// The kinds the prior rows decided (the table holds those of the read).
	num, cat = num+len(m.Provenance.KindChanges), cat-len(m.Provenance.KindChanges)
	p := m.Provenance
	fmt.Fprintf(w, "data       %s: %d rows, %d feature columns (%d numeric, %d categorical), label %q with %d classes\n",
		t.Source, t.Rows, len(t.Columns), num, cat, t.LabelName, len(t.Classes))
	fmt.Fprintf(w, "classes    %s\n", classCounts(t))
	fmt.Fprintf(w, "split      %d prior rows build the pool and the prior, %d certify rows (seed %d)\n", p.PriorRows, p.CertifyRows, p.Seed)
	fmt.Fprintf(w, "pool       %s\n", counted(p.PoolSize, "voter", "voters"))
	fmt.Fprintf(w, "optimiser  %s objective from the %s start: value %.6g, %s\n",
		p.Objective, p.Optimizer.Start, p.Optimizer.Value, p.Optimizer.Summary())
	fmt.Fprintln(w)
	printCertificate(w, m)
	fmt.Fprintf(w, "\nmodel written to %s\n", path)
	fmt.Fprintln(w)
	printCautions(w)
}

func printCertificate(w io.Writer, m *trainer.Model) {
	c := m.Certificate
	fmt.Fprintln(w, c.Sentence())
	if note := m.VacuousNote(); note != "" {
		fmt.Fprintln(w, note)
	}
	if note := m.SweepNote(); note != "" {
		fmt.Fprintln(w, note)
	}
	share := fmt.Sprintf("delta %g", c.Delta)
	if k := m.Provenance.SweepSettings; k > 0 && m.Provenance.SweepSelected {
		share = fmt.Sprintf("delta %g / %s = %.4g", c.Delta, counted(k, "setting", "settings"), c.Delta/float64(k))
	}
	lines, also := len(c.Families), ""
	if c.PerClass != nil {
		lines++
		also = " and the per-class certificates"
	}
	if c.Cost != nil {
		lines++
		also = ", the per-class and the cost certificates"
	}
	fmt.Fprintf(w, "\nledger: %s split over %s, %s (the smallest bound is kept)%s, m = %d certify rows, KL(Q||P) = %s\n",
		share, counted(lines, "line", "lines"), counted(len(c.Families), "family", "families"), also, c.CertifyRows, trainer.FormatFigure(m.Empirical.KL))
	fmt.Fprintf(w, "  %-20s %-11s %-10s %s\n", "family", "vote", "delta", "bound")
	for _, f := range c.Families {
		mark := ""
		if f.Name == c.Family {
			mark = "  <- certificate"
		}
		val := trainer.FormatBound(f.Value)
		if f.Reason != "" {
			val = "none: " + f.Reason
		}
		fmt.Fprintf(w, "  %-20s %-11s %-10.4g %s%s\n", f.Name, f.Vote, f.Delta, val, mark)
	}
	printClassCertificates(w, m)
	em := m.Empirical
	fmt.Fprintf(w, "empirical on the certify rows: vote error %s, Gibbs risk %s, tandem risk %s",
		pct(em.VoteError), trainer.FormatFigure(em.GibbsRisk), trainer.FormatFigure(em.TandemRisk))
	if em.Disagreement != nil {
		fmt.Fprintf(w, ", disagreement %s", trainer.FormatFigure(*em.Disagreement))
	}
	fmt.Fprintln(w)
}

// printClassCertificates prints the per-class and cost lines of the
// ledger.
func printClassCertificates(w io.Writer, m *trainer.Model) {
	c := m.Certificate
	if pc := c.PerClass; pc != nil {
		fmt.Fprintf(w, "  %-20s %-11s %-10.4g (each class delta / %d, each over %s)\n", "per-class", c.Vote, pc.Delta, len(pc.Classes), counted(pc.CandidateVotes, "candidate vote", "candidate votes"))
		for _, cb := range pc.Classes {
			val := fmt.Sprintf("error within the class at most %s", trainer.FormatBound(cb.Value))
			if cb.Reason != "" {
				val = "none: " + cb.Reason
			}
			fmt.Fprintf(w, "    %-18s %5d %-4s %5d %-6s (%s)  %s\n", cb.Class, cb.Rows, noun(cb.Rows, "row", "rows"), cb.Errors, noun(cb.Errors, "error", "errors"), pct(float64(cb.Errors)/float64(max(cb.Rows, 1))), val)
		}
	}
	if cc := c.Cost; cc != nil {
		fmt.Fprintf(w, "  %-20s %-11s %-10.4g expected cost per row at most %s (mean on the certify rows %.4g, largest cost %g)\n",
			"cost", c.Vote, cc.Delta, upFigures(cc.Value, 4), cc.MeanCost, cc.MaxCost)
	}
}

func pct(x float64) string {
	if math.IsNaN(x) {
		return "n/a"
	}
	return fmt.Sprintf("%.2f%%", 100*x)
}

func printCautions(w io.Writer) {
	fmt.Fprintln(w, "cautions:")
	for _, c := range trainer.Cautions {
		fmt.Fprintf(w, "- %s\n", c)
	}
}

// classCounts lists each class with its rows, in the table's class
// order: "leak 650, sound 550".
func classCounts(t *datasets.Table) string {
	var b strings.Builder
	for k, n := range t.ClassCounts() {
		if k > 0 {
			b.WriteString(", ")
		}
		fmt.Fprintf(&b, "%s %d", t.Classes[k], n)
	}
	return b.String()
}

// noun is one or many by n, for a count printed in its own column.
func noun(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

// counted writes n with the singular or plural noun: "1 line", "8 lines".
func counted(n int, one, many string) string {
	if n == 1 {
		return "1 " + one
	}
	return fmt.Sprintf("%d %s", n, many)
}
