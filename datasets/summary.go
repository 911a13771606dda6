package datasets

import "math"

// ColumnSummary describes one feature column.
type ColumnSummary struct {
	Name    string `json:"name"`
	Kind    Kind   `json:"kind"`
	Missing int    `json:"missing"`
	// Distinct counts the levels that occur (categorical columns; 0 for
	// numeric ones).
	Distinct int `json:"distinct,omitempty"`
	// Min and Max are the extremes of the non-missing values (numeric
	// columns); NaN when every cell is missing or for categorical columns.
	Min float64 `json:"min"`
	Max float64 `json:"max"`
}

// Summary describes each feature column in table order.
func (t *Table) Summary() []ColumnSummary {
	out := make([]ColumnSummary, len(t.Columns))
	for i := range t.Columns {
		c := &t.Columns[i]
		s := ColumnSummary{Name: c.Name, Kind: c.Kind, Missing: c.Missing, Min: math.NaN(), Max: math.NaN()}
		switch c.Kind {
		case Numeric:
			for _, v := range c.Num {
				if math.IsNaN(v) {
					continue
				}
				if math.IsNaN(s.Min) || v < s.Min {
					s.Min = v
				}
				if math.IsNaN(s.Max) || v > s.Max {
					s.Max = v
				}
			}
		case Categorical:
			seen := make([]bool, len(c.Levels))
			for _, code := range c.Codes {
				if code != MissingCode && !seen[code] {
					seen[code] = true
					s.Distinct++
				}
			}
		}
		out[i] = s
	}
	return out
}

// ClassCounts returns the number of rows of each class, indexed like
// Classes; nil for a table read without a label.
func (t *Table) ClassCounts() []int {
	if t.Classes == nil {
		return nil
	}
	n := make([]int, len(t.Classes))
	for _, l := range t.Label {
		n[l]++
	}
	return n
}
