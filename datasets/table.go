package datasets

import (
	"fmt"
	"math"
)

// Kind says how a feature column is stored.
type Kind uint8

const (
	// Numeric columns hold float64 values; a missing cell is NaN.
	Numeric Kind = iota + 1
	// Categorical columns hold dictionary codes; a missing cell is MissingCode.
	Categorical
)

// String returns "numeric" or "categorical".
func (k Kind) String() string {
	switch k {
	case Numeric:
		return "numeric"
	case Categorical:
		return "categorical"
	}
	return "unknown"
}

// MarshalText writes "numeric" or "categorical"; any other value is an
// error.
func (k Kind) MarshalText() ([]byte, error) {
	if k != Numeric && k != Categorical {
		return nil, fmt.Errorf("datasets: column kind %d is neither numeric nor categorical", uint8(k))
	}
	return []byte(k.String()), nil
}

// UnmarshalText reads "numeric" or "categorical".
func (k *Kind) UnmarshalText(b []byte) error {
	switch string(b) {
	case "numeric":
		*k = Numeric
	case "categorical":
		*k = Categorical
	default:
		return fmt.Errorf("datasets: unknown column kind %q (want numeric or categorical)", b)
	}
	return nil
}

// MissingCode is the code of a missing cell in a categorical column.
const MissingCode = math.MaxUint32

// Column is one feature column of a Table, stored column-wise.
type Column struct {
	Name string
	Kind Kind
	// Num holds the values of a Numeric column (NaN where missing); nil otherwise.
	Num []float64
	// Codes holds the codes of a Categorical column (MissingCode where
	// missing); nil otherwise. Code c stands for Levels[c].
	Codes []uint32
	// Levels is the dictionary of a Categorical column, sorted by the
	// levels' text (byte order), so that no code depends on the order of
	// rows.
	Levels []string
	// Missing counts the missing cells.
	Missing int
	// Inferred says the reader chose the kind from the cells: no
	// ReadOptions.Categorical or Kinds fixed it. Table.InferKindsFrom
	// decides such a column's kind again from a subset of the rows.
	Inferred bool
}

// Len returns the number of rows in the column.
func (c *Column) Len() int {
	if c.Kind == Numeric {
		return len(c.Num)
	}
	return len(c.Codes)
}

// IsMissing reports whether row i is missing.
func (c *Column) IsMissing(i int) bool {
	if c.Kind == Numeric {
		return math.IsNaN(c.Num[i])
	}
	return c.Codes[i] == MissingCode
}

// Table is a data set held column-wise: the feature columns in file order
// (the label, ignored and dropped columns left out) and the label as class
// indices.
type Table struct {
	// Source names where the rows came from (a path, or "-" for stdin).
	Source  string
	Columns []Column
	// LabelName is the name of the label column; empty when the table was
	// read without a label.
	LabelName string
	// Classes holds the class names in sorted order.
	Classes []string
	// Label holds the class index of each row, into Classes; nil when the
	// table was read without a label.
	Label []int
	// Rows is the number of data rows.
	Rows int
	// Fingerprint identifies the bytes the table was read from.
	Fingerprint Fingerprint
	// DroppedRows counts the rows left out because their label was missing
	// (ReadOptions.DropMissingLabel).
	DroppedRows int
	// DroppedColumns names the columns left out because every cell was
	// missing, in file order.
	DroppedColumns []string
}

// Column returns the index of the named feature column, or -1.
func (t *Table) Column(name string) int {
	for i := range t.Columns {
		if t.Columns[i].Name == name {
			return i
		}
	}
	return -1
}

// Fingerprint identifies the input of a Table for a certificate's provenance.
type Fingerprint struct {
	// SHA256 is the hex digest of the input's bytes exactly as read from
	// the file or stream (for a gzip file, the compressed bytes).
	SHA256 string `json:"sha256"`
	// Rows counts the data records in the input, dropped rows included.
	Rows int `json:"rows"`
	// Columns counts the fields of each record in the input, the label,
	// ignored and dropped columns included.
	Columns int `json:"columns"`
}
