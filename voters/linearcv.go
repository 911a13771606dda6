package voters

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"

	"surety/datasets"
)

// LinearCVConfig sets FitLinearCV. The zero value means the defaults; each
// field says its own.
type LinearCVConfig struct {
	// Folds is the number of cross-validation folds; 0 means 5.
	Folds int
	// C is the grid of strengths in scikit-learn's terms, C = 1/(L2 n) on n
	// fitted rows, in increasing order (strong to weak regularisation);
	// nil means DefaultCGrid().
	C []float64
	// MaxRows caps the rows cross-validation and the final fit use; 0
	// means DefaultLinearRows (20000). Beyond it a uniform sample without
	// replacement of MaxRows of the given rows is drawn with the rng.
	MaxRows int
}

// DefaultFolds is the number of folds of FitLinearCV's default.
const DefaultFolds = 5

// DefaultCGrid returns FitLinearCV's default grid: 8 values of
// scikit-learn's C, log-spaced from 1e-4 to 10 (C_i = 10^(-4 + 5i/7)),
// the decade and a half either side of the usual optimum on standardised
// inputs, from a vote for the majority class to nearly unregularised.
func DefaultCGrid() []float64 {
	out := make([]float64, 8)
	for i := range out {
		out[i] = math.Pow(10, -4+5*float64(i)/7)
	}
	return out
}

// CVPoint is one strength of FitLinearCV's grid and its cross-validated
// figures.
type CVPoint struct {
	// C is scikit-learn's strength; L2 = 1/(C n) with n the rows fitted
	// (each fold's own count in its fit, the fit sample's in the final one).
	C float64
	// LogLoss is the mean over the fit sample of -ln p(true class) given by
	// the fold model that did not fit the row; Error the share of those rows
	// that fold model gets wrong.
	LogLoss, Error float64
	// Iterations sums the L-BFGS iterations of the folds; Converged reports
	// whether every fold met the gradient test.
	Iterations int
	Converged  bool
}

// LinearCV is FitLinearCV's result.
type LinearCV struct {
	// Voter is the logistic regression on every usable column fitted on
	// the fit sample at the chosen strength.
	Voter *Linear
	// C and L2 are the chosen strength (L2 on the fit sample's size).
	C, L2 float64
	// Converged reports whether the final fit met the gradient test.
	Converged bool
	// FitRows is the size of the fit sample: all the given rows, or
	// MaxRows of them.
	FitRows int
	// OutOfFold holds, for each given row in order, the class predicted for
	// it by a model that was not fitted on it: for a row of the fit sample,
	// the model of the fold that held it out, at the chosen strength; for
	// a row outside the fit sample, Voter itself.
	OutOfFold []int
	// Table holds the grid in order. The path stops early (see
	// FitLinearCV), so it may be shorter than the grid.
	Table []CVPoint
}

// Tolerances of FitLinearCV: the largest gradient entry at which a fit
// stops, and the iteration cap of one fit. The folds only rank strengths
// and need less precision than the voter that is kept.
const (
	cvTol        = 1e-4
	cvMaxIter    = 300
	finalTol     = 1e-6
	finalMaxIt   = 1000
	pathPatience = 2
)

// FitLinearCV fits the strong linear voter: a Linear voter (multinomial
// L2 logistic regression as FitLinear, one score vector for two classes)
// on every usable column of t, with its strength chosen by stratified
// k-fold cross-validation within rows.
//
// Usable columns are those with a present value among the scale rows,
// numeric columns whose scale-row values are not all the same (such a
// column is 0 on every scale row after standardising, and would only be
// a required column at predict time). Standardisation and one-hot levels
// come from the scale rows, as in FitLinear; the folds share them, a
// label-free look at the held-out fold's cells.
//
// rows must be distinct. When there are more than MaxRows of them, the fit
// sample is MaxRows of them drawn with rng; otherwise it is all of them
// and only the folds use rng. The folds are datasets.KFold of the fit
// sample's labels with a seed drawn from rng.
//
// The grid is walked from strong to weak regularisation, each fold's fit
// starting from its fit at the previous strength (a warm start). The
// strength kept is the one of least mean out-of-fold log-loss, ties to the
// stronger: the log-loss is a proper score, smooth in C, and tells apart
// strengths that the error rate, on few rows, ties or orders by noise. The
// walk stops after two grid values in a row that do not improve on the
// least log-loss so far: weaker fits mostly overfit more, and they cost
// the most iterations. The final fit on the whole fit sample starts from the
// mean of the folds' fits at the chosen strength.
func FitLinearCV(t *datasets.Table, scale, rows []int, cfg LinearCVConfig, rng *rand.Rand) (*LinearCV, error) {
	if err := checkRows(t, scale); err != nil {
		return nil, fmt.Errorf("voters: fit linear cv: scale rows: %w", err)
	}
	if err := checkRows(t, rows); err != nil {
		return nil, fmt.Errorf("voters: fit linear cv: %w", err)
	}
	if rng == nil {
		return nil, fmt.Errorf("voters: fit linear cv: no random source")
	}
	folds := cfg.Folds
	if folds == 0 {
		folds = DefaultFolds
	}
	grid := cfg.C
	if grid == nil {
		grid = DefaultCGrid()
	}
	maxRows := cfg.MaxRows
	if maxRows == 0 {
		maxRows = DefaultLinearRows
	}
	switch {
	case folds < 2:
		return nil, fmt.Errorf("voters: fit linear cv: Folds is %d, want >= 2", folds)
	case len(grid) == 0:
		return nil, fmt.Errorf("voters: fit linear cv: empty C grid")
	case maxRows < 0:
		return nil, fmt.Errorf("voters: fit linear cv: MaxRows is %d, want >= 0", maxRows)
	}
	for i, c := range grid {
		if !(c > 0) || math.IsInf(c, 1) || (i > 0 && !(c > grid[i-1])) {
			return nil, fmt.Errorf("voters: fit linear cv: C grid %v: want finite values > 0 in increasing order", grid)
		}
	}
	k := len(t.Classes)
	if k < 2 {
		return nil, fmt.Errorf("voters: fit linear cv: %d classes in %s, want at least 2", k, source(t))
	}
	seen := make([]bool, t.Rows)
	for _, r := range rows {
		if seen[r] {
			return nil, fmt.Errorf("voters: fit linear cv: row %d given twice", r)
		}
		seen[r] = true
	}

	fit := rows // the fit sample
	if len(rows) > maxRows {
		perm := rng.Perm(len(rows))[:maxRows]
		slices.Sort(perm)
		fit = make([]int, maxRows)
		for i, p := range perm {
			fit[i] = rows[p]
		}
	}
	if len(fit) < folds {
		return nil, fmt.Errorf("voters: fit linear cv: %d rows for %d folds", len(fit), folds)
	}
	labels := make([]int, len(fit))
	for i, r := range fit {
		labels[i] = t.Label[r]
	}
	foldRows, err := datasets.KFold(labels, k, folds, rng.Uint64())
	if err != nil {
		return nil, fmt.Errorf("voters: fit linear cv: %w", err)
	}

	l := &Linear{Inputs: standardise(t, scale, usableColumns(t, scale))}
	if len(l.Inputs) == 0 {
		return nil, fmt.Errorf("voters: fit linear cv: no usable column in %s", source(t))
	}
	if err := l.Bind(t); err != nil {
		return nil, fmt.Errorf("voters: fit linear cv: %w", err)
	}
	d := 0
	for i := range l.Inputs {
		d += l.Inputs[i].width()
	}
	x := l.design(fit, d)

	// Fold problems over the shared design: fold f fits every row not in
	// foldRows[f].
	probs := make([]*logistic, folds)
	inFold := make([]int, len(fit))
	for f, held := range foldRows {
		for _, i := range held {
			inFold[i] = f
		}
	}
	for f := range folds {
		train := make([]int, 0, len(fit)-len(foldRows[f]))
		for i := range fit {
			if inFold[i] != f {
				train = append(train, i)
			}
		}
		probs[f] = newLogistic(x, labels, train, d, k)
	}
	params := probs[0].params()
	at := make([][]float64, folds) // each fold's current fit
	for f := range at {
		at[f] = make([]float64, params)
	}
	res := &LinearCV{FitRows: len(fit)}
	best := -1
	var bestFits [][]float64
	bestPred := make([]int, len(fit))
	pred := make([]int, len(fit))
	for _, c := range grid {
		pt := CVPoint{C: c, Converged: true}
		for f, pr := range probs {
			pr.setL2(1 / (c * float64(len(pr.idx))))
			p, it, ok := pr.minimize(at[f], cvTol, cvMaxIter)
			at[f] = p
			pt.Iterations += it
			pt.Converged = pt.Converged && ok
			held := foldRows[f]
			fp := make([]int, len(held))
			pr.predict(p, held, fp, &pt.LogLoss)
			for i, r := range held {
				pred[r] = fp[i]
				if fp[i] != labels[r] {
					pt.Error++
				}
			}
		}
		pt.LogLoss /= float64(len(fit))
		pt.Error /= float64(len(fit))
		res.Table = append(res.Table, pt)
		if best < 0 || pt.LogLoss < res.Table[best].LogLoss {
			best = len(res.Table) - 1
			bestFits = make([][]float64, folds)
			for f := range at {
				bestFits[f] = slices.Clone(at[f])
			}
			copy(bestPred, pred)
		}
		if len(res.Table)-1-best >= pathPatience {
			break
		}
	}

	res.C = res.Table[best].C
	res.L2 = 1 / (res.C * float64(len(fit)))
	all := make([]int, len(fit))
	for i := range all {
		all[i] = i
	}
	final := newLogistic(x, labels, all, d, k)
	final.setL2(res.L2)
	start := make([]float64, params)
	for _, p := range bestFits {
		for i, v := range p {
			start[i] += v / float64(folds)
		}
	}
	p, _, ok := final.minimize(start, finalTol, finalMaxIt)
	res.Converged = ok
	first := final.first
	l.Weights = make([][]float64, k)
	l.Bias = make([]float64, k)
	for c := range l.Weights {
		l.Weights[c] = make([]float64, d)
		if c >= first {
			copy(l.Weights[c], p[(c-first)*(d+1):(c-first)*(d+1)+d])
			l.Bias[c] = p[(c-first)*(d+1)+d]
		}
	}
	res.Voter = l

	res.OutOfFold = make([]int, len(rows))
	var rest []int // positions in rows of the rows outside fit
	j := 0         // position in fit, which is in the order of rows
	for i, r := range rows {
		if j < len(fit) && fit[j] == r {
			res.OutOfFold[i] = bestPred[j]
			j++
			continue
		}
		rest = append(rest, i)
	}
	// The rows beyond the fit sample (most of them on a large file) are
	// predicted over goroutines, each row on its own.
	const block = 4096
	parallelFor((len(rest)+block-1)/block, func() func(int) {
		return func(b int) {
			for _, i := range rest[b*block : min(len(rest), (b+1)*block)] {
				res.OutOfFold[i] = l.Predict(rows[i])
			}
		}
	})
	return res, nil
}

// usableColumns returns the columns of t the strong voter reads: those
// with a present value among rows, numeric ones not constant there.
func usableColumns(t *datasets.Table, rows []int) []int {
	var out []int
	for j := range t.Columns {
		c := &t.Columns[j]
		if c.Kind != datasets.Numeric {
			out = append(out, j) // standardise drops a column with no level present
			continue
		}
		first, varies := math.NaN(), false
		for _, r := range rows {
			v := c.Num[r]
			if math.IsNaN(v) {
				continue
			}
			if math.IsNaN(first) {
				first = v
			} else if v != first {
				varies = true
				break
			}
		}
		if varies {
			out = append(out, j)
		}
	}
	return out
}
