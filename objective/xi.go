package objective

import (
	"fmt"
	"math"
	"sync"
)

// MaxExactXi is the largest m for which LogXi sums xi(m) term by term
// (about a second of work at the limit, a tenth of one at m = 10^7). Above
// it LogXi returns ln(2 sqrt(m)), Maurer's upper bound on xi(m) for
// m >= 8: a larger xi only loosens a bound, so every bound stays valid.
const MaxExactXi = 100_000_000

// LogXi returns ln xi(m), where
//
//	xi(m) = sum_{k=0..m} C(m,k) (k/m)^k (1-k/m)^(m-k)
//
// (Maurer 2004), with 0^0 = 1, for m <= MaxExactXi, and ln(2 sqrt(m))
// beyond. The sum is exact up to rounding (relative error about 1e-14): by
// Stirling's formula with its remainder, the k-th term equals
//
//	sqrt(m / (2 pi k (m-k))) exp(c(m) - c(k) - c(m-k)),
//
// where c(n) = ln n! - (n ln n - n + ln(2 pi n)/2) is computed from its
// asymptotic series (error below 2e-14 for n >= 16) or exactly for small n;
// the n ln n parts cancel, so no term overflows or loses digits at m = 10^7.
// Results are cached.
func LogXi(m int) (float64, error) {
	if m < 1 {
		return 0, fmt.Errorf("objective: m = %d, want at least 1: %w", m, ErrRange)
	}
	if m > MaxExactXi {
		return math.Ln2 + 0.5*math.Log(float64(m)), nil
	}
	xiCache.Lock()
	v, ok := xiCache.v[m]
	xiCache.Unlock()
	if ok {
		return v, nil
	}
	v = math.Log(xiSum(m))
	xiCache.Lock()
	if len(xiCache.v) >= 256 {
		clear(xiCache.v)
	}
	xiCache.v[m] = v
	xiCache.Unlock()
	return v, nil
}

var xiCache = struct {
	sync.Mutex
	v map[int]float64
}{v: map[int]float64{}}

// xiSum returns xi(m) for m >= 1, summing each symmetric pair of terms once
// with compensated (Neumaier) summation.
func xiSum(m int) float64 {
	fm := float64(m)
	cm := stirlingRemainder(m)
	var s, comp float64
	add := func(x float64) {
		t := s + x
		if math.Abs(s) >= math.Abs(x) {
			comp += (s - t) + x
		} else {
			comp += (x - t) + s
		}
		s = t
	}
	add(2) // k = 0 and k = m: each term is exactly 1
	if m == 1 {
		return s + comp
	}
	term := func(k int) float64 {
		fk := float64(k)
		return math.Sqrt(fm/(2*math.Pi*fk*(fm-fk))) * math.Exp(cm-stirlingRemainder(k)-stirlingRemainder(m-k))
	}
	for k := 1; 2*k < m; k++ {
		add(2 * term(k))
	}
	if m%2 == 0 {
		add(term(m / 2))
	}
	return s + comp
}

// smallRemainder[n] is c(n) for n < 16, from the exact factorial.
var smallRemainder = func() [16]float64 {
	var r [16]float64
	f := 1.0
	for n := 1; n < 16; n++ {
		f *= float64(n) // exact: 15! < 2^53
		fn := float64(n)
		r[n] = math.Log(f) - (fn*math.Log(fn) - fn + 0.5*math.Log(2*math.Pi*fn))
	}
	return r
}()

// stirlingRemainder returns c(n) = ln n! - (n ln n - n + ln(2 pi n)/2) for
// n >= 1. For n >= 16 it sums 1/(12n) - 1/(360n^3) + 1/(1260n^5) -
// 1/(1680n^7), whose error is below the next term 1/(1188 n^9) < 2e-14
// (Abramowitz & Stegun 6.1.41; the series alternates and its error is
// bounded by the first term left out).
func stirlingRemainder(n int) float64 {
	if n < 16 {
		return smallRemainder[n]
	}
	x := 1 / float64(n)
	x2 := x * x
	return x * (1.0/12 - x2*(1.0/360-x2*(1.0/1260-x2/1680)))
}
