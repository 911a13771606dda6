package voters

import (
	"math"
	"slices"
)

// sortFloats sorts vals, which hold no NaN, in increasing order, and
// returns keys for the next call to reuse. It is a least-significant-byte
// radix sort on the bits of the values, mapped so that unsigned order is
// numeric order (negative values have every bit flipped, the others only
// the sign bit; common practice, no source): eight counting passes, each
// skipped when every value has the same byte there. On the hundred
// thousand values of a large column it is several times faster than a
// comparison sort, and the pool's thresholds, its quantiles, come out the
// same: equal values are equal keys, except -0 and +0, which sort -0
// first (a comparison sort leaves them in any order, and the two compare
// equal as thresholds).
func sortFloats(vals []float64, keys []uint64) []uint64 {
	n := len(vals)
	if n < 512 {
		slices.Sort(vals)
		return keys
	}
	keys = slices.Grow(keys[:0], 2*n)[:2*n]
	a, b := keys[:n], keys[n:]
	var counts [8][256]int
	for i, v := range vals {
		u := math.Float64bits(v)
		if u>>63 != 0 {
			u = ^u
		} else {
			u |= 1 << 63
		}
		a[i] = u
		for d := range counts {
			counts[d][byte(u>>(8*d))]++
		}
	}
	for d := range counts {
		c := &counts[d]
		shift := uint(8 * d)
		if c[byte(a[0]>>shift)] == n {
			continue
		}
		at := 0
		for i, m := range c {
			c[i], at = at, at+m
		}
		for _, u := range a {
			dig := byte(u >> shift)
			b[c[dig]] = u
			c[dig]++
		}
		a, b = b, a
	}
	for i, u := range a {
		if u>>63 != 0 {
			u &^= 1 << 63
		} else {
			u = ^u
		}
		vals[i] = math.Float64frombits(u)
	}
	return keys
}
