package trainer

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"

	"surety/datasets"
	"surety/trainer/atomicfile"
)

// The files of a sweep folder besides one model file per setting.
const (
	SweepSelectedFile = "selected.json"
	SweepCSVFile      = "sweep.csv"
	SweepJSONFile     = "sweep.json"
)

// CheckOn checks every setting's model on labelled test rows, each at the
// sweep's delta, and fills the rows' Test lines. These bounds hold one
// setting at a time: they are not corrected for the sweep.
func (r *SweepResult) CheckOn(test *datasets.Table) error {
	for i, m := range r.Models {
		c, err := Check(m, test, CheckConfig{Delta: r.Delta})
		if err != nil {
			return fmt.Errorf("trainer: sweep test: %w", err)
		}
		r.Rows[i].Test = &TestLine{Rows: c.Rows, Errors: c.Errors, ErrorRate: c.ErrorRate, Bound: c.Upper.Value, Delta: c.Delta}
	}
	return nil
}

// ModelFileName names a setting's model file in a sweep folder with
// letters, digits, dots and hyphens only: linear-C0.3-learned.json,
// tandem-uniform.json.
func ModelFileName(s Setting) string {
	name := string(s.Objective)
	if s.Objective == Linear {
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

// WriteSweepDir writes the sweep to dir (created if missing): each
// setting's model (ModelFileName, recorded in the rows), the selected model
// as selected.json, and the table as sweep.csv and sweep.json, each file
// atomically. When dir held an earlier sweep, its model files that this
// one does not write are removed at the end, so the folder never mixes two
// grids; nothing else in dir is touched.
func WriteSweepDir(dir string, r *SweepResult) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return fmt.Errorf("trainer: %w", err)
	}
	var stale []string
	if old, err := ReadSweepDir(dir); err == nil {
		for _, row := range old.Rows {
			if row.ModelFile != "" && row.ModelFile == filepath.Base(row.ModelFile) {
				stale = append(stale, row.ModelFile)
			}
		}
	}
	for i, m := range r.Models {
		name := ModelFileName(r.Rows[i].Setting)
		if err := WriteModel(filepath.Join(dir, name), m); err != nil {
			return err
		}
		r.Rows[i].ModelFile = name
	}
	if err := WriteModel(filepath.Join(dir, SweepSelectedFile), r.SelectedModel); err != nil {
		return err
	}
	var buf bytes.Buffer
	if err := r.WriteCSV(&buf); err != nil {
		return err
	}
	if err := atomicfile.Write(filepath.Join(dir, SweepCSVFile), buf.Bytes()); err != nil {
		return fmt.Errorf("trainer: %w", err)
	}
	b, err := json.MarshalIndent(r, "", "  ")
	if err != nil {
		return err
	}
	if err := atomicfile.Write(filepath.Join(dir, SweepJSONFile), append(b, '\n')); err != nil {
		return fmt.Errorf("trainer: %w", err)
	}
	for _, name := range stale {
		if !slices.ContainsFunc(r.Rows, func(row SweepRow) bool { return row.ModelFile == name }) {
			if err := os.Remove(filepath.Join(dir, name)); err != nil && !os.IsNotExist(err) {
				return fmt.Errorf("trainer: %w", err)
			}
		}
	}
	return nil
}

var sweepCSVHeader = []string{"setting", "objective", "tradeoff", "prior", "certificate", "family",
	"selection_certificate", "selection_family", "vote_error", "kl", "heavy_voters",
	"test_rows", "test_errors", "test_error_rate", "test_bound", "model_file", "selected"}

// WriteCSV writes one line per setting; the test columns are empty when
// the sweep was not checked on a test file.
func (r *SweepResult) WriteCSV(w io.Writer) error {
	cw := csv.NewWriter(w)
	cw.Write(sweepCSVHeader)
	g := func(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
	for i, row := range r.Rows {
		rec := []string{row.Name, string(row.Setting.Objective), g(row.Setting.Tradeoff), string(row.Setting.Prior),
			g(row.Certificate), row.Family, g(row.SelectionCertificate), row.SelectionFamily,
			g(row.VoteError), g(row.KL), strconv.Itoa(row.HeavyVoters), "", "", "", "", row.ModelFile, strconv.FormatBool(i == r.Selected)}
		if row.Test != nil {
			copy(rec[11:15], []string{strconv.Itoa(row.Test.Rows), strconv.Itoa(row.Test.Errors), g(row.Test.ErrorRate), g(row.Test.Bound)})
		}
		cw.Write(rec)
	}
	cw.Flush()
	return cw.Error()
}

// ReadSweepDir reads a sweep's table (its rows and selection; the models
// are separate files) from a sweep folder, or from the sweep.json file
// itself when path names a file.
func ReadSweepDir(path string) (*SweepResult, error) {
	if fi, err := os.Stat(path); err == nil && fi.IsDir() {
		path = filepath.Join(path, SweepJSONFile)
	}
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("trainer: %w", err)
	}
	var r SweepResult
	if err := json.Unmarshal(b, &r); err != nil {
		return nil, fmt.Errorf("trainer: %s: not a sweep file: %w", path, err)
	}
	if r.K != len(r.Rows) || r.K == 0 || r.Selected < 0 || r.Selected >= r.K {
		return nil, fmt.Errorf("trainer: %s: not a sweep file: %d rows for %d settings, selected %d", path, len(r.Rows), r.K, r.Selected)
	}
	return &r, nil
}
