package objective

import (
	"errors"
	"fmt"
	"math"
)

// ErrRange is wrapped by every error about an argument out of its range.
var ErrRange = errors.New("argument out of range")

// BinaryKL returns kl(q||p) = q ln(q/p) + (1-q) ln((1-q)/(1-p)), the KL
// divergence between Bernoulli(q) and Bernoulli(p), with 0 ln 0 = 0 and
// +Inf where p is 0 or 1 and q is not. It returns NaN when q or p is
// outside [0, 1].
func BinaryKL(q, p float64) float64 {
	if !(q >= 0 && q <= 1 && p >= 0 && p <= 1) {
		return math.NaN()
	}
	return xlogRatio(q, p, q-p) + xlogRatio(1-q, 1-p, p-q)
}

// xlogRatio returns a ln(a/b), given diff = a - b computed from the
// original operands (so it stays exact when a and b are close); 0 ln 0 = 0.
// Near a = b it uses log1p, which keeps kl accurate to a few ulps of
// |q-p| rather than of 1: that is what makes the inverses good to 1e-12
// when the budget e is tiny.
func xlogRatio(a, b, diff float64) float64 {
	switch {
	case a == 0:
		return 0
	case b == 0:
		return math.Inf(1)
	case math.Abs(diff) < 0.5*b:
		return a * math.Log1p(diff/b)
	}
	if r := a / b; r > 0x1p-1000 && !math.IsInf(r, 1) {
		return a * math.Log(r)
	}
	return a * (math.Log(a) - math.Log(b)) // the ratio would overflow or underflow
}

// entropy returns the binary entropy -q ln q - (1-q) ln(1-q) in nats.
func entropy(q float64) float64 {
	var h float64
	if q > 0 {
		h -= q * math.Log(q)
	}
	if q < 1 {
		h -= (1 - q) * math.Log1p(-q)
	}
	return h
}

func checkRate(what string, q float64) error {
	if !(q >= 0 && q <= 1) {
		return fmt.Errorf("objective: %s %v is not in [0, 1]: %w", what, q, ErrRange)
	}
	return nil
}

// checkInverse validates the arguments of a kl inverse.
func checkInverse(q, e float64) error {
	if err := checkRate("empirical rate", q); err != nil {
		return err
	}
	if !(e >= 0) {
		return fmt.Errorf("objective: kl budget %v is negative or NaN: %w", e, ErrRange)
	}
	return nil
}

// KLInverseUpper returns kl^-1_up(q, e) = max{p in [q, 1] : kl(q||p) <= e},
// to 1e-12 absolute and never below the exact value by more than rounding:
// Newton's method on the convex, increasing p -> kl(q||p) started above the
// root only moves down towards it. It needs at most a few dozen kl
// evaluations (typically 4 to 8). Closed forms: q = 0 gives 1 - exp(-e),
// e = 0 gives q, e = +Inf gives 1.
func KLInverseUpper(q, e float64) (float64, error) {
	if err := checkInverse(q, e); err != nil {
		return 0, err
	}
	switch {
	case e == 0 || q == 1:
		return q, nil
	case math.IsInf(e, 1):
		return 1, nil
	case q == 0:
		return -math.Expm1(-e), nil // kl(0||p) = -ln(1-p)
	}
	// Two starting points above the root: Pinsker's kl >= 2 (p-q)^2, and
	// kl >= -H(q) - (1-q) ln(1-p) (drop the -q ln p >= 0 term).
	p := math.Min(q+math.Sqrt(e/2), -math.Expm1(-(e+entropy(q))/(1-q)))
	if p >= 1 {
		// The second start rounded to 1: the root is within 1.2e-16 of 1.
		return 1, nil
	}
	return klNewton(q, e, p), nil
}

// KLInverseLower returns kl^-1_lo(q, e) = min{p in [0, q] : kl(q||p) <= e},
// to 1e-12 absolute and never above the exact value by more than rounding
// (the mirror of KLInverseUpper). Closed forms: q = 1 gives exp(-e), e = 0
// gives q, e = +Inf gives 0.
func KLInverseLower(q, e float64) (float64, error) {
	if err := checkInverse(q, e); err != nil {
		return 0, err
	}
	switch {
	case e == 0 || q == 0:
		return q, nil
	case math.IsInf(e, 1):
		return 0, nil
	case q == 1:
		return math.Exp(-e), nil // kl(1||p) = -ln p
	}
	// Newton in u = ln p, where u -> kl(q||e^u) is convex too (its second
	// derivative is (1-q) p/(1-p)^2) and decreasing below ln q, so the
	// iterates rise monotonically to the root from below. Starts below the
	// root: Pinsker, and kl >= -H(q) - q ln p (drop -(1-q) ln(1-p) >= 0).
	u := -(e + entropy(q)) / q
	if d := q - math.Sqrt(e/2); d > 0 {
		u = math.Max(u, math.Log(d))
	}
	if math.Exp(u) == 0 {
		// The start underflows. The root is at most q exp(-e/q) (kl(q||p)
		// <= q ln(q/p) for p <= q), which is at most e times the start: it
		// is below 1.5e-323.
		return 0, nil
	}
	lq := math.Log(q)
	for range 100 {
		// exp(ln q) may round an ulp above q; the root is at most q.
		p := math.Min(math.Exp(u), q)
		g := BinaryKL(q, p) - e
		if !(g > 0) {
			return p, nil
		}
		next := u - g*(1-p)/(p-q) // d/du kl(q||e^u) = (p-q)/(1-p)
		if !(next < lq) {
			next = u + (lq-u)/2
		}
		step := math.Abs(next - u)
		u = next
		if step < 1e-14 {
			break
		}
	}
	return math.Min(math.Exp(u), q), nil
}

// klNewton solves kl(q||p) = e for p in (q, 1), given kl(q||start) >= e.
// kl(q||.) is convex and increasing there, so Newton's iterates fall
// monotonically from the start to the root and never pass it (up to
// rounding); a step that would cross q is replaced by bisection towards q
// as a guard against rounding.
func klNewton(q, e, p float64) float64 {
	for range 100 {
		f := BinaryKL(q, p) - e
		if !(f > 0) {
			return p
		}
		next := p - f*p*(1-p)/(p-q) // f'(p) = (p-q) / (p(1-p))
		if !((next-q)*(p-q) > 0) {
			next = q + (p-q)/2
		}
		step := math.Abs(next - p)
		p = next
		if step < 1e-14 {
			break
		}
	}
	return p
}

// klInverseSlopes returns the partial derivatives of p = kl^-1(q, e) (upper
// or lower, p the inverse's value) in q and in e, by implicit
// differentiation of kl(q||p) = e:
//
//	dp/de = p(1-p)/(p-q),  dp/dq = -(ln(q/p) - ln((1-q)/(1-p))) p(1-p)/(p-q).
//
// Where p sits at 0 or 1 the inverse is flat and both are 0. At p = q
// (e = 0) the slope in e is infinite; that point is never reached by a
// bound, whose budget includes ln(xi(m)/delta) > 0. At q = 0 the slope in q
// is +Inf for the upper inverse (q ln q has an infinite slope), which is
// the truth and is returned as such.
func klInverseSlopes(q, e, p float64) (dq, de float64) {
	if p <= 0 || p >= 1 {
		return 0, 0
	}
	if p == q {
		return 1, math.Inf(1)
	}
	s := p * (1 - p) / (p - q)
	var g float64 // d kl(q||p) / dq
	if q > 0 {
		g += math.Log(q / p)
	} else {
		g = math.Inf(-1)
	}
	if q < 1 {
		g -= math.Log((1 - q) / (1 - p))
	} else {
		g = math.Inf(1)
	}
	return -g * s, s
}
