package main

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/spf13/pflag"

	"surety/trainer"
	"surety/trainer/atomicfile"
	"surety/voters/onnxexport"
	"surety/voters/sqlexport"
)

func init() {
	register("export", "--model FILE --format "+formatWords()+" [--out FILE] [--table NAME] [--keep COLUMNS] [--class-weights] [--json]",
		"Write a trained vote for another runtime, giving row by row the class and margin predict gives (sql: one portable SELECT; onnx: an ONNX model).",
		func() command { return &exportOptions{} })
}

// exportInput is what an export format gets: the model as read, the hex
// SHA-256 of its file's bytes, and the format-specific flags.
type exportInput struct {
	model        *trainer.Model
	modelSHA256  string
	table        string
	keep         []string
	classWeights bool
}

// exportFormat is one --format word. Adding a format is one entry in
// exportFormats: its word, the file extension it suggests, what it
// writes, whether it reads --table, --keep and --class-weights, and its
// write function.
type exportFormat struct {
	name, ext, what string
	sqlFlags        bool
	binary          bool // never written to standard output
	write           func(b *bytes.Buffer, in exportInput) error
}

var exportFormats = []exportFormat{
	{name: "sql", ext: ".sql", what: "one SQL:2003 SELECT", sqlFlags: true, write: writeSQL},
	{name: "onnx", ext: ".onnx", what: "one ONNX model", binary: true, write: writeONNX},
}

func formatNames() []string {
	w := make([]string, len(exportFormats))
	for i, f := range exportFormats {
		w[i] = f.name
	}
	return w
}

func formatWords() string { return strings.Join(formatNames(), "|") }

// writeSQL writes the vote as one SELECT (package sqlexport).
func writeSQL(b *bytes.Buffer, in exportInput) error {
	m := in.model
	statement := ""
	if m.Certificate.Delta > 0 { // a model file without a certificate has none to state
		statement = m.Certificate.Sentence() + sweepNote(m)
	}
	return sqlexport.Write(b, m.Vote, m.Columns, sqlexport.Options{
		Table:        in.table,
		Keep:         in.keep,
		ClassWeights: in.classWeights,
		Provenance: sqlexport.Provenance{
			Statement:   statement,
			Delta:       m.Certificate.Delta,
			Data:        m.Provenance.Data,
			ModelSHA256: in.modelSHA256,
			Label:       m.Label,
		},
	})
}

// writeONNX writes the vote as an ONNX model (package onnxexport), the
// certificate and where it came from in its metadata_props.
func writeONNX(b *bytes.Buffer, in exportInput) error {
	m := in.model
	meta := []onnxexport.Property{
		{Key: "surety.label", Value: m.Label},
		{Key: "surety.model_sha256", Value: in.modelSHA256},
		{Key: "surety.data_sha256", Value: m.Provenance.Data.SHA256},
		{Key: "surety.data_rows", Value: strconv.Itoa(m.Provenance.Data.Rows)},
	}
	if m.Certificate.Delta > 0 {
		meta = append(meta,
			onnxexport.Property{Key: "surety.certificate", Value: m.Certificate.Sentence() + sweepNote(m)},
			onnxexport.Property{Key: "surety.risk_bound", Value: strconv.FormatFloat(m.Certificate.RiskBound, 'g', -1, 64)},
			onnxexport.Property{Key: "surety.delta", Value: strconv.FormatFloat(m.Certificate.Delta, 'g', -1, 64)},
			onnxexport.Property{Key: "surety.family", Value: m.Certificate.Family})
	}
	return onnxexport.Write(b, m.Vote, m.Columns, onnxexport.Options{ProducerVersion: m.ToolVersion, Metadata: meta})
}

func sweepNote(m *trainer.Model) string {
	if n := m.SweepNote(); n != "" {
		return " " + n
	}
	return ""
}

// formatFlag takes one word of exportFormats, checked at parse time.
type formatFlag struct{ f *exportFormat }

func (f *formatFlag) String() string {
	if f.f == nil {
		return ""
	}
	return f.f.name
}

func (f *formatFlag) Set(s string) error {
	for i := range exportFormats {
		if exportFormats[i].name == s {
			f.f = &exportFormats[i]
			return nil
		}
	}
	return fmt.Errorf("%q is not one of %s", s, strings.Join(formatNames(), ", "))
}

func (f *formatFlag) Type() string { return formatWords() }

// tableFlag takes an SQL table name, checked at parse time.
type tableFlag struct {
	name string
	set  bool
}

func (t *tableFlag) String() string { return t.name }

func (t *tableFlag) Set(s string) error {
	if err := sqlexport.CheckTableName(s); err != nil {
		return fmt.Errorf("%q is not a table name: use letters, digits and underscores, not starting with a digit, parts joined by dots (schema.table)", s)
	}
	t.name, t.set = s, true
	return nil
}

func (t *tableFlag) Type() string { return "name" }

type exportOptions struct {
	model        string
	format       formatFlag
	out          string
	table        tableFlag
	keep         []string
	classWeights bool
	output       outputFlags
}

func (o *exportOptions) AddFlags(fs *pflag.FlagSet) {
	fs.StringVar(&o.model, "model", "", "model `file` written by train or sweep")
	fs.Var(&o.format, "format", "what to write: sql (one SELECT over a table with the model's columns) or onnx (an ONNX model, one input per column; needs --out)")
	fs.StringVar(&o.out, "out", "", "`file` to write (default: standard output)")
	o.table.name = sqlexport.DefaultTable
	fs.Var(&o.table, "table", "sql: the table the SELECT reads (schema.table allowed)")
	fs.StringSliceVar(&o.keep, "keep", nil, "sql: input `columns` to pass through ahead of the class, such as a row key to join the predictions back")
	fs.BoolVar(&o.classWeights, "class-weights", false, "sql: also return each class's total weight, as weight_<class>")
	o.output.AddFlags(fs)
}

// exportJSON is export's --json output; its keys are documented in the
// README.
type exportJSON struct {
	Format      string `json:"format"`
	Out         string `json:"out"`
	Bytes       int    `json:"bytes"`
	ModelPath   string `json:"model_path"`
	ModelSHA256 string `json:"model_sha256"`
	Voters      int    `json:"voters"`
	Classes     int    `json:"classes"`
	Table       string `json:"table,omitempty"`
}

// run decodes the model with trainer.DecodeModelFile, which every
// command's read goes through, so whatever checks a model file passes
// there apply here; the hash is of the same bytes, read once.
func (o *exportOptions) run(ctx context.Context, args []string, e *env) error {
	if len(args) > 0 {
		return usagef("unexpected argument %q", args[0])
	}
	if o.model == "" {
		return usagef("--model is required")
	}
	f := o.format.f
	if f == nil {
		return usagef("--format is required (one of %s)", strings.Join(formatNames(), ", "))
	}
	if !f.sqlFlags && (o.table.set || o.keep != nil || o.classWeights) {
		return usagef("--table, --keep and --class-weights apply to --format sql only")
	}
	if f.binary && o.out == "" {
		return usagef("--format %s writes a binary file: name it with --out", f.name)
	}
	if o.output.json && o.out == "" {
		return usagef("--json needs --out: without it the export itself goes to standard output")
	}
	raw, err := os.ReadFile(o.model)
	if err != nil {
		return err
	}
	m, err := trainer.DecodeModelFile(o.model, raw)
	if err != nil {
		return err
	}
	sum := sha256.Sum256(raw)
	in := exportInput{model: m, modelSHA256: hex.EncodeToString(sum[:]), table: o.table.name, keep: o.keep, classWeights: o.classWeights}
	var b bytes.Buffer
	if err := f.write(&b, in); err != nil {
		return fmt.Errorf("%s: %w", o.model, err)
	}
	if o.out == "" {
		_, err := e.stdout.Write(b.Bytes())
		return err
	}
	if ext := filepath.Ext(o.out); ext != f.ext {
		e.warn(fmt.Sprintf("writing %s to %s, whose extension is not %s", f.name, o.out, f.ext))
	}
	if err := makeFolder(o.out); err != nil {
		return err
	}
	if err := atomicfile.Write(o.out, b.Bytes()); err != nil {
		return err
	}
	voters := 0
	for _, w := range m.Vote.Weights {
		if w != 0 {
			voters++
		}
	}
	if o.output.json {
		j := exportJSON{Format: f.name, Out: o.out, Bytes: b.Len(), ModelPath: o.model, ModelSHA256: in.modelSHA256, Voters: voters, Classes: len(m.Classes)}
		if f.sqlFlags {
			j.Table = o.table.name
		}
		return writeJSON(e.stdout, j)
	}
	fmt.Fprintf(e.stdout, "%s written to %s: %d bytes, %s of non-zero weight, %d classes\n", f.what, o.out, b.Len(), counted(voters, "voter", "voters"), len(m.Classes))
	return nil
}
