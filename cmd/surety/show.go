package main

import (
	"context"
	"fmt"
	"io"

	"github.com/spf13/pflag"

	"surety/trainer"
)

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
	fs.Var(&intRange{v: &o.top, lo: 1, hi: 1 << 20, what: "--top"}, "top", "number of voters to list, heaviest first")
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
	rules := m.TopVoters(o.top)
	if o.output.json {
		return writeJSON(e.stdout, map[string]any{
			"model_path":  path,
			"certificate": certificateOf(m),
			"statement":   m.Certificate.Sentence(),
			"empirical":   m.Empirical,
			"classes":     m.Classes,
			"columns":     m.Columns,
			"top_voters":  rules,
			"provenance":  m.Provenance,
			"cautions":    trainer.Cautions,
		})
	}
	printShow(e.stdout, path, m, rules)
	return nil
}

func printShow(w io.Writer, path string, m *trainer.Model, rules []trainer.Rule) {
	p := m.Provenance
	fmt.Fprintf(w, "model %s (format %d, written by surety %s)\n\n", path, m.Format, m.ToolVersion)
	printCertificate(w, m)
	fmt.Fprintf(w, "\nheaviest voters (%d of %d):\n", len(rules), len(m.Vote.Voters))
	for _, r := range rules {
		fmt.Fprintf(w, "  %s  %s\n", trainer.FormatFigure(r.Weight), r.Rule)
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
