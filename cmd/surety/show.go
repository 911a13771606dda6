package main

import (
	"context"
	"fmt"
	"io"
	"strconv"

	"github.com/spf13/pflag"

	"surety/trainer"
	"surety/trainer/report"
)

// fmtScale writes a mean or sd with 4 significant digits.
func fmtScale(x float64) string { return strconv.FormatFloat(x, 'g', 4, 64) }

func init() {
	register("show", "--model FILE [--top N] [--json]   (or: show FILE)",
		"Print a model's certificate, its heaviest voters as rules, and its provenance.",
		func() command { return &showOptions{} })
}

type showOptions struct {
	model  string
	top    int
	output outputFlags
}

func (o *showOptions) AddFlags(fs *pflag.FlagSet) {
	fs.StringVar(&o.model, "model", "", "model `file` written by train or sweep (or give it as the one argument)")
	o.top = 10
	fs.Var(&intRange{v: &o.top, lo: 1, hi: 1 << 20, what: "--top"}, "top", "number of voters, and of columns by importance, to list, heaviest first")
	o.output.AddFlags(fs)
}

func (o *showOptions) run(ctx context.Context, args []string, e *env) error {
	path := o.model
	switch {
	case len(args) == 1 && path == "":
		path = args[0]
	case len(args) > 1 || (len(args) == 1 && path != ""):
		return usagef("show takes one model file, by --model or as its argument, got %d", len(args)+min(1, len(path)))
	}
	m, err := modelArg(nil, path)
	if err != nil {
		return err
	}
	rd, err := report.ReadableOf(m, o.top)
	if err != nil {
		return err
	}
	if o.output.json {
		return writeJSON(e.stdout, map[string]any{
			"model_path":  path,
			"certificate": certificateOf(m),
			"statement":   m.Certificate.Sentence(),
			"empirical":   m.Empirical,
			"classes":     m.Classes,
			"columns":     m.Columns,
			"top_voters":  rd.Voters,
			"scales":      rd.Scales,
			"importance":  rd.Importance,
			"notes":       readableNotes(rd),
			"provenance":  m.Provenance,
			"cautions":    trainer.Cautions,
		})
	}
	printShow(e.stdout, path, m, rd, o.top)
	return nil
}

// readableNotes are the footnotes of show's voters and importance: the
// importance rule always, the class-vote rule when a multiclass linear
// voter is listed.
func readableNotes(rd *report.Readable) []string {
	notes := []string{rd.ImportanceRule}
	if rd.ClassVotesRule != "" {
		notes = append(notes, rd.ClassVotesRule)
	}
	return notes
}

func printShow(w io.Writer, path string, m *trainer.Model, rd *report.Readable, top int) {
	p := m.Provenance
	fmt.Fprintf(w, "model %s (format %d, written by surety %s)\n\n", path, m.Format, m.ToolVersion)
	printCertificate(w, m)
	fmt.Fprintf(w, "\nheaviest voters (%d of %d; linear voters by their %d largest standardised coefficients, all of them in --json):\n", len(rd.Voters), len(m.Vote.Voters), report.LinearTerms)
	for _, r := range rd.Voters {
		fmt.Fprintf(w, "  %s  %s\n", trainer.FormatFigure(r.Weight), r.Short)
	}
	if len(rd.Scales) > 0 {
		fmt.Fprintf(w, "\nscales, z(column) = (column - mean) / sd on the prior rows:\n")
		width := 0
		for _, s := range rd.Scales {
			width = max(width, len(s.Column))
		}
		for _, s := range rd.Scales {
			fmt.Fprintf(w, "  %-*s  mean %-10s sd %s\n", width, s.Column, fmtScale(s.Mean), fmtScale(s.SD))
		}
	}
	shown := rd.Importance[:min(top, len(rd.Importance))]
	fmt.Fprintf(w, "\ncolumn importance (share of the vote's weight, %d of %d columns):\n", len(shown), len(m.Columns))
	width := 0
	for _, c := range shown {
		width = max(width, len(c.Column))
	}
	for _, c := range shown {
		fmt.Fprintf(w, "  %-*s  %6s\n", width, c.Column, strconv.FormatFloat(100*c.Weight, 'f', 1, 64)+"%")
	}
	if rest := len(rd.Importance) - len(shown); rest > 0 {
		fmt.Fprintf(w, "  + %s\n", counted(rest, "more column", "more columns"))
	}
	for _, n := range readableNotes(rd) {
		fmt.Fprintf(w, "  note: %s\n", n)
	}
	fmt.Fprintf(w, "\nprovenance:\n")
	fmt.Fprintf(w, "  data         %s, %d rows, sha256 %s\n", p.Source, p.Rows, p.Data.SHA256)
	fmt.Fprintf(w, "  label        %q, classes %v\n", m.Label, m.Classes)
	fmt.Fprintf(w, "  split        %d prior rows, %d certify rows (fraction %g, seed %d)\n", p.PriorRows, p.CertifyRows, p.PriorFraction, p.Seed)
	fmt.Fprintf(w, "  pool         %d voters\n", p.PoolSize)
	fmt.Fprintf(w, "  objective    %s (trade-off %g), prior %s (uniform mix %g)\n", p.Objective, p.Tradeoff, p.Prior, p.PriorMix)
	fmt.Fprintf(w, "  optimiser    %s\n", p.Optimizer.Summary())
	fmt.Fprintln(w)
	printCautions(w)
}
