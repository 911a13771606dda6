package datasets

import (
	"errors"
	"fmt"
	"math"
	"math/bits"
	"math/rand/v2"
	"slices"
)

// ErrSplit reports split arguments that cannot be honoured.
var ErrSplit = errors.New("datasets: bad split")

// splitStream is the PCG stream constant of the split generator; it is part
// of the documented algorithm, so changing it changes every split.
const splitStream = 0x5375726574790001

// rowGen is the generator behind the splits, fixed so that a seed gives the
// same split on every platform and Go version: math/rand/v2's PCG (whose
// output sequence is specified by the algorithm, PCG-DXSM 128/64) seeded
// with (seed, splitStream), a bounded draw by Lemire's multiply-and-reject
// method, and Fisher-Yates shuffling from the last position down. Only
// PCG.Uint64 is used from the standard library, not Rand's helpers, whose
// algorithms are not promised to stay the same.
type rowGen struct{ pcg *rand.PCG }

func newRowGen(seed uint64) rowGen { return rowGen{rand.NewPCG(seed, splitStream)} }

// below returns a uniform integer in [0, n), n > 0.
func (g rowGen) below(n uint64) uint64 {
	hi, lo := bits.Mul64(g.pcg.Uint64(), n)
	if lo < n {
		thresh := -n % n
		for lo < thresh {
			hi, lo = bits.Mul64(g.pcg.Uint64(), n)
		}
	}
	return hi
}

func (g rowGen) shuffle(s []int) {
	for i := len(s) - 1; i > 0; i-- {
		j := int(g.below(uint64(i + 1)))
		s[i], s[j] = s[j], s[i]
	}
}

// byClass returns the row indices of each class in row order.
func byClass(labels []int, numClasses int) ([][]int, error) {
	if numClasses < 1 {
		return nil, fmt.Errorf("%w: %d classes", ErrSplit, numClasses)
	}
	rows := make([][]int, numClasses)
	for i, l := range labels {
		if l < 0 || l >= numClasses {
			return nil, fmt.Errorf("%w: row %d has label %d, want 0..%d", ErrSplit, i, l, numClasses-1)
		}
		rows[l] = append(rows[l], i)
	}
	return rows, nil
}

// RandomSplit splits the row indices 0..n-1 in two: round(fraction*n)
// rows (half away from zero), a uniform random subset of them, go to first
// and the rest to second. The rows are shuffled by one generator seeded by
// seed (see rowGen) and first takes the head of the shuffle, so the split
// depends only on (n, fraction, seed): never on labels, features or the
// order of anything but the row count. That makes the second part a fair
// sample of the rows, which a certificate computed on it needs; a split
// stratified by label with per-class rounding is not one (a class seen
// once always lands on one side). Both parts are sorted. fraction must lie
// strictly between 0 and 1.
func RandomSplit(n int, fraction float64, seed uint64) (first, second []int, err error) {
	if !(fraction > 0 && fraction < 1) {
		return nil, nil, fmt.Errorf("%w: fraction %v, want 0 < fraction < 1", ErrSplit, fraction)
	}
	if n < 0 {
		return nil, nil, fmt.Errorf("%w: %d rows", ErrSplit, n)
	}
	rows := make([]int, n)
	for i := range rows {
		rows[i] = i
	}
	newRowGen(seed).shuffle(rows)
	k := int(math.Round(fraction * float64(n)))
	first, second = rows[:k:k], rows[k:]
	slices.Sort(first)
	slices.Sort(second)
	return first, second, nil
}

// StratifiedSplit splits the row indices 0..len(labels)-1 in two: of the
// n_c rows of each class c, round(fraction*n_c) (half away from zero) go to
// first, drawn uniformly at random, and the rest to second. Classes are
// shuffled in index order from one generator seeded by seed (see rowGen),
// so the split depends only on (labels, numClasses, fraction, seed). Both
// parts are sorted. fraction must lie strictly between 0 and 1.
//
// The parts are not fair samples of the rows: at fraction 0.5 a class of
// odd size gives its extra row to first, so a class seen once is never in
// second. Certify on a RandomSplit; this one suits a prior part that must
// hold every class.
func StratifiedSplit(labels []int, numClasses int, fraction float64, seed uint64) (first, second []int, err error) {
	if !(fraction > 0 && fraction < 1) {
		return nil, nil, fmt.Errorf("%w: fraction %v, want 0 < fraction < 1", ErrSplit, fraction)
	}
	classes, err := byClass(labels, numClasses)
	if err != nil {
		return nil, nil, err
	}
	g := newRowGen(seed)
	first = make([]int, 0, int(fraction*float64(len(labels)))+numClasses)
	second = make([]int, 0, len(labels)-cap(first)+2*numClasses)
	for _, rows := range classes {
		g.shuffle(rows)
		k := int(math.Round(fraction * float64(len(rows))))
		first = append(first, rows[:k]...)
		second = append(second, rows[k:]...)
	}
	slices.Sort(first)
	slices.Sort(second)
	return first, second, nil
}

// KFold deals the rows into k stratified folds and returns each fold's
// sorted row indices (the rows held out in that round). Each class's rows
// are shuffled (classes in index order, one generator seeded by seed, see
// rowGen) and dealt round-robin, each class starting at the fold after the
// one where the previous class stopped, so fold sizes differ by at most one
// and every fold gets about 1/k of each class. k must be at least 2 and at
// most the number of rows.
func KFold(labels []int, numClasses int, k int, seed uint64) ([][]int, error) {
	if k < 2 || k > len(labels) {
		return nil, fmt.Errorf("%w: %d folds of %d rows, want 2 <= k <= rows", ErrSplit, k, len(labels))
	}
	classes, err := byClass(labels, numClasses)
	if err != nil {
		return nil, err
	}
	g := newRowGen(seed)
	folds := make([][]int, k)
	at := 0
	for _, rows := range classes {
		g.shuffle(rows)
		for _, r := range rows {
			folds[at] = append(folds[at], r)
			at = (at + 1) % k
		}
	}
	for _, f := range folds {
		slices.Sort(f)
	}
	return folds, nil
}
