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
	if len(p.Classes) > 256 {
		return nil, fmt.Errorf("voters: votes: %d classes, at most 256", len(p.Classes))
	}
	if p.bound != t {
		if err := p.Bind(t); err != nil {
			return nil, fmt.Errorf("voters: votes: %w", err)
		}
	}
	out := make([][]uint8, len(p.Voters))
	parallelFor(len(p.Voters), func() func(int) {
		return func(i int) {
			v, col := p.Voters[i], make([]uint8, len(rows))
			for r, row := range rows {
				col[r] = uint8(v.Predict(row))
			}
			out[i] = col
		}
	})
	return out, nil
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
	if len(p.Classes) > 256 {
		return nil, fmt.Errorf("voters: remember: %d classes, at most 256", len(p.Classes))
	}
	if p.bound != t {
		if err := p.Bind(t); err != nil {
			return nil, fmt.Errorf("voters: remember: %w", err)
		}
	}
	rest := newPlan(p.Voters, nil, len(p.Classes), nil).rest
	k := &Known{t: t, rows: rows, classes: make(map[Voter][]uint8, len(rest))}
	cols := make([][]uint8, len(rest))
	parallelFor(len(rest), func() func(int) {
		return func(i int) {
			col := make([]uint8, len(rows))
			for r, row := range rows {
				col[r] = uint8(rest[i].v.Predict(row))
			}
			cols[i] = col
		}
	})
	for i, rv := range rest {
		k.classes[rv.v] = cols[i]
	}
	return k, nil
}
