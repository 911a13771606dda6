package objective

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mathext"
)

// TestSetBound bounds the true error rate of one classifier fixed before
// the rows were drawn, after errors mistakes on n fresh i.i.d. rows, by
// binomial tail inversion (Langford 2005):
//
//	R <= max{p : P(Binomial(n, p) <= errors) >= delta},
//
// which is the one-sided Clopper-Pearson limit BetaInv(1-delta; errors+1,
// n-errors) (Clopper & Pearson 1934); errors = 0 gives 1 - delta^(1/n), and
// errors = n gives 1. The binomial CDF, I_{1-p}(n-k, k+1), falls as p
// rises; it is bisected to 1e-15 and the upper end of the bracket is
// returned, so the value errs on the safe side. Value bounds the error
// rate. Terms: errors, n, error_rate.
func TestSetBound(errors, n int, delta float64) (Bound, error) {
	if err := checkDelta(delta); err != nil {
		return Bound{}, fmt.Errorf("test-set bound: %w", err)
	}
	if n < 1 || errors < 0 || errors > n {
		return Bound{}, fmt.Errorf("test-set bound: %d errors on %d rows: %w", errors, n, ErrRange)
	}
	v := 1.0
	if errors < n {
		k, fn := float64(errors), float64(n)
		cdf := func(p float64) float64 { return mathext.RegIncBeta(fn-k, k+1, 1-p) }
		lo, hi := 0.0, 1.0 // cdf(0) = 1 >= delta > 0 = cdf(1)
		for range 200 {
			if hi-lo <= 1e-15 {
				break
			}
			mid := lo + (hi-lo)/2
			if cdf(mid) >= delta {
				lo = mid
			} else {
				hi = mid
			}
		}
		v = hi
	}
	return Bound{Name: "test-set", Of: OfErrorRate, Value: v, Delta: delta, M: n,
		Terms: []Term{{"errors", float64(errors)}, {"n", float64(n)}, {"error_rate", float64(errors) / float64(n)}}}, nil
}

// TestSetLowerBound is the other side of TestSetBound: after errors
// mistakes on n fresh i.i.d. rows, with probability at least 1-delta the
// true error rate is at least
//
//	L = min{p : P(Binomial(n, p) >= errors) >= delta},
//
// the one-sided Clopper-Pearson lower limit BetaInv(delta; errors, n-errors+1)
// (Clopper & Pearson 1934); errors = 0 gives 0. P(X >= k) = I_p(k, n-k+1)
// rises with p; it is bisected to 1e-15 and the lower end of the bracket is
// returned, so the value errs on the safe side (low). Value is L, a lower
// limit: Of is OfErrorRateLower. Terms: errors, n, error_rate.
func TestSetLowerBound(errors, n int, delta float64) (Bound, error) {
	if err := checkDelta(delta); err != nil {
		return Bound{}, fmt.Errorf("test-set lower bound: %w", err)
	}
	if n < 1 || errors < 0 || errors > n {
		return Bound{}, fmt.Errorf("test-set lower bound: %d errors on %d rows: %w", errors, n, ErrRange)
	}
	v := 0.0
	if errors > 0 {
		k, fn := float64(errors), float64(n)
		tail := func(p float64) float64 { return mathext.RegIncBeta(k, fn-k+1, p) }
		lo, hi := 0.0, 1.0 // tail(0) = 0 < delta <= 1 = tail(1)
		for range 200 {
			if hi-lo <= 1e-15 {
				break
			}
			mid := lo + (hi-lo)/2
			if tail(mid) >= delta {
				hi = mid
			} else {
				lo = mid
			}
		}
		v = lo
	}
	return Bound{Name: "test-set-lower", Of: OfErrorRateLower, Value: v, Delta: delta, M: n,
		Terms: []Term{{"errors", float64(errors)}, {"n", float64(n)}, {"error_rate", float64(errors) / float64(n)}}}, nil
}

// PopulationBound is the finite-population (transductive) bound: the n
// labelled rows are a uniform sample without replacement from a fixed
// population of N rows, errors of them are misclassified, and the number K
// of misclassified rows in the whole population is bounded by inverting
// the hypergeometric tail,
//
//	K+ = max{K : P(Hypergeometric(N, K, n) <= errors) >= delta},
//
// exact by the same test inversion as Clopper-Pearson: with probability at
// least 1-delta over the sample, K <= K+, so the N-n unlabelled rows hold
// at most K+ - errors errors. Value is that count's rate, (K+ - errors) /
// (N - n). Terms: errors, n, population, total_errors_upper (K+),
// unlabelled_errors_upper (K+ - errors).
//
// The tail is summed in log space with lgamma, so its relative error grows
// like 1e-16 times ln(N!); for N up to 10^9 it stays below 1e-6, which can
// move K+ only where the tail sits within that of delta.
func PopulationBound(errors, n, population int, delta float64) (Bound, error) {
	if err := checkDelta(delta); err != nil {
		return Bound{}, fmt.Errorf("population bound: %w", err)
	}
	if n < 1 || errors < 0 || errors > n {
		return Bound{}, fmt.Errorf("population bound: %d errors on %d rows: %w", errors, n, ErrRange)
	}
	if population <= n {
		return Bound{}, fmt.Errorf("population bound: population %d leaves no unlabelled rows beyond the %d labelled: %w", population, n, ErrRange)
	}
	// K ranges over [errors, N - (n - errors)]; the tail falls as K rises
	// and is 1 at the lower end, so bisect on integers.
	lo, hi := errors, population-(n-errors)
	for lo < hi {
		mid := lo + (hi-lo+1)/2
		if hypergeomCDF(errors, population, mid, n) >= delta {
			lo = mid
		} else {
			hi = mid - 1
		}
	}
	rest := lo - errors
	return Bound{Name: "population", Of: OfUnlabelledErrorRate, Value: float64(rest) / float64(population-n), Delta: delta, M: n,
		Terms: []Term{{"errors", float64(errors)}, {"n", float64(n)}, {"population", float64(population)},
			{"total_errors_upper", float64(lo)}, {"unlabelled_errors_upper", float64(rest)}}}, nil
}

// hypergeomCDF returns P(X <= k) for X the number of marked rows in a
// sample of n without replacement from N rows of which K are marked.
// It starts from the j = k term in log space and walks down with the ratio
// t(j-1)/t(j) = j (N-K-n+j) / ((K-j+1) (n-j+1)), stopping once past the
// mode the terms no longer move the sum.
func hypergeomCDF(k, population, marked, n int) float64 {
	lowest := max(0, n-(population-marked))
	top := min(k, marked, n)
	if top < lowest {
		return 0
	}
	if top == min(marked, n) {
		return 1 // k reaches the largest possible count
	}
	logT := lchoose(marked, top) + lchoose(population-marked, n-top) - lchoose(population, n)
	mode := (n + 1) * (marked + 1) / (population + 2)
	t, s := 1.0, 1.0 // terms relative to t(top)
	for j := top; j > lowest; j-- {
		t *= float64(j) * float64(population-marked-n+j) / (float64(marked-j+1) * float64(n-j+1))
		s += t
		if j <= mode && t < 1e-18*s {
			break
		}
	}
	// A probability: rounding in the log-space sum may not lift it over 1.
	return math.Min(1, math.Exp(logT+math.Log(s)))
}

func lchoose(a, b int) float64 {
	x, _ := math.Lgamma(float64(a) + 1)
	y, _ := math.Lgamma(float64(b) + 1)
	z, _ := math.Lgamma(float64(a-b) + 1)
	return x - y - z
}

// MeanLossBound bounds the expected value of a loss in [0, 1] of one
// classifier fixed before the rows were drawn, after a mean loss of mean on
// n fresh i.i.d. rows: with probability at least 1-delta,
//
//	E[loss] <= kl^-1_up(mean, ln(1/delta) / n).
//
// It is Chernoff's bound in its kl form (Langford 2005, JMLR, "Tutorial on
// practical prediction theory", the Chernoff form of the test-set bound),
// which holds for any loss in [0, 1] and not only for 0/1 errors: the
// moment generating function of a [0, 1] variable is at most that of the
// Bernoulli variable with the same mean (Hoeffding 1963, JASA, section 4;
// from memory), so the Bernoulli tail bound carries over. For 0/1 losses
// TestSetBound is tighter; with no loss at all both give 1 - delta^(1/n).
// Value bounds the expected loss. Terms: mean, n, budget (ln(1/delta)/n).
func MeanLossBound(mean float64, n int, delta float64) (Bound, error) {
	if err := checkDelta(delta); err != nil {
		return Bound{}, fmt.Errorf("mean-loss bound: %w", err)
	}
	if n < 1 {
		return Bound{}, fmt.Errorf("mean-loss bound: n = %d, want at least 1: %w", n, ErrRange)
	}
	if err := checkRate("mean loss", mean); err != nil {
		return Bound{}, fmt.Errorf("mean-loss bound: %w", err)
	}
	e := -math.Log(delta) / float64(n)
	v, err := KLInverseUpper(mean, e)
	if err != nil {
		return Bound{}, fmt.Errorf("mean-loss bound: %w", err)
	}
	return Bound{Name: "mean-loss", Of: OfMeanLoss, Value: v, Delta: delta, M: n,
		Terms: []Term{{"mean", mean}, {"n", float64(n)}, {"budget", e}}}, nil
}
