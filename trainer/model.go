package trainer

import (
	"bytes"
	"cmp"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"slices"

	"surety/datasets"
	"surety/trainer/atomicfile"
	"surety/voters"
)

// Version is the tool version recorded in every model file.
const Version = "0.3.0"

// ModelFormat is the version of the model file layout this package writes
// and the only one it reads. Format 3 adds the per-class (and cost)
// certificates to the ledger and the content hash (integrity); format 2
// held the vote as one object and the pool's resolved settings. Older
// files are refused with a message that says to retrain.
const ModelFormat = 3

// Model is a trained vote with its certificate and provenance: what a model
// file holds.
type Model struct {
	Format      int
	ToolVersion string
	// Label is the label column's name in the training file.
	Label string
	// Classes are the class names, sorted.
	Classes []string
	// Columns is the schema the vote expects of a file to predict on.
	Columns []voters.ColumnSpec
	// Vote is the shipped vote: the voters of the whole pool and their
	// weights (a point on the simplex).
	Vote        *voters.Vote
	Certificate Certificate
	Empirical   Empirical
	Provenance  Provenance
}

// Provenance says where the model came from, so a reader can redo the work.
type Provenance struct {
	Data          datasets.Fingerprint `json:"data"`
	Source        string               `json:"source"`
	Seed          uint64               `json:"seed"`
	Rows          int                  `json:"rows"`
	PriorRows     int                  `json:"prior_rows"`
	CertifyRows   int                  `json:"certify_rows"`
	PoolSize      int                  `json:"pool_size"`
	Objective     Objective            `json:"objective"`
	Tradeoff      float64              `json:"tradeoff"`
	Prior         PriorKind            `json:"prior"`
	PriorMix      float64              `json:"prior_mix"`
	PriorFraction float64              `json:"prior_fraction"`
	// Pool is the pool's configuration with every default resolved.
	Pool      voters.PoolConfig `json:"pool"`
	Optimizer OptimizerResult   `json:"optimizer"`
	// KindChanges lists the columns read as categorical that the prior
	// rows made numeric, with the cells that became missing.
	KindChanges []datasets.KindChange `json:"kind_changes,omitempty"`
	// SweepSettings, when not zero, is the number K of settings of the sweep
	// this model came from. SweepSelected says it is the selection: its
	// certificate is then computed at delta / K (each family at delta /
	// (K F)) although it states delta. A sweep's other models are certified
	// at delta, which holds only for a setting fixed before the sweep.
	SweepSettings int  `json:"sweep_settings,omitempty"`
	SweepSelected bool `json:"sweep_selected,omitempty"`
	// Family is Config.Family: the one family computed, or "" for all.
	Family string `json:"family,omitempty"`
	// MaxIterations is the optimiser's bound on its iterations, as used.
	MaxIterations int `json:"max_iterations"`
}

// SweepNote says, for a model that came from a sweep, what its certificate
// holds for; "" for any other model.
func (m *Model) SweepNote() string {
	k := m.Provenance.SweepSettings
	switch {
	case k == 0:
		return ""
	case m.Provenance.SweepSelected:
		return fmt.Sprintf("This setting was selected from %d settings of a sweep after seeing them all, so its certificate is computed at delta / %d = %.4g, although it states delta = %g.",
			k, k, m.Certificate.Delta/float64(k), m.Certificate.Delta)
	default:
		return fmt.Sprintf("This model is one of %d settings of a sweep. Its certificate, at delta = %g, holds only for a setting fixed before the sweep was run; a setting picked after seeing the sweep needs the selection's certificate at delta / %d (the sweep's selected.json).",
			k, m.Certificate.Delta, k)
	}
}

// modelFile is the JSON layout of a model file. The vote (its classes,
// weights and voters) is written by package voters.
type modelFile struct {
	Format      int                 `json:"surety_model_format"`
	ToolVersion string              `json:"tool_version"`
	Label       string              `json:"label"`
	Columns     []voters.ColumnSpec `json:"columns"`
	Certificate Certificate         `json:"certificate"`
	Empirical   Empirical           `json:"empirical"`
	Provenance  Provenance          `json:"provenance"`
	Vote        *voters.Vote        `json:"vote"`
	Integrity   *Integrity          `json:"integrity"`
}

// MarshalJSON writes the model file layout, with the content hash of m.
func (m *Model) MarshalJSON() ([]byte, error) {
	in, err := integrityOf(m)
	if err != nil {
		return nil, fmt.Errorf("trainer: hashing the model: %w", err)
	}
	return json.Marshal(modelFile{
		Integrity:   &in,
		Format:      m.Format,
		ToolVersion: m.ToolVersion,
		Label:       m.Label,
		Columns:     m.Columns,
		Certificate: m.Certificate,
		Empirical:   m.Empirical,
		Provenance:  m.Provenance,
		Vote:        m.Vote,
	})
}

// EncodeModel writes m's model file layout to w, indented, with a final
// newline.
func EncodeModel(w io.Writer, m *Model) error {
	b, err := json.MarshalIndent(m, "", "  ")
	if err != nil {
		return fmt.Errorf("trainer: encoding model: %w", err)
	}
	_, err = w.Write(append(b, '\n'))
	return err
}

// WriteModel writes m to path atomically (package atomicfile), so an
// interrupted run leaves any earlier file at path intact.
func WriteModel(path string, m *Model) error {
	if err := atomicfile.WriteWith(path, func(f *os.File) error { return EncodeModel(f, m) }); err != nil {
		return fmt.Errorf("trainer: %w", err)
	}
	return nil
}

// ReadModelFile reads and validates a model file.
func ReadModelFile(path string) (*Model, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("trainer: %w", err)
	}
	return DecodeModelFile(path, b)
}

// DecodeModelFile decodes data, the bytes of the model file at path, as
// ReadModelFile does; for a caller that needs the bytes too (to hash
// them) without reading the file twice.
func DecodeModelFile(path string, data []byte) (*Model, error) {
	m, err := DecodeModel(bytes.NewReader(data))
	if err != nil {
		return nil, fmt.Errorf("trainer: %s: %w", path, err)
	}
	return m, nil
}

// simplexTolerance is how far from 1 the weights may sum in a model file
// (rounding in the JSON decimal form stays far below it).
const simplexTolerance = 1e-9

// DecodeModel reads and validates a model from r: the format version, the
// weights on the simplex, every voter reading a column of the schema, the
// ledger recomputed from its own terms (CheckLedger), and the content hash
// (Integrity). Every command reads models through it, so an edited or
// damaged file fails wherever it is read.
func DecodeModel(r io.Reader) (*Model, error) {
	b, err := io.ReadAll(r)
	if err != nil {
		return nil, err
	}
	var head struct {
		Format      int    `json:"surety_model_format"`
		ToolVersion string `json:"tool_version"`
	}
	if err := json.Unmarshal(b, &head); err != nil {
		return nil, fmt.Errorf("not a model file: %w", err)
	}
	if head.Format != ModelFormat {
		if head.Format >= 1 && head.Format < ModelFormat {
			return nil, fmt.Errorf("model format %d (written by surety %s) is not read by surety %s, which reads format %d: train the model again with this version (the certificate depends on the data, so an old file is not converted)", head.Format, head.ToolVersion, Version, ModelFormat)
		}
		return nil, fmt.Errorf("model format %d is not supported (this is version %s, which reads format %d)", head.Format, Version, ModelFormat)
	}
	dec := json.NewDecoder(bytes.NewReader(b))
	dec.DisallowUnknownFields()
	var f modelFile
	if err := dec.Decode(&f); err != nil {
		return nil, fmt.Errorf("not a model file: %w", err)
	}
	v := f.Vote
	if v == nil {
		return nil, fmt.Errorf("the model file holds no vote")
	}
	if len(v.Classes) < 2 {
		return nil, fmt.Errorf("the model has %d classes, want at least 2", len(v.Classes))
	}
	if len(v.Voters) == 0 {
		return nil, fmt.Errorf("the model has no voters")
	}
	var sum float64
	for i, w := range v.Weights {
		if !(w >= 0) || math.IsInf(w, 0) {
			return nil, fmt.Errorf("weight %d is %v: the weights are not on the simplex", i, w)
		}
		sum += w
	}
	if math.Abs(sum-1) > simplexTolerance {
		return nil, fmt.Errorf("the weights sum to %v, not 1: they are not on the simplex", sum)
	}
	if h := f.Empirical.Margins; h != nil {
		if !(h.Lo < h.Hi) || math.IsInf(h.Lo, 0) || math.IsInf(h.Hi, 0) || len(h.Counts) == 0 {
			return nil, fmt.Errorf("the margin histogram's bins [%v, %v] x %d are not a histogram", h.Lo, h.Hi, len(h.Counts))
		}
		for i, n := range h.Counts {
			if n < 0 {
				return nil, fmt.Errorf("margin bin %d holds %d rows", i, n)
			}
		}
	}
	known := map[string]bool{}
	for _, c := range f.Columns {
		known[c.Name] = true
	}
	for i, vr := range v.Voters {
		for _, c := range vr.Columns() {
			if !known[c] {
				return nil, fmt.Errorf("voter %d reads column %q, which is not in the model's schema", i, c)
			}
		}
	}
	m := &Model{
		Format:      f.Format,
		ToolVersion: f.ToolVersion,
		Label:       f.Label,
		Classes:     v.Classes,
		Columns:     f.Columns,
		Vote:        v,
		Certificate: f.Certificate,
		Empirical:   f.Empirical,
		Provenance:  f.Provenance,
	}
	// The ledger first, so that an edited number is named as such; then
	// the hash, which catches what the ledger cannot (voters, weights,
	// schema, classes).
	if err := m.CheckLedger(); err != nil {
		return nil, err
	}
	if err := checkIntegrity(f.Integrity, m); err != nil {
		return nil, err
	}
	return m, nil
}

// ReadOptions returns the options that read a file for this model: the
// expected columns forced to their kinds, no label required, the rest of
// the file's columns read as they come (and ignored by the vote).
func (m *Model) ReadOptions() datasets.ReadOptions {
	kinds := map[string]datasets.Kind{}
	for _, c := range m.Columns {
		kinds[c.Name] = c.Kind
	}
	return datasets.ReadOptions{NoLabel: true, Kinds: kinds}
}

// Predict returns the vote's class and margin for every row of t, in order.
// The vote binds itself to t, which fails, naming the column, when t lacks
// a column the model reads or holds it with another kind.
func (m *Model) Predict(t *datasets.Table) ([]int, []float64, error) {
	cls, margins, err := m.Vote.Predict(t, allRows(t))
	if err != nil {
		return nil, nil, fmt.Errorf("trainer: %w", err)
	}
	return cls, margins, nil
}

// CountErrors predicts every row of a labelled table t and counts the
// vote's errors, ties counted as errors. Classes are matched by name (the
// voters package's rule), so t may hold a subset of the model's classes; a
// class the model does not know is an error.
func (m *Model) CountErrors(t *datasets.Table) (int, error) {
	n, err := m.Vote.Errors(t, allRows(t))
	if err != nil {
		return 0, fmt.Errorf("trainer: %w", err)
	}
	return n, nil
}

func allRows(t *datasets.Table) []int {
	rows := make([]int, t.Rows)
	for i := range rows {
		rows[i] = i
	}
	return rows
}

// TopVoters returns the indexes of the k heaviest voters of the shipped
// vote, heaviest first, ties in pool order; voters of weight 0 are left
// out.
func (m *Model) TopVoters(k int) []int {
	w := m.Vote.Weights
	idx := make([]int, 0, len(w))
	for i, x := range w {
		if x > 0 {
			idx = append(idx, i)
		}
	}
	slices.SortStableFunc(idx, func(a, b int) int { return cmp.Compare(w[b], w[a]) })
	return idx[:min(k, len(idx))]
}
