package trainer

import (
	"math/bits"
	"runtime"
	"slices"
	"sync"
)

// pairShare is the fewest word operations of the pair counts per
// goroutine; a variable so that a test can share out a small problem.
var pairShare = 1 << 20

// honestRates counts the prior-row statistics from voters' classes on
// sample rows: votes[i][r] is voter i's class on row r, y[r] its label, and
// masks[i], when not nil, the rows voter i may be scored on (its
// out-of-bag rows; Pool.OutOfBag). Each voter's error rate is counted on
// its rows, each pair's joint error rate on the rows both may be scored
// on, and m is the smallest such count, as PAC-Bayesian bounds over
// out-of-bag statistics take it (Thiemann, Igel, Wintenberger, Seldin
// 2017, ALT; Masegosa, Lorenzen, Igel, Seldin 2020, NeurIPS). A pair with
// no common row gets the product of the two error rates.
func honestRates(votes [][]uint8, y []int, masks [][]uint64) rates {
	n, m := len(votes), len(y)
	words := (m + 63) / 64
	full := make([]uint64, words)
	for r := range m {
		full[r/64] |= 1 << (r % 64)
	}
	errs := make([][]uint64, n)
	for i, v := range votes {
		e := make([]uint64, words)
		for r, c := range v {
			if int(c) != y[r] {
				e[r/64] |= 1 << (r % 64)
			}
		}
		if masks[i] != nil {
			for w := range e {
				e[w] &= masks[i][w]
			}
		}
		errs[i] = e
	}
	mask := func(i int) []uint64 {
		if masks[i] != nil {
			return masks[i]
		}
		return full
	}
	risks := make([]float64, n)
	joint := make([]float64, n*n)
	minM := m
	for i := range n {
		ni := popcount(mask(i))
		minM = min(minM, ni)
		if ni > 0 {
			risks[i] = float64(popcount(errs[i])) / float64(ni)
		}
	}
	// The pairs are shared over goroutines by row, rows dealt in turn so
	// that the long first rows and the short last ones mix; each pair is
	// written by one goroutine, and the smallest count is a minimum, the
	// same whichever goroutine finds it.
	workers := max(1, min(runtime.GOMAXPROCS(0), n*n*words/pairShare))
	mins := make([]int, workers)
	var wg sync.WaitGroup
	for wk := range workers {
		mins[wk] = m
		wg.Go(func() {
			for i := wk; i < n; i += workers {
				for j := i; j < n; j++ {
					var t, c int
					ei, ej := errs[i], errs[j]
					if masks[i] == nil && masks[j] == nil {
						for w := range words {
							t += bits.OnesCount64(ei[w] & ej[w])
						}
						c = m
					} else {
						mi, mj := mask(i), mask(j)
						for w := range words {
							both := mi[w] & mj[w]
							t += bits.OnesCount64(ei[w] & ej[w] & both)
							c += bits.OnesCount64(both)
						}
						mins[wk] = min(mins[wk], max(c, 1))
					}
					r := risks[i] * risks[j]
					if c > 0 {
						r = float64(t) / float64(c)
					}
					joint[i*n+j], joint[j*n+i] = r, r
				}
			}
		})
	}
	wg.Wait()
	minM = min(minM, slices.Min(mins))
	return rates{m: max(minM, 1), risks: risks, joint: joint}
}

func popcount(x []uint64) int {
	n := 0
	for _, w := range x {
		n += bits.OnesCount64(w)
	}
	return n
}
