package trainer

import (
	"errors"
	"math"

	"gonum.org/v1/gonum/optimize"

	"surety/objective"
)

// OptimizerResult says where the optimiser ended and why.
type OptimizerResult struct {
	// Value is the objective at the returned posterior.
	Value float64 `json:"value"`
	// Start names the starting point that was used (the best of the
	// candidates tried), and StartValue its objective value.
	Start      string  `json:"start"`
	StartValue float64 `json:"start_value"`
	Iterations int     `json:"iterations"`
	// Polish counts the exponentiated-gradient steps tried after L-BFGS.
	Polish int `json:"polish_steps"`
	// Evaluations counts objective evaluations.
	Evaluations int `json:"evaluations"`
	// Status is gonum's stopping reason, for example "GradientThreshold"
	// or "FunctionConvergence".
	Status string `json:"status"`
}

// startPoint is a candidate starting posterior.
type startPoint struct {
	name string
	q    []float64
}

// minimizeSimplex minimises prob over the probability simplex.
//
// The posterior is parametrised by softmax logits, q = softmax(x), and the
// logits are fitted by gonum's L-BFGS. Each candidate start is evaluated and
// the best finite one is used; the optimiser then only ever replaces it by a
// point of lower value (the best point seen is returned, whatever the line
// search did), so the result is never worse than any candidate.
func minimizeSimplex(prob objective.Problem, starts []startPoint, maxIter int) ([]float64, OptimizerResult, error) {
	best := -1
	bestVal := math.Inf(1)
	for i, s := range starts {
		if len(s.q) != len(starts[0].q) || !positive(s.q) {
			// Softmax logits cannot reach a zero weight; such a start (a
			// Gibbs posterior that underflowed) is skipped.
			continue
		}
		if v := prob.Func(s.q); v < bestVal {
			best, bestVal = i, v
		}
	}
	if best < 0 {
		return nil, OptimizerResult{}, errors.New("the objective is not finite at any starting point")
	}
	n := len(starts[best].q)
	x0 := make([]float64, n)
	for i, q := range starts[best].q {
		x0[i] = math.Log(q)
	}

	q := make([]float64, n)
	gq := make([]float64, n)
	seenQ := append([]float64(nil), starts[best].q...)
	seenVal := bestVal
	evals := 0
	// The optimiser sees the objective divided by its starting size, so its
	// tolerances mean the same for a bound near 0.3 and a trade-off near 500.
	scale := 1 / math.Max(1e-3, math.Abs(bestVal))
	p := optimize.Problem{
		Func: func(x []float64) float64 {
			softmax(q, x)
			v := prob.Func(q)
			evals++
			if v < seenVal {
				seenVal = v
				copy(seenQ, q)
			}
			return v * scale
		},
		Grad: func(grad, x []float64) {
			softmax(q, x)
			prob.Grad(gq, q)
			// d/dx_j of f(softmax(x)) = q_j (g_j - <q, g>).
			var dot float64
			for i := range q {
				dot += q[i] * gq[i]
			}
			for i := range q {
				grad[i] = scale * q[i] * (gq[i] - dot)
			}
		},
	}
	if maxIter <= 0 {
		maxIter = 1000
	}
	const maxRestarts = 20
	settings := &optimize.Settings{
		GradientThreshold: 1e-12,
		MajorIterations:   maxIter,
		Converger:         &optimize.FunctionConverge{Absolute: 1e-13, Relative: 1e-13, Iterations: 20},
	}
	// A line search can fail far from the optimum when the objective's
	// scale makes steps tiny in floating point; restarting from the best
	// point seen resets the curvature memory and usually goes on.
	status := "Failure"
	iters := 0
	for restart := 0; restart < maxRestarts && iters < maxIter; restart++ {
		before := seenVal
		settings.MajorIterations = maxIter - iters
		res, err := optimize.Minimize(p, x0, settings, &optimize.LBFGS{})
		if res != nil {
			status = res.Status.String()
			iters += res.Stats.MajorIterations
		}
		if err == nil {
			break
		}
		status += ": " + err.Error()
		if !(seenVal < before) {
			break
		}
		for i, q := range seenQ {
			x0[i] = math.Log(math.Max(q, math.SmallestNonzeroFloat64))
		}
	}
	// Finish with exponentiated-gradient steps, q <- q exp(-eta g) / Z, the
	// mirror descent of the simplex's KL geometry: they move weight in and
	// out of the tail, where softmax logits crawl (a logit's gradient is
	// proportional to its weight). For the linear trade-off one step with
	// eta = 1 lands on the Gibbs posterior exactly.
	egIters := polish(prob, seenQ, &seenVal, maxIter)
	evals += egIters
	return seenQ, OptimizerResult{
		Value:       seenVal,
		Start:       starts[best].name,
		StartValue:  bestVal,
		Iterations:  iters,
		Polish:      egIters,
		Evaluations: evals,
		Status:      status,
	}, nil
}

// polish improves q in place by exponentiated-gradient steps with a
// backtracking step size, keeping only steps that lower the value; it
// returns the number of steps tried.
func polish(prob objective.Problem, q []float64, val *float64, maxSteps int) int {
	n := len(q)
	g := make([]float64, n)
	cand := make([]float64, n)
	eta := 1.0
	tries := 0
	for step := 0; step < maxSteps; step++ {
		prob.Grad(g, q)
		improved := false
		for k := 0; k < 40; k++ {
			tries++
			expStep(cand, q, g, eta)
			if v := prob.Func(cand); v < *val {
				*val = v
				copy(q, cand)
				improved = true
				eta = math.Min(2*eta, 1)
				break
			}
			eta /= 2
		}
		if !improved {
			break
		}
	}
	return tries
}

// expStep writes q exp(-eta g), normalised, into dst, in log space.
func expStep(dst, q, g []float64, eta float64) {
	mx := math.Inf(-1)
	for i := range q {
		if q[i] > 0 {
			dst[i] = math.Log(q[i]) - eta*g[i]
			mx = math.Max(mx, dst[i])
		}
	}
	var s float64
	for i := range q {
		if q[i] > 0 {
			dst[i] = math.Exp(dst[i] - mx)
		} else {
			dst[i] = 0
		}
		s += dst[i]
	}
	for i := range dst {
		dst[i] /= s
	}
}

func positive(q []float64) bool {
	for _, v := range q {
		if !(v > 0) {
			return false
		}
	}
	return true
}

// softmax writes the softmax of x into q, shifted by the maximum for range.
func softmax(q, x []float64) {
	m := math.Inf(-1)
	for _, v := range x {
		m = math.Max(m, v)
	}
	var s float64
	for i, v := range x {
		q[i] = math.Exp(v - m)
		s += q[i]
	}
	for i := range q {
		q[i] /= s
	}
}
