package trainer

import (
	"errors"
	"fmt"
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
	// Polish counts the exponentiated-gradient steps tried after L-BFGS
	// (for an objective with a Segment, each step and the line search
	// along its chord: one joint-matrix product).
	Polish int `json:"polish_steps"`
	// Evaluations counts objective evaluations.
	Evaluations int `json:"evaluations"`
	// Status is gonum's stopping reason for the L-BFGS phase, for example
	// "GradientThreshold" or "FunctionConvergence".
	Status string `json:"status"`
	// Gap is the Frank-Wolfe gap at the result, <q, g> - min_i g_i with g
	// the objective's gradient: zero exactly at a stationary point on the
	// simplex, and for a convex objective an upper bound on how far the
	// value is above the minimum (Jaggi 2013, ICML).
	Gap float64 `json:"gap"`
	// Converged says Gap reached GapTolerance times max(1, |Value|).
	Converged bool `json:"converged"`
}

// GapTolerance is the relative Frank-Wolfe gap at which the optimiser
// stops: the value is then within GapTolerance max(1, |value|) of the
// minimum for a convex objective, far below the bounds' printed digits.
const GapTolerance = 1e-5

// startPoint is a candidate starting posterior.
type startPoint struct {
	name string
	q    []float64
}

// minimizeSimplex minimises prob over the probability simplex.
//
// Each candidate start is evaluated and the best finite one is used. A
// short L-BFGS phase on softmax logits, q = softmax(x), at most 100
// iterations, makes the large early moves; exponentiated-gradient steps
// then finish (with a line search along the chord to the step's point when
// the problem has a Segment, else backtracking on the step size), until
// the Frank-Wolfe gap reaches GapTolerance or maxIter steps are spent
// (logits crawl in the tail, where a logit's gradient is proportional to
// its weight; the multiplicative steps do not). Only points of lower value ever replace the best one seen,
// so the result is never worse than any candidate.
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
		Converger:         &gapConverger{prob: prob, q: make([]float64, n), g: make([]float64, n)},
	}
	// A line search can fail far from the optimum when the objective's
	// scale makes steps tiny in floating point; restarting from the best
	// point seen resets the curvature memory and usually goes on.
	status := "Failure"
	iters := 0
	lbfgsIter := min(maxIter, 100)
	for restart := 0; restart < maxRestarts && iters < lbfgsIter; restart++ {
		before := seenVal
		settings.MajorIterations = lbfgsIter - iters
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
	egIters, gap := polish(prob, seenQ, &seenVal, maxIter)
	evals += egIters
	return seenQ, OptimizerResult{
		Value:       seenVal,
		Start:       starts[best].name,
		StartValue:  bestVal,
		Iterations:  iters,
		Polish:      egIters,
		Evaluations: evals,
		Status:      status,
		Gap:         gap,
		Converged:   gap <= GapTolerance*math.Max(1, math.Abs(seenVal)),
	}, nil
}

// gapReached is the L-BFGS phase's status when the Frank-Wolfe gap reaches
// GapTolerance.
var gapReached = optimize.NewStatus("GapTolerance", false, nil)

// gapConverger stops L-BFGS on the softmax logits once the posterior they
// give has a Frank-Wolfe gap within GapTolerance, or when the value has
// not moved for 20 iterations (to 1e-13), where further steps are rounding.
type gapConverger struct {
	prob objective.Problem
	q, g []float64
	flat optimize.FunctionConverge
}

func (c *gapConverger) Init(dim int) {
	c.flat = optimize.FunctionConverge{Absolute: 1e-13, Relative: 1e-13, Iterations: 20}
	c.flat.Init(dim)
}

func (c *gapConverger) Converged(loc *optimize.Location) optimize.Status {
	softmax(c.q, loc.X)
	c.prob.Grad(c.g, c.q)
	v := c.prob.Func(c.q)
	if fwGap(c.q, c.g) <= GapTolerance*math.Max(1, math.Abs(v)) {
		return gapReached
	}
	return c.flat.Converged(loc)
}

// Summary says in a few words whether the optimiser converged and how far
// it went: "converged (Frank-Wolfe gap 9.9e-06; 100 L-BFGS iterations, 502
// multiplicative steps)".
func (r OptimizerResult) Summary() string {
	word := "converged"
	if !r.Converged {
		word = "did NOT converge"
	}
	return fmt.Sprintf("%s (Frank-Wolfe gap %.2g; %d L-BFGS iterations, %d multiplicative steps)", word, r.Gap, r.Iterations, r.Polish)
}

// negligibleWeight is the weight below which fwGap leaves a voter out of
// the minimum: the divergence's slope ln(q_i/p_i) runs to -Inf as q_i goes
// to 0, so a voter whose best weight is far below floating point (a bad
// voter under a first-order bound, e^-300 say) would show a large gap that
// no representable step can close, while all such voters together change
// any value by less than 1e-13.
const negligibleWeight = 1e-15

// fwGap returns <q, g> - min_i g_i, the minimum over the voters of weight
// at least negligibleWeight.
func fwGap(q, g []float64) float64 {
	var dot float64
	lo := math.Inf(1)
	for i := range q {
		dot += q[i] * g[i]
		if q[i] >= negligibleWeight {
			lo = math.Min(lo, g[i])
		}
	}
	return dot - lo
}

// polish improves q in place by exponentiated-gradient steps, keeping only
// steps that lower the value, until no step lowers it or the Frank-Wolfe
// gap reaches GapTolerance; it returns the number of steps tried and the
// gap at the end. Where prob has a Segment, a step searches the chord from
// q to its point (chordSearch) and the step size follows the length kept;
// otherwise it backtracks on the step size, each try a Func.
func polish(prob objective.Problem, q []float64, val *float64, maxSteps int) (int, float64) {
	n := len(q)
	g := make([]float64, n)
	cand := make([]float64, n)
	eta := 1.0
	tries := 0
	gap := math.Inf(1)
	// Multiplicative steps cannot revive a weight that underflowed to 0
	// (softmax logits far below the rest do), and at 0 the divergence's
	// slope is -Inf: mix in a trace of uniform weight first, kept when it
	// lowers the value, as it does wherever a weight of 0 is not optimal.
	if !positive(q) {
		for i := range cand {
			cand[i] = (1-1e-9)*q[i] + 1e-9/float64(n)
		}
		if v := prob.Func(cand); v <= *val {
			*val = v
			copy(q, cand)
		}
	}
	for step := 0; step < maxSteps; step++ {
		prob.Grad(g, q)
		// One step is always tried, even from a point within the tolerance:
		// for the linear trade-off it lands on the exact minimiser (the
		// Gibbs posterior). Going further than the tolerance bought digits
		// no bound prints, at the price of more than half the steps.
		if gap = fwGap(q, g); step > 0 && gap <= GapTolerance*math.Max(1, math.Abs(*val)) {
			break
		}
		if prob.Segment != nil {
			// One product a step: the exponentiated-gradient point fixes
			// a direction, and the line search along the chord to it
			// costs O(n) a point.
			tries++
			expStep(cand, q, g, eta)
			seg := prob.Segment(q, cand)
			a, v := chordSearch(seg.Value, maxChord(q, cand), *val)
			if a == 0 {
				break
			}
			seg.Move(q, a)
			*val = v
			eta *= a
			continue
		}
		improved := false
		for k := 0; k < 40; k++ {
			tries++
			expStep(cand, q, g, eta)
			if v := prob.Func(cand); v < *val {
				*val = v
				copy(q, cand)
				improved = true
				eta *= 2
				break
			}
			eta /= 2
		}
		if !improved {
			break
		}
	}
	if step := maxSteps; step > 0 {
		prob.Grad(g, q)
		gap = fwGap(q, g)
	}
	return tries, gap
}

// maxChord returns how far along q + alpha (c - q) the weights stay
// positive: the least q_i / (q_i - c_i) over the weights c lowers (+Inf
// when it lowers none).
func maxChord(q, c []float64) float64 {
	amax := math.Inf(1)
	for i := range q {
		if c[i] < q[i] {
			amax = math.Min(amax, q[i]/(q[i]-c[i]))
		}
	}
	return amax
}

// chordSearch returns a step alpha in (0, 0.99 amax] with phi(alpha) < v0
// and phi there, or 0 and v0 when halving from 1 forty times finds none:
// from 1 it doubles while the value keeps falling, else halves until it
// falls (a backtracking search on a convex function of alpha along the
// chord; common practice, no source).
func chordSearch(phi func(float64) float64, amax, v0 float64) (float64, float64) {
	lim := 0.99 * amax
	a := math.Min(1, lim)
	if v := phi(a); v < v0 {
		for range 30 {
			if 2*a > lim {
				break
			}
			w := phi(2 * a)
			if !(w < v) {
				break
			}
			a, v = 2*a, w
		}
		return a, v
	}
	for range 40 {
		a /= 2
		if v := phi(a); v < v0 {
			return a, v
		}
	}
	return 0, v0
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
