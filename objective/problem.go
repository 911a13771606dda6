package objective

import (
	"fmt"
	"math"
	"runtime"
	"slices"
	"sync"

	"gonum.org/v1/gonum/floats"
)

// Problem is a function of the posterior weights q and its gradient, in the
// shape of gonum's optimize.Problem. q is meant to lie on the simplex; Func
// and Grad also accept points just off it (as finite differences and
// softmax steps produce) and give the plain partial derivatives there. Both
// are safe for concurrent use. The constructors below return an error
// wrapping ErrRange, and no Problem, when their arguments are invalid.
type Problem struct {
	Func func(q []float64) float64
	Grad func(grad, q []float64)
	// Segment, when not nil, cuts the objective along the segment from q
	// to c for a line search: it makes the one product with the joint
	// matrix the second point needs (q's is kept from the last Func or
	// Grad at q), after which every point of the line costs O(n). It is
	// set for the objectives that read the joint matrix, whose Func
	// otherwise costs an n x n product.
	Segment func(q, c []float64) Segment
}

// Segment is an objective along the line x(alpha) = q + alpha (c - q).
type Segment struct {
	// Value returns the objective at x(alpha); alpha must keep x(alpha)
	// on the simplex.
	Value func(alpha float64) float64
	// Move writes x(alpha) into dst and keeps its product with the joint
	// matrix, (1 - alpha) J q + alpha J c up to rounding, as that of the
	// point dst holds, so that Func and Grad there need no product.
	Move func(dst []float64, alpha float64)
}

// surface is a bound as a function of the three empirical figures r(Q),
// t(Q) and KL(Q||P), with its partial derivatives in them.
type surface func(r, t, kl float64) (v, dr, dt, dkl float64)

// problemOf composes a surface with r(Q) = q.risks (if risks is not nil),
// t(Q) = q^T J q (if joint is not nil) and KL(Q||P): the chain rule gives
// dr r_i + dt (2 J q)_i + dkl (ln(q_i/p_i) + 1).
func problemOf(risks, joint, prior []float64, f surface, err error) (Problem, error) {
	if err != nil {
		return Problem{}, err
	}
	var memo *jqMemo
	if joint != nil {
		memo = &jqMemo{joint: joint}
	}
	// eval returns the surface at q and J q (nil without a joint matrix).
	eval := func(q []float64) (v, dr, dt, dkl float64, jq []float64) {
		var r, t float64
		if risks != nil {
			r = GibbsRisk(q, risks)
		}
		if joint != nil {
			if len(joint) != len(q)*len(q) {
				t = math.NaN()
			} else {
				jq = memo.product(q)
				t = floats.Dot(q, jq)
			}
		}
		v, dr, dt, dkl = f(r, t, Divergence(q, prior))
		return v, dr, dt, dkl, jq
	}
	var segment func(q, c []float64) Segment
	if joint != nil {
		segment = func(q, c []float64) Segment {
			jq, jc := memo.product(q), memo.product(c)
			x, jx := make([]float64, len(q)), make([]float64, len(q))
			at := func(alpha float64) {
				for i := range x {
					x[i] = q[i] + alpha*(c[i]-q[i])
					jx[i] = jq[i] + alpha*(jc[i]-jq[i])
				}
			}
			return Segment{
				Value: func(alpha float64) float64 {
					at(alpha)
					var r float64
					if risks != nil {
						r = GibbsRisk(x, risks)
					}
					v, _, _, _ := f(r, floats.Dot(x, jx), Divergence(x, prior))
					return v
				},
				Move: func(dst []float64, alpha float64) {
					at(alpha)
					copy(dst, x)
					memo.keep(x, jx)
				},
			}
		}
	}
	return Problem{
		Segment: segment,
		Func:    func(q []float64) float64 { v, _, _, _, _ := eval(q); return v },
		Grad: func(grad, q []float64) {
			if len(grad) != len(prior) || len(q) != len(prior) {
				fillNaN(grad)
				return
			}
			_, dr, dt, dkl, jq := eval(q)
			DivergenceGrad(grad, q, prior)
			for i := range grad {
				g := dkl * grad[i]
				if risks != nil {
					g += dr * risks[i]
				}
				if jq != nil {
					g += dt * 2 * jq[i]
				}
				grad[i] = g
			}
		},
	}, nil
}

// jqMemo keeps J q for the last q it was asked for: an optimiser asks for
// the value and the gradient at the same point, and each needs the same
// n x n product, the whole cost of a step.
type jqMemo struct {
	joint []float64
	mu    sync.Mutex
	q, jq []float64
}

// product returns J q in a new slice.
func (m *jqMemo) product(q []float64) []float64 {
	m.mu.Lock()
	defer m.mu.Unlock()
	if !slices.Equal(m.q, q) {
		n := len(q)
		m.q = append(m.q[:0], q...)
		m.jq = slices.Grow(m.jq[:0], n)[:n]
		// Each entry is one dot product, the same bits whichever goroutine
		// makes it; a pool of thousands of voters makes the product long
		// enough (millions of multiply-adds a step) to share.
		rows := func(lo, hi int) {
			for i := lo; i < hi; i++ {
				m.jq[i] = floats.Dot(m.joint[i*n:(i+1)*n], m.q)
			}
		}
		// A small pool's product is shorter than starting a goroutine.
		workers := min(runtime.GOMAXPROCS(0), n*n/productShare)
		if workers <= 1 {
			rows(0, n)
		} else {
			var wg sync.WaitGroup
			for w := range workers {
				wg.Go(func() { rows(w*n/workers, (w+1)*n/workers) })
			}
			wg.Wait()
		}
	}
	return slices.Clone(m.jq)
}

// keep makes jq the product kept for q.
func (m *jqMemo) keep(q, jq []float64) {
	m.mu.Lock()
	defer m.mu.Unlock()
	m.q = append(m.q[:0], q...)
	m.jq = append(m.jq[:0], jq...)
}

// productShare is the fewest multiply-adds of J q per goroutine.
const productShare = 1 << 18

// checkStats validates the statistics an objective is built on.
func checkStats(risks, joint, prior []float64, m int) error {
	n := len(prior)
	if n == 0 {
		return fmt.Errorf("objective: empty prior: %w", ErrRange)
	}
	for i, p := range prior {
		if !(p > 0 && p <= 1) {
			return fmt.Errorf("objective: prior weight %d is %v, want one in (0, 1]: %w", i, p, ErrRange)
		}
	}
	if risks != nil && len(risks) != n {
		return fmt.Errorf("objective: %d risks for %d prior weights: %w", len(risks), n, ErrRange)
	}
	// The message is formatted only for a bad entry: the joint matrix has
	// n^2 of them, and formatting each cost more than the fit it guards.
	for i, r := range risks {
		if !(r >= 0 && r <= 1) {
			return checkRate(fmt.Sprintf("risk of voter %d", i), r)
		}
	}
	if joint != nil && len(joint) != n*n {
		return fmt.Errorf("objective: joint matrix has %d entries for %d voters, want %d: %w", len(joint), n, n*n, ErrRange)
	}
	for i, j := range joint {
		if !(j >= 0 && j <= 1) {
			return checkRate(fmt.Sprintf("joint error rate %d,%d", i/n, i%n), j)
		}
	}
	if m < 1 {
		return fmt.Errorf("objective: m = %d, want at least 1: %w", m, ErrRange)
	}
	return nil
}

// LinearObjective is Catoni's trade-off C m r(Q) + KL(Q||P) (Catoni 2007),
// minimised over the simplex by GibbsPosterior.
func LinearObjective(risks, prior []float64, m int, c float64) (Problem, error) {
	err := checkStats(risks, nil, prior, m)
	if err == nil && (!(c > 0) || math.IsInf(c, 1)) {
		err = fmt.Errorf("objective: trade-off C = %v, want a positive number: %w", c, ErrRange)
	}
	cm := c * float64(m)
	return problemOf(risks, nil, prior, func(r, _, kl float64) (float64, float64, float64, float64) {
		return cm*r + kl, cm, 0, 1
	}, err)
}

// GibbsPosterior returns the minimiser of LinearObjective on the simplex,
// q_i proportional to p_i exp(-C m r_i) (Catoni 2007), computed in log
// space so that large C m does not underflow every weight. Invalid
// arguments give LinearObjective's error.
func GibbsPosterior(risks, prior []float64, m int, c float64) ([]float64, error) {
	if _, err := LinearObjective(risks, prior, m, c); err != nil {
		return nil, err
	}
	q := make([]float64, len(prior))
	top := math.Inf(-1)
	for i := range q {
		q[i] = math.Log(prior[i]) - c*float64(m)*risks[i]
		top = math.Max(top, q[i])
	}
	var s float64
	for i := range q {
		q[i] = math.Exp(q[i] - top)
		s += q[i]
	}
	for i := range q {
		q[i] /= s
	}
	return q, nil
}

// pacConst returns ln(xi(m)/delta), the data-free part of every kl budget.
func pacConst(m int, delta float64) (float64, error) {
	if err := checkDelta(delta); err != nil {
		return 0, err
	}
	lx, err := LogXi(m)
	return lx - math.Log(delta), err
}

// KLObjective is the first-order vote bound of FirstOrderBound as a
// function of q: 2 kl^-1_up(r(Q), (KL(Q||P) + ln(xi(m)/delta))/m), its
// gradient through the inverse by implicit differentiation. Func is NaN
// where r(Q) leaves [0, 1].
func KLObjective(risks, prior []float64, m int, delta float64) (Problem, error) {
	err := checkStats(risks, nil, prior, m)
	var c float64
	if err == nil {
		c, err = pacConst(m, delta)
	}
	fm := float64(m)
	return problemOf(risks, nil, prior, func(r, _, kl float64) (float64, float64, float64, float64) {
		e := (kl + c) / fm
		p, err := KLInverseUpper(r, e)
		if err != nil {
			return math.NaN(), math.NaN(), math.NaN(), math.NaN()
		}
		dq, de := klInverseSlopes(r, e, p)
		return 2 * p, 2 * dq, 0, 2 * de / fm
	}, err)
}

// TandemObjective is the tandem vote bound of TandemBound as a function of
// q: 4 kl^-1_up(t(Q), (2 KL(Q||P) + ln(xi(m)/delta))/m). Func is NaN where
// t(Q) leaves [0, 1].
func TandemObjective(joint, prior []float64, m int, delta float64) (Problem, error) {
	err := checkStats(nil, joint, prior, m)
	var c float64
	if err == nil {
		c, err = pacConst(m, delta)
	}
	fm := float64(m)
	return problemOf(nil, joint, prior, func(_, t, kl float64) (float64, float64, float64, float64) {
		e := (2*kl + c) / fm
		p, err := KLInverseUpper(t, e)
		if err != nil {
			return math.NaN(), math.NaN(), math.NaN(), math.NaN()
		}
		dq, de := klInverseSlopes(t, e, p)
		return 4 * p, 0, 4 * dq, 8 * de / fm
	}, err)
}

// CBoundObjective is the certified C-bound of CBound as a function of q,
// with d(Q) = 2 (r(Q) - t(Q)) (two classes). Where the upper Gibbs bound R+
// reaches 1/2 the C-bound is invalid; there Func is the documented
// surrogate
//
//	1 + (1 - 2 R+)^2 / (1 - 2 D-),
//
// the mirror image of the C-bound about R+ = 1/2: continuous with it and
// with a continuous gradient (both are 1 and flat at the edge), above 1
// (so never mistaken for a bound), and rising in R+, so descent leads back
// to the valid side. A d(Q) a rounding error below 0 is read as 0, whose
// lower bound 0 is true. Func is NaN where r(Q) or d(Q) leaves [0, 1] or
// D- reaches 1/2 (impossible for two-class statistics).
func CBoundObjective(risks, joint, prior []float64, m int, delta float64) (Problem, error) {
	err := checkStats(risks, joint, prior, m)
	var c float64
	if err == nil {
		c, err = pacConst(m, delta/2)
	}
	fm := float64(m)
	nan := math.NaN()
	return problemOf(risks, joint, prior, func(r, t, kl float64) (float64, float64, float64, float64) {
		e1, e2 := (kl+c)/fm, (2*kl+c)/fm
		d := 2 * (r - t)
		flat := d < 0
		if flat {
			d = 0
		}
		rUp, err1 := KLInverseUpper(r, e1)
		dLo, err2 := KLInverseLower(d, e2)
		b := 1 - 2*dLo
		if err1 != nil || err2 != nil || !(b > 0) {
			return nan, nan, nan, nan
		}
		rq, re := klInverseSlopes(r, e1, rUp)
		dq, de := klInverseSlopes(d, e2, dLo)
		if flat {
			dq = 0
		}
		a := 1 - 2*rUp
		sign := 1.0 // the C-bound below R+ = 1/2, its mirror image above
		if rUp >= 0.5 {
			sign = -1
		}
		v := 1 - sign*a*a/b
		vr := sign * 4 * a / b            // dV/dR+
		vd := -sign * 2 * a * a / (b * b) // dV/dD-
		return v, vr*rq + 2*vd*dq, -2 * vd * dq, (vr*re + 2*vd*de) / fm
	}, err)
}

// ChebyshevCantelliObjective is the bound of ChebyshevCantelliBound as a
// function of q, at the best mu for each q; by the envelope theorem its
// gradient is that of the bound at fixed mu. Func is NaN where r(Q) or
// t(Q) leaves [0, 1].
func ChebyshevCantelliObjective(risks, joint, prior []float64, m int, delta float64) (Problem, error) {
	err := checkStats(risks, joint, prior, m)
	if err == nil {
		err = checkDelta(delta)
	}
	nan := math.NaN()
	fm := float64(m)
	return problemOf(risks, joint, prior, func(r, t, kl float64) (float64, float64, float64, float64) {
		c, err := chebyshevOf(r, t, kl, m, delta)
		if err != nil {
			return nan, nan, nan, nan
		}
		rq, re := klInverseSlopes(r, c.e1, c.rLo)
		tq, te := klInverseSlopes(t, c.e2, c.tUp)
		h2 := (0.5 - c.mu) * (0.5 - c.mu)
		vr, vt := -2*c.mu/h2, 1/h2 // dV/dR-, dV/dT+
		return c.value, vr * rq, vt * tq, (vr*re + 2*vt*te) / fm
	}, err)
}
