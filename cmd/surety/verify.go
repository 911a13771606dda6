package main

import (
	"context"
	"errors"
	"fmt"
	"io"

	"github.com/spf13/pflag"

	"surety/datasets"
	"surety/trainer"
)

func init() {
	register("verify", "--model FILE [--data TRAINING-FILE] [--json]",
		"Audit a model: recompute its ledger from the stored terms; with the training file, redo the split, pool, statistics and every bound, and report match or the first difference (exit 1).",
		func() command { return &verifyOptions{} })
}

type verifyOptions struct {
	model  string
	data   dataFlags
	output outputFlags
}

func (o *verifyOptions) AddFlags(fs *pflag.FlagSet) {
	fs.StringVar(&o.model, "model", "", "model `file` to audit")
	o.data.flag = "data"
	o.data.usage = "the training CSV `file` (read with the same reading flags as train): redo the whole certificate from it"
	o.data.AddFlags(fs, false)
	o.output.AddFlags(fs)
}

// errMismatch makes verify exit 1 after printing its report.
var errMismatch = errors.New("the model does not match")

// verifyJSON is verify's --json output; its keys are documented in the
// README.
type verifyJSON struct {
	ModelPath string               `json:"model_path"`
	DataPath  string               `json:"data_path,omitempty"`
	SHA256    string               `json:"content_sha256"`
	Match     bool                 `json:"match"`
	First     string               `json:"first_difference,omitempty"`
	Ledger    *trainer.LedgerAudit `json:"ledger"`
	Steps     []trainer.VerifyStep `json:"steps,omitempty"`
}

func (o *verifyOptions) run(ctx context.Context, args []string, e *env) error {
	m, err := modelArg(args, o.model)
	if err != nil {
		return err
	}
	hash, err := m.ContentHash()
	if err != nil {
		return err
	}
	out := verifyJSON{ModelPath: o.model, SHA256: hash}
	if o.data.path == "" {
		out.Ledger = trainer.AuditLedger(m)
		out.Match, out.First = out.Ledger.Problem == "", out.Ledger.Problem
	} else {
		// No cap on classes: the model's classes were settled when it was
		// trained (with --max-classes, perhaps), and verify redoes that work.
		ro := datasets.ReadOptions{DeferKinds: true, Label: m.Label, MaxClasses: -1}
		t, err := o.data.read(e, ro)
		if err != nil {
			return err
		}
		a, err := trainer.VerifyData(ctx, m, t)
		if err != nil {
			return err
		}
		out.DataPath, out.Ledger, out.Steps = o.data.path, a.Ledger, a.Steps
		out.Match, out.First = a.Match, a.FirstDifference
	}
	if o.output.json {
		if err := writeJSON(e.stdout, out); err != nil {
			return err
		}
	} else {
		printVerify(e.stdout, out)
	}
	if !out.Match {
		return fmt.Errorf("%w: %s", errMismatch, out.First)
	}
	return nil
}

func printVerify(w io.Writer, v verifyJSON) {
	fmt.Fprintf(w, "model  %s: content sha256 %s (the file's hash matches its content)\n\n", v.ModelPath, v.SHA256)
	fmt.Fprintf(w, "ledger recomputed from the stored terms:\n")
	fmt.Fprintf(w, "  %-28s %-16s %-16s %s\n", "entry", "stored", "recomputed", "")
	for _, l := range v.Ledger.Lines {
		mark := "match"
		if !l.Match {
			mark = "DIFFERS"
		}
		fmt.Fprintf(w, "  %-28s %-16.10g %-16.10g %s\n", l.Entry, l.Stored, l.Recomputed, mark)
	}
	if v.DataPath != "" {
		fmt.Fprintf(w, "\nredone from %s:\n", v.DataPath)
		for _, s := range v.Steps {
			mark := "match"
			if !s.Match {
				mark = "DIFFERS"
			}
			fmt.Fprintf(w, "  %-32s %-7s  %s", s.Step, mark, s.Stored)
			if s.Stored != s.Recomputed {
				fmt.Fprintf(w, "  |  recomputed: %s", s.Recomputed)
			}
			fmt.Fprintln(w)
		}
	}
	fmt.Fprintln(w)
	switch {
	case v.Match && v.DataPath != "":
		fmt.Fprintln(w, "verdict: match: the data, the stored seed and settings give this model's certificate again, every bound within 1e-9")
	case v.Match:
		fmt.Fprintln(w, "verdict: match: every ledger entry follows from its stored terms within 1e-9 (give --data to redo the terms from the training file)")
	default:
		fmt.Fprintf(w, "verdict: DIFFERS: %s\n", v.First)
	}
}
