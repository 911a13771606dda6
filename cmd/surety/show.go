package main

import (
	"context"
	"fmt"
	"io"

	"github.com/spf13/pflag"

	"surety/trainer"
)

func init() {
	register("show", "MODEL_FILE [--top N] [--json]",
		"Print a model's certificate, its heaviest voters as rules, and its provenance.",
		func() command { return &showOptions{} })
}

type showOptions struct {
	top  int
	json bool
}

func (o *showOptions) AddFlags(fs *pflag.FlagSet) {
	o.top = 10
	fs.Var(&intRange{v: &o.top, lo: 1, hi: 1 << 20, what: "--top"}, "top", "number of voters to list, heaviest first")
	fs.BoolVar(&o.json, "json", false, "print one JSON object instead of text")
}

func (o *showOptions) run(ctx context.Context, args []string, e *env) error {
	if len(args) != 1 {
		return usagef("show takes one model file, got %d arguments", len(args))
	}
	m, err := trainer.ReadModelFile(args[0])
	if err != nil {
		return err
	}
	rules := m.TopVoters(o.top)
	if o.json {
		return writeJSON(e.stdout, map[string]any{
			"model_path":  args[0],
			"certificate": m.Certificate,
			"statement":   m.Certificate.Sentence(),
			"empirical":   m.Empirical,
			"classes":     m.Classes,
			"columns":     m.Columns,
			"top_voters":  rules,
			"provenance":  m.Provenance,
			"cautions":    trainer.Cautions,
		})
	}
	printShow(e.stdout, args[0], m, rules)
	return nil
}

func printShow(w io.Writer, path string, m *trainer.Model, rules []trainer.Rule) {
	p := m.Provenance
	fmt.Fprintf(w, "model %s (format %d, written by surety %s)\n\n", path, m.Format, m.ToolVersion)
	printCertificate(w, m)
	fmt.Fprintf(w, "\nheaviest voters (%d of %d):\n", len(rules), len(m.Vote.Voters))
	for _, r := range rules {
		fmt.Fprintf(w, "  %.4f  %s\n", r.Weight, r.Rule)
	}
	fmt.Fprintf(w, "\nprovenance:\n")
	fmt.Fprintf(w, "  data         %s, %d rows, sha256 %s\n", p.Source, p.Rows, p.Data.SHA256)
	fmt.Fprintf(w, "  label        %q, classes %v\n", m.Label, m.Classes)
	fmt.Fprintf(w, "  split        %d prior rows, %d certify rows (fraction %g, seed %d)\n", p.PriorRows, p.CertifyRows, p.PriorFraction, p.Seed)
	fmt.Fprintf(w, "  pool         %d voters\n", p.PoolSize)
	fmt.Fprintf(w, "  objective    %s (trade-off %g), prior %s (uniform mix %g)\n", p.Objective, p.Tradeoff, p.Prior, p.PriorMix)
	fmt.Fprintf(w, "  optimiser    %d iterations, %s\n", p.Optimizer.Iterations, p.Optimizer.Status)
	fmt.Fprintln(w)
	printCautions(w)
}
