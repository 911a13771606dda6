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
