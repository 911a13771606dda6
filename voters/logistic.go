package voters

import (
	"math"
	"runtime"
	"slices"
	"sync"
	"sync/atomic"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/optimize"
)

// logistic is FitLinear's objective on a dense design, laid out for speed:
// the mean cross-entropy of a softmax over the classes plus L2/2 times the
// squared norm of the weights (intercepts free). The parameters hold, per
// free class, its d weights then its intercept; with two classes class 0's
// score is fixed at 0, as in FitLinear.
//
// The sum over rows is cut into chunks whose size depends only on the
// problem's shape; goroutines (up to GOMAXPROCS) take chunks, each chunk
// writes its own partial loss and gradient, and the partials are added in
// chunk order. So the value and gradient are the same bits at any
// GOMAXPROCS.
type logistic struct {
	x     []float64 // the design, row-major, d per row
	y     []int     // class of each design row
	idx   []int     // design rows in the sum
	d, k  int
	first int // first class with a free score
	l2    float64
	chunk int // rows per chunk
	parts []logPart
	memo  pointMemo
	evals int
}

type logPart struct {
	f      float64
	g      []float64
	scores []float64
}

// Chunks hold at least minChunkWork multiply-adds and there are at most
// maxChunks of them: enough to share among goroutines, few enough that the
// reduction stays small beside the sum.
const (
	minChunkWork = 1 << 16
	maxChunks    = 256
)

func newLogistic(x []float64, y []int, idx []int, d, k int) *logistic {
	lg := &logistic{x: x, y: y, idx: idx, d: d, k: k}
	if k == 2 {
		lg.first = 1
	}
	free := k - lg.first
	n := len(idx)
	lg.chunk = max(32, (minChunkWork+d*free-1)/(d*free), (n+maxChunks-1)/maxChunks)
	chunks := max(1, (n+lg.chunk-1)/lg.chunk)
	lg.parts = make([]logPart, chunks)
	for i := range lg.parts {
		lg.parts[i] = logPart{g: make([]float64, lg.params()), scores: make([]float64, k)}
	}
	lg.memo.compute = lg.compute
	return lg
}

func (lg *logistic) params() int { return (lg.k - lg.first) * (lg.d + 1) }

// setL2 changes the strength and drops the cached point.
func (lg *logistic) setL2(l2 float64) {
	lg.l2 = l2
	lg.memo.ok = false
}

// eval returns the objective at p and writes its gradient into grad
// unless it is nil (pointMemo).
func (lg *logistic) eval(p, grad []float64) float64 { return lg.memo.eval(p, grad) }

// pointMemo keeps an objective's value and gradient at the last point
// asked for: gonum's line search asks for the value and then the gradient
// of one point in two calls, and one pass over the rows gives both.
type pointMemo struct {
	// compute returns the value at p and writes the gradient into grad.
	compute func(p, grad []float64) float64
	p, g    []float64
	f       float64
	ok      bool
}

// eval returns the value at p and copies the gradient into grad unless it
// is nil, computing both only for a point other than the last.
func (m *pointMemo) eval(p, grad []float64) float64 {
	if !m.ok || !slices.Equal(p, m.p) {
		m.g = slices.Grow(m.g[:0], len(p))[:len(p)]
		m.f = m.compute(p, m.g)
		m.p = append(m.p[:0], p...)
		m.ok = true
	}
	if grad != nil {
		copy(grad, m.g)
	}
	return m.f
}

// problem is the gonum problem of the memo's objective.
func (m *pointMemo) problem() optimize.Problem {
	return optimize.Problem{
		Func: func(p []float64) float64 { return m.eval(p, nil) },
		Grad: func(grad, p []float64) { m.eval(p, grad) },
	}
}

func (lg *logistic) compute(p, grad []float64) float64 {
	lg.evals++
	chunks := len(lg.parts)
	workers := max(1, min(runtime.GOMAXPROCS(0), chunks))
	if workers == 1 {
		for c := range chunks {
			lg.chunkSum(c, p)
		}
	} else {
		var next atomic.Int64
		var wg sync.WaitGroup
		for range workers {
			wg.Go(func() {
				for {
					c := int(next.Add(1) - 1)
					if c >= chunks {
						return
					}
					lg.chunkSum(c, p)
				}
			})
		}
		wg.Wait()
	}
	var f float64
	clear(grad)
	for c := range lg.parts {
		f += lg.parts[c].f
		floats.Add(grad, lg.parts[c].g)
	}
	n := float64(len(lg.idx))
	f /= n
	floats.Scale(1/n, grad)
	stride := lg.d + 1
	for c := 0; c < lg.k-lg.first; c++ {
		w := p[c*stride : c*stride+lg.d]
		g := grad[c*stride : c*stride+lg.d]
		f += lg.l2 / 2 * floats.Dot(w, w)
		floats.AddScaled(g, lg.l2, w)
	}
	return f
}

// chunkSum writes chunk c's summed loss and gradient into its part.
func (lg *logistic) chunkSum(c int, p []float64) {
	part := &lg.parts[c]
	g, scores := part.g, part.scores
	clear(g)
	d, stride := lg.d, lg.d+1
	var f float64
	for _, r := range lg.idx[c*lg.chunk : min(len(lg.idx), (c+1)*lg.chunk)] {
		xr := lg.x[r*d : (r+1)*d]
		y := lg.y[r]
		lz := lg.scores(p, xr, scores)
		f += lz - scores[y]
		for c := lg.first; c < lg.k; c++ {
			gc := math.Exp(scores[c] - lz)
			if c == y {
				gc--
			}
			gw := g[(c-lg.first)*stride : (c-lg.first+1)*stride]
			floats.AddScaled(gw[:d], gc, xr)
			gw[d] += gc
		}
	}
	part.f = f
}

// scores writes the class scores of features xr into scores and returns
// their log-sum-exp.
func (lg *logistic) scores(p, xr, scores []float64) float64 {
	d, stride := lg.d, lg.d+1
	mx := math.Inf(-1)
	for c := range scores {
		s := 0.0
		if c >= lg.first {
			w := p[(c-lg.first)*stride : (c-lg.first+1)*stride]
			s = w[d] + floats.Dot(w[:d], xr)
		}
		scores[c] = s
		mx = max(mx, s)
	}
	return logSumExp(scores, mx)
}

// logSumExp returns ln sum_c e^scores[c], given mx, the largest score;
// exp(0) is 1 exactly, so the largest score needs no exp.
func logSumExp(scores []float64, mx float64) float64 {
	var z float64
	for _, s := range scores {
		e := 1.0
		if v := s - mx; v != 0 {
			e = math.Exp(v)
		}
		z += e
	}
	return mx + math.Log(z)
}

// predict returns, for each design row of rows, the class of largest
// score (ties to the lower index) and adds -ln p(true class) to *logLoss.
func (lg *logistic) predict(p []float64, rows []int, pred []int, logLoss *float64) {
	scores := make([]float64, lg.k)
	for i, r := range rows {
		lz := lg.scores(p, lg.x[r*lg.d:(r+1)*lg.d], scores)
		*logLoss += lz - scores[lg.y[r]]
		best := 0
		for c, s := range scores {
			if s > scores[best] {
				best = c
			}
		}
		pred[i] = best
	}
}

// minimize runs L-BFGS from p0 until the gradient's largest entry is under
// tol or after maxIter iterations, whichever comes first. It returns the
// best point found, the iterations used and whether the gradient test was
// met. A failed line search next to the optimum is not an error: the point
// is kept and its gradient decides convergence.
func (lg *logistic) minimize(p0 []float64, tol float64, maxIter int) ([]float64, int, bool) {
	settings := &optimize.Settings{GradientThreshold: tol, MajorIterations: maxIter}
	res, _ := optimize.Minimize(lg.memo.problem(), p0, settings, &optimize.LBFGS{})
	if res == nil || res.X == nil {
		return slices.Clone(p0), 0, false
	}
	g := make([]float64, len(res.X))
	lg.eval(res.X, g)
	return res.X, res.Stats.MajorIterations, floats.Norm(g, math.Inf(1)) <= tol
}
