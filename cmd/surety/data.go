package main

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"

	"github.com/spf13/pflag"

	"surety/datasets"
	"surety/trainer"
)

// dataFlags are the flags that say how to read a CSV file, shared by every
// command that reads one. The file's own flag is --data unless flag names
// another (with usage as its help).
type dataFlags struct {
	flag, usage      string
	path             string
	label            string
	noHeader         bool
	delimiter        delimiter
	missing          []string
	categorical      []string
	ignore           []string
	dropMissingLabel bool
	decimalComma     bool
	maxClasses       int
}

func (d *dataFlags) AddFlags(fs *pflag.FlagSet, withLabel bool) {
	name, usage := "data", "CSV `file` to read (plain or gzip; - for standard input)"
	if d.flag != "" {
		name, usage = d.flag, d.usage
	}
	fs.StringVar(&d.path, name, "", usage)
	if withLabel {
		fs.StringVar(&d.label, "label", "", "label column `name` (default: the column named \"label\")")
		fs.BoolVar(&d.dropMissingLabel, "drop-missing-label", false, "drop rows whose label is missing instead of failing")
		fs.IntVar(&d.maxClasses, "max-classes", 0, "most classes the label may have; 0: a tenth of the rows (at least 10), 10 for a label of numbers; -1: no cap")
	}
	fs.BoolVar(&d.noHeader, "no-header", false, "the file has no header row; columns are named c1..cN")
	fs.Var(&d.delimiter, "delimiter", "field delimiter: one of , ; | or \"tab\" (default: detected from the first line)")
	fs.StringSliceVar(&d.missing, "missing", nil, "cell `values` that mean missing (default: empty, NA, N/A, NaN, null, ?)")
	fs.StringSliceVar(&d.categorical, "categorical", nil, "read these `columns` as categories even if they hold numbers")
	fs.StringSliceVar(&d.ignore, "ignore", nil, "leave these `columns` out")
	fs.BoolVar(&d.decimalComma, "decimal-comma", false, "read cells such as 1,5 as numbers (a decimal comma)")
}

// options turns the flags into reader options; base carries what the
// command itself needs (for example a model's schema).
func (d *dataFlags) options(base datasets.ReadOptions, warn func(string)) datasets.ReadOptions {
	o := base
	o.NoHeader = d.noHeader
	if d.label != "" {
		o.Label = d.label
	}
	o.DropMissingLabel = d.dropMissingLabel
	o.DecimalComma = d.decimalComma
	if d.maxClasses != 0 {
		o.MaxClasses = d.maxClasses
	}
	if d.missing != nil {
		o.MissingTokens = d.missing
	}
	o.Categorical = append(o.Categorical, d.categorical...)
	o.Ignore = append(o.Ignore, d.ignore...)
	o.Warn = warn
	if d.delimiter != 0 {
		o.Delimiter = rune(d.delimiter)
	}
	return o
}

// read reads the table named by --data.
func (d *dataFlags) read(e *env, base datasets.ReadOptions) (*datasets.Table, error) {
	o, err := d.prepare(e, base)
	if err != nil {
		return nil, err
	}
	var t *datasets.Table
	if d.path == "-" {
		stop := e.spinner("reading standard input")
		t, err = datasets.Read(e.stdin, "-", o)
		stop()
	} else if f, m := e.openCounted(d.path); f != nil {
		t, err = datasets.Read(f, d.path, o)
		m.finish()
		f.Close()
	} else {
		t, err = datasets.ReadFile(d.path, o)
	}
	return t, flagHint(err)
}

// flagHint adds the flag that answers a read error, where one does.
func flagHint(err error) error {
	switch {
	case errors.Is(err, datasets.ErrDecimalComma):
		return fmt.Errorf("%w (--decimal-comma)", err)
	case errors.Is(err, datasets.ErrTooManyClasses):
		return fmt.Errorf("%w (--max-classes N)", err)
	}
	return err
}

// prepare checks that --data names a file (or - for standard input) and
// returns the read options of the flags over base, warnings to stderr.
func (d *dataFlags) prepare(e *env, base datasets.ReadOptions) (datasets.ReadOptions, error) {
	if d.path == "" {
		name := d.flag
		if name == "" {
			name = "data"
		}
		return base, usagef("--%s is required", name)
	}
	o := d.options(base, e.warn)
	if d.path != "-" {
		fi, err := os.Stat(d.path)
		if err != nil {
			return base, err
		}
		if fi.IsDir() {
			return base, fmt.Errorf("%s is a folder, not a file", d.path)
		}
	}
	return o, nil
}

// readLabelled reads fresh rows for model m (read from modelPath) with
// its schema and its label column, which they must hold; one class is
// enough (a batch of one class is an ordinary thing to check).
func readLabelled(e *env, d *dataFlags, m *trainer.Model, modelPath string) (*datasets.Table, error) {
	if m.Label == "" {
		return nil, fmt.Errorf("%s: the model names no label column, so fresh rows cannot be checked against it", modelPath)
	}
	ro := m.ReadOptions()
	ro.NoLabel, ro.Label, ro.OneClass = false, m.Label, true
	return d.read(e, ro)
}

// makeFolder creates the folder of an output file when it is missing:
// every command does, as sweep --out-dir creates its folder, so that no
// command fails where another would have gone ahead (README, "Commands").
// It is called just before the file is written, once the job succeeded,
// so a failed run leaves no empty folder behind.
func makeFolder(path string) error {
	dir := filepath.Dir(path)
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return fmt.Errorf("creating the folder of %s: %w", path, err)
	}
	return nil
}

// modelArg reads the model named by --model for a command that takes no
// arguments.
func modelArg(args []string, path string) (*trainer.Model, error) {
	if len(args) > 0 {
		return nil, usagef("unexpected argument %q", args[0])
	}
	if path == "" {
		return nil, usagef("--model is required")
	}
	return trainer.ReadModelFile(path)
}
