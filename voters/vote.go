package voters

import (
	"fmt"
	"math"

	"surety/datasets"
)

// Vote is a weighted majority vote: each row gets the class with the
// largest total weight of the voters that predict it.
//
// Ties go to the lower class index, and their margin is 0; Errors counts
// them as errors. Class totals are sums in a fixed order of the voters, so
// predictions do not depend on GOMAXPROCS.
type Vote struct {
	Voters []Voter
	// Weights holds one finite weight per voter (usually on the simplex).
	Weights []float64
	Classes []string
}

// Bind checks the vote and binds its voters to t.
func (v *Vote) Bind(t *datasets.Table) error {
	if len(v.Weights) != len(v.Voters) {
		return fmt.Errorf("voters: vote: %d weights for %d voters", len(v.Weights), len(v.Voters))
	}
	if len(v.Classes) < 2 {
		return fmt.Errorf("voters: vote: %d classes, want at least 2", len(v.Classes))
	}
	for i, w := range v.Weights {
		if math.IsNaN(w) || math.IsInf(w, 0) {
			return fmt.Errorf("voters: vote: weight %d is %v", i, w)
		}
	}
	if err := checkVoters(v.Voters, len(v.Classes)); err != nil {
		return err
	}
	if t == nil {
		return fmt.Errorf("voters: vote: no table")
	}
	return bindAll(v.Voters, t)
}

// Predict returns the vote's class for each of rows of t, and its margin:
// the winning class's total weight minus the runner-up's.
func (v *Vote) Predict(t *datasets.Table, rows []int) (classes []int, margins []float64, err error) {
	return v.predict(t, rows, nil, nil)
}

// PredictKnown is Predict on the table and rows of known, taking the
// classes of the voters known holds from it instead of working them out:
// the same classes and margins, to the bit.
func (v *Vote) PredictKnown(known *Known) (classes []int, margins []float64, err error) {
	return v.predict(known.t, known.rows, nil, known)
}

// PredictTotals is Predict that also returns each row's class totals, k a
// row in class order: the summed weight of the voters that chose each
// class, added in SumOrder's order, from which Predict's class and margin
// come.
func (v *Vote) PredictTotals(t *datasets.Table, rows []int) (classes []int, margins, totals []float64, err error) {
	totals = make([]float64, len(rows)*len(v.Classes))
	classes, margins, err = v.predict(t, rows, totals, nil)
	if err != nil {
		return nil, nil, nil, err
	}
	return classes, margins, totals, nil
}

// predict is Predict, copying the class totals into totals unless it is
// nil, and taking the classes known holds (of these rows) unless it is nil.
func (v *Vote) predict(t *datasets.Table, rows []int, totals []float64, known *Known) (classes []int, margins []float64, err error) {
	if err := checkCells(t, rows); err != nil {
		return nil, nil, fmt.Errorf("voters: predict: %w", err)
	}
	if err := v.Bind(t); err != nil {
		return nil, nil, fmt.Errorf("voters: predict: %w", err)
	}
	k := len(v.Classes)
	keep := make([]bool, len(v.Voters))
	for i, w := range v.Weights {
		keep[i] = w != 0
	}
	pl := newPlan(v.Voters, keep, k, nil)
	if known != nil {
		pl.useKnown(known)
	}
	classes = make([]int, len(rows))
	margins = make([]float64, len(rows))
	panels := (len(rows) + panelRows - 1) / panelRows
	parallelFor(panels, func() func(int) {
		s := newScratch(k)
		ss := &scoreSink{s: s, k: k, w: v.Weights, scores: make([]float64, panelRows*k)}
		return func(i int) {
			lo, hi := i*panelRows, min(len(rows), (i+1)*panelRows)
			pl.load(s, rows[lo:hi])
			s.base = lo
			clear(ss.scores)
			pl.eval(s, ss)
			for r := range hi - lo {
				classes[lo+r], margins[lo+r] = winner(ss.scores[r*k : r*k+k])
			}
			if totals != nil {
				copy(totals[lo*k:hi*k], ss.scores)
			}
		}
	})
	return classes, margins, nil
}

// winner returns the class of largest score (the lower one on a tie) and
// its lead over the runner-up.
func winner(scores []float64) (int, float64) {
	best := 0
	for c, s := range scores {
		if s > scores[best] {
			best = c
		}
	}
	second := math.Inf(-1)
	for c, s := range scores {
		if c != best && s > second {
			second = s
		}
	}
	return best, scores[best] - second
}

// Errors returns the number of rows of t the vote gets wrong, ties
// counted as errors.
func (v *Vote) Errors(t *datasets.Table, rows []int) (int, error) {
	if err := checkRows(t, rows); err != nil {
		return 0, fmt.Errorf("voters: vote errors: %w", err)
	}
	labels, err := rowClasses(v.Classes, t)
	if err != nil {
		return 0, fmt.Errorf("voters: vote errors: %w", err)
	}
	classes, margins, err := v.Predict(t, rows)
	if err != nil {
		return 0, err
	}
	n := 0
	for i, r := range rows {
		if margins[i] == 0 || classes[i] != labels[r] {
			n++
		}
	}
	return n, nil
}

// scoreSink adds each voter's weight to the class it predicts.
type scoreSink struct {
	s      *scratch
	k      int
	w      []float64
	scores []float64
}

func (e *scoreSink) split(vi int, low []uint64, lo, hi int) {
	w, k := e.w[vi], e.k
	n := len(e.s.rows)
	// Without a branch: a cut near the median sends rows either way at
	// random, which a branch predictor cannot follow.
	d := lo - hi
	for i := range n {
		bit := int(low[i>>6] >> (uint(i) & 63) & 1)
		e.scores[i*k+hi+d*bit] += w
	}
}

func (e *scoreSink) classes(vi int, pred []int32) {
	w, k := e.w[vi], e.k
	for i, c := range pred {
		e.scores[i*k+int(c)] += w
	}
}

// checkVoters checks the fields of voters of this package that could make
// them misbehave on k classes: class indices out of range, non-finite
// numbers, linear weights of the wrong shape.
func checkVoters(vs []Voter, k int) error {
	for i, v := range vs {
		if v == nil {
			return fmt.Errorf("voters: voter %d is nil", i)
		}
		if err := v.Check(k); err != nil {
			return fmt.Errorf("voters: voter %d (%s): %w", i, v.Kind(), err)
		}
	}
	return nil
}

// classIn checks a class index against k classes.
func classIn(c, k int) error {
	if c < 0 || c >= k {
		return fmt.Errorf("class %d out of range [0, %d)", c, k)
	}
	return nil
}

// finite checks that a stored number is finite.
func finite(what string, x float64) error {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return fmt.Errorf("%s is %v", what, x)
	}
	return nil
}

// SumOrder returns the indices of the voters of non-zero weight in the
// order Predict adds their weights to the class totals: the threshold
// stumps grouped by column (columns in order of their first stump), and
// within a column by threshold (in order of first appearance), then the
// category stumps grouped the same way by column and level, then every
// other voter in pool order. Floating-point addition is not associative,
// so a scorer that must give Predict's margins and ties bit for bit (an
// export to SQL) adds the weights in this order. It depends on the vote
// alone, never on a table.
func (v *Vote) SumOrder() []int {
	type group struct {
		key  string
		subs [][]int
		keys []any
	}
	var nums, cats []*group
	find := func(gs *[]*group, key string) *group {
		for _, g := range *gs {
			if g.key == key {
				return g
			}
		}
		g := &group{key: key}
		*gs = append(*gs, g)
		return g
	}
	add := func(g *group, sub any, vi int) {
		for i, k := range g.keys {
			if k == sub {
				g.subs[i] = append(g.subs[i], vi)
				return
			}
		}
		g.keys = append(g.keys, sub)
		g.subs = append(g.subs, []int{vi})
	}
	var rest []int
	for vi, vt := range v.Voters {
		if vi >= len(v.Weights) || v.Weights[vi] == 0 {
			continue
		}
		switch s := vt.(type) {
		case *Stump:
			// Comparing as float64 groups -0 with +0, as newPlan does.
			add(find(&nums, s.Column), s.Threshold, vi)
		case *CategoryStump:
			add(find(&cats, s.Column), s.Level, vi)
		default:
			rest = append(rest, vi)
		}
	}
	var out []int
	for _, g := range append(nums, cats...) {
		for _, s := range g.subs {
			out = append(out, s...)
		}
	}
	return append(out, rest...)
}
