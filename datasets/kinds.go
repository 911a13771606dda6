package datasets

import (
	"fmt"
	"math"
	"slices"
	"strings"
)

// KindReport says what Table.InferKindsFrom changed.
type KindReport struct {
	// Changes lists the columns made numeric, in table order.
	Changes []KindChange
}

// KindChange is a column read as categorical that InferKindsFrom made
// numeric.
type KindChange struct {
	Column string `json:"column"`
	// Missing counts the cells, over all rows, whose text is not a finite
	// number and which are now missing.
	Missing int `json:"missing"`
	// Texts lists some of those cells' texts, sorted (at most maxTexts).
	Texts []string `json:"texts,omitempty"`
}

// maxTexts bounds the texts a KindChange lists.
const maxTexts = 5

// String says what changed, as a warning: `column "income": numeric on
// the rows its kind comes from; 3 cells that are not numbers ("n/a") read
// as missing`.
func (c KindChange) String() string {
	q := make([]string, len(c.Texts))
	for i, t := range c.Texts {
		q[i] = fmt.Sprintf("%q", t)
	}
	more := ""
	if c.Missing > len(c.Texts) && len(c.Texts) == maxTexts {
		more = ", ..."
	}
	cells := "cells that are not numbers"
	if c.Missing == 1 {
		cells = "cell that is not a number"
	}
	return fmt.Sprintf("column %q: numeric on the rows its kind comes from; %d %s (%s%s) read as missing",
		c.Column, c.Missing, cells, strings.Join(q, ", "), more)
}

// Warnings returns each change as a sentence.
func (r KindReport) Warnings() []string {
	w := make([]string, len(r.Changes))
	for i, c := range r.Changes {
		w[i] = c.String()
	}
	return w
}

// InferKindsFrom decides again, from the given rows only, the kind of
// each column whose kind the reader inferred (Column.Inferred), by the
// reader's rule applied to those rows:
//   - a numeric column stays numeric;
//   - a categorical column whose non-missing cells among rows are all
//     finite numbers (at least one) becomes numeric, and every cell, in
//     any row, whose text is not a finite number becomes missing (NaN),
//     counted in the report;
//   - a categorical column whose non-missing cells among rows are over
//     90% numbers (finite or not), but not all finite, is an error naming
//     the first other cell (ErrStrayWord, or ErrNotFinite for a
//     non-finite number), as Read reports over the whole file;
//   - any other column stays as it is.
//
// So a column's kind depends on rows alone, and a caller that must not
// look at the other rows (a certificate's certify rows) can read with
// ReadOptions.DeferKinds and decide kinds here. t is not changed: the
// returned table shares its unchanged columns. Row indices must lie in
// 0..t.Rows-1.
func (t *Table) InferKindsFrom(rows []int) (*Table, KindReport, error) {
	var rep KindReport
	for _, r := range rows {
		if r < 0 || r >= t.Rows {
			return nil, rep, fmt.Errorf("datasets: %s: infer kinds: row %d out of range 0..%d", t.Source, r, t.Rows-1)
		}
	}
	out := *t
	out.Columns = slices.Clone(t.Columns)
	for j := range out.Columns {
		c := &out.Columns[j]
		if !c.Inferred || c.Kind != Categorical {
			continue
		}
		vals := make([]float64, len(c.Levels))
		kinds := make([]cellKind, len(c.Levels))
		for i, lv := range c.Levels {
			vals[i], kinds[i] = parseNumber([]byte(lv))
		}
		var numbers, nonfinite, words int
		first := -1 // the first row among rows whose cell is not a finite number
		for _, r := range rows {
			code := c.Codes[r]
			if code == MissingCode {
				continue
			}
			switch kinds[code] {
			case cellNumber:
				numbers++
				continue
			case cellNonFinite:
				nonfinite++
			default:
				words++
			}
			if first < 0 {
				first = r
			}
		}
		switch {
		case numbers == 0:
			continue
		case words+nonfinite > 0:
			// As in Read, a non-finite number counts as a number here.
			share := float64(numbers+nonfinite) / float64(numbers+nonfinite+words)
			if share <= strayShare {
				continue
			}
			text := c.Levels[c.Codes[first]]
			why := fmt.Errorf("%w: %.1f%% of the column's %d non-missing cells in the rows its kind comes from are numbers, this one (table row %d) is not; add %q to the missing tokens, or force the column categorical",
				ErrStrayWord, 100*share, numbers+nonfinite+words, first+1, text)
			if kinds[c.Codes[first]] == cellNonFinite {
				why = fmt.Errorf("%w: table row %d: the column is numeric in the rows its kind comes from; if the cell means missing, add it to the missing tokens", ErrNotFinite, first+1)
			}
			return nil, KindReport{}, &ParseError{File: t.Source, ColumnName: c.Name, Field: text, Err: why}
		}
		num := make([]float64, len(c.Codes))
		ch := KindChange{Column: c.Name}
		seen := make([]bool, len(c.Levels))
		for i, code := range c.Codes {
			switch {
			case code == MissingCode:
				num[i] = math.NaN()
			case kinds[code] == cellNumber:
				num[i] = vals[code]
			default:
				num[i] = math.NaN()
				ch.Missing++
				seen[code] = true
			}
		}
		for code, ok := range seen {
			if ok && len(ch.Texts) < maxTexts {
				ch.Texts = append(ch.Texts, c.Levels[code]) // levels are sorted
			}
		}
		*c = Column{Name: c.Name, Kind: Numeric, Num: num, Missing: c.Missing + ch.Missing, Inferred: true}
		rep.Changes = append(rep.Changes, ch)
	}
	return &out, rep, nil
}
