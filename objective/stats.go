package objective

import (
	"math"

	"gonum.org/v1/gonum/floats"
)

// The empirical quantities as functions of the posterior weights q. They
// take q anywhere in the non-negative orthant (the optimiser and the
// finite-difference checks step off the simplex) and their gradients are
// the plain partial derivatives there, not projected onto the simplex.
// Slices of mismatched lengths give NaN (and a gradient of NaN): these
// functions sit in optimiser loops and report no error.

// Divergence returns KL(Q||P) = sum_i q_i ln(q_i/p_i), with 0 ln 0 = 0 and
// +Inf where some p_i = 0 < q_i.
func Divergence(q, p []float64) float64 {
	if len(q) != len(p) {
		return math.NaN()
	}
	var s float64
	for i, qi := range q {
		s += xlogRatio(qi, p[i], qi-p[i])
	}
	return s
}

// DivergenceGrad writes the gradient of Divergence in q into grad:
// ln(q_i/p_i) + 1. Where q_i = 0 the true partial derivative is -Inf; the
// entry is then ln(s/p_i) + 1 with s the smallest positive float64 (about
// -744 - ln p_i), a finite stand-in so that an optimiser in softmax
// coordinates, which multiplies the entry by q_i = 0, sees exactly 0 rather
// than NaN.
func DivergenceGrad(grad, q, p []float64) {
	if len(q) != len(p) || len(grad) != len(q) {
		fillNaN(grad)
		return
	}
	for i, qi := range q {
		grad[i] = math.Log(math.Max(qi, math.SmallestNonzeroFloat64)/p[i]) + 1
	}
}

// GibbsRisk returns the empirical Gibbs risk r(Q) = sum_i q_i r_i.
func GibbsRisk(q, risks []float64) float64 {
	if len(q) != len(risks) {
		return math.NaN()
	}
	return floats.Dot(q, risks)
}

// GibbsRiskGrad writes the gradient of GibbsRisk in q into grad: r_i.
func GibbsRiskGrad(grad, q, risks []float64) {
	if len(q) != len(risks) || len(grad) != len(q) {
		fillNaN(grad)
		return
	}
	copy(grad, risks)
}

// TandemRisk returns the empirical tandem risk t(Q) = q^T J q, where joint
// is the n x n row-major matrix of empirical joint error rates J_ij = T_ij/m
// (the diagonal holds the voters' own error rates). J is symmetric by
// construction and only its upper triangle is read.
func TandemRisk(q, joint []float64) float64 {
	n := len(q)
	if len(joint) != n*n {
		return math.NaN()
	}
	var s float64
	for i, qi := range q {
		if qi == 0 {
			continue
		}
		row := joint[i*n : (i+1)*n]
		s += qi * (qi*row[i] + 2*floats.Dot(q[i+1:], row[i+1:]))
	}
	return s
}

// TandemRiskGrad writes the gradient of TandemRisk in q into grad: 2 J q
// (J symmetric; full rows are read).
func TandemRiskGrad(grad, q, joint []float64) {
	n := len(q)
	if len(joint) != n*n || len(grad) != n {
		fillNaN(grad)
		return
	}
	for i := range n {
		grad[i] = 2 * floats.Dot(joint[i*n:(i+1)*n], q)
	}
}

func fillNaN(x []float64) {
	for i := range x {
		x[i] = math.NaN()
	}
}
