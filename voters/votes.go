package voters

import (
	"fmt"

	"surety/datasets"
)

// Votes returns each voter's class for each of rows of t: out[i][r] is
// voter i's class index (into the pool's classes) for rows[r]. It is what
// a weighting that needs more than error counts (a margin loss) works on;
// it costs one byte per voter and row, so callers pass a sample when the
// rows are many. Voters are evaluated in parallel; the result does not
// depend on GOMAXPROCS.
func (p *Pool) Votes(t *datasets.Table, rows []int) ([][]uint8, error) {
	if err := checkRows(t, rows); err != nil {
		return nil, fmt.Errorf("voters: votes: %w", err)
	}
	if err := p.bindBytes(t); err != nil {
		return nil, fmt.Errorf("voters: votes: %w", err)
	}
	return classColumns(p.Voters, rows), nil
}

// bindBytes checks that the pool's classes fit in a byte and binds it to
// t unless it is bound there.
func (p *Pool) bindBytes(t *datasets.Table) error {
	if len(p.Classes) > 256 {
		return fmt.Errorf("%d classes, at most 256", len(p.Classes))
	}
	if p.bound != t {
		return p.Bind(t)
	}
	return nil
}

// classColumns returns each voter's class on rows of the table it is bound
// to, a byte a row, the voters over goroutines.
func classColumns(vs []Voter, rows []int) [][]uint8 {
	out := make([][]uint8, len(vs))
	parallelFor(len(vs), func() func(int) {
		return func(i int) {
			col := make([]uint8, len(rows))
			for r, row := range rows {
				col[r] = uint8(vs[i].Predict(row))
			}
			out[i] = col
		}
	})
	return out
}

// Known holds the classes that a pool's voters other than stumps (its
// linear voters) give a fixed list of rows of one table, for
// Vote.PredictKnown. A stump's class costs a few bit operations a row, a
// linear voter's a dot product over its columns: a caller that predicts
// the same rows with several votes over one pool works the linear
// voters' classes out once.
type Known struct {
	t       *datasets.Table
	rows    []int
	classes map[Voter][]uint8
}

// Remember works out the classes of the pool's voters other than stumps
// on rows of t. The rows are kept, not copied: the caller must not change
// them while the Known is in use.
func (p *Pool) Remember(t *datasets.Table, rows []int) (*Known, error) {
	if err := checkCells(t, rows); err != nil {
		return nil, fmt.Errorf("voters: remember: %w", err)
	}
	if err := p.bindBytes(t); err != nil {
		return nil, fmt.Errorf("voters: remember: %w", err)
	}
	rest := newPlan(p.Voters, nil, len(p.Classes), nil).rest
	vs := make([]Voter, len(rest))
	for i, rv := range rest {
		vs[i] = rv.v
	}
	k := &Known{t: t, rows: rows, classes: make(map[Voter][]uint8, len(rest))}
	for i, col := range classColumns(vs, rows) {
		k.classes[vs[i]] = col
	}
	return k, nil
}
